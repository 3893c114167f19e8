#include <catch2/catch.hpp>

#include <cmath>

#include "polewright/requirements/spec_parse.hpp"
#include "polewright/synthesis/candidate.hpp"

using namespace pw;

TEST_CASE("the verifier checks a compensator over the spec's loop at full accuracy", "[synthesis][candidate]") {
  // L(s) = K / (s (s + 2)) with K = 8: wn = sqrt(8), zeta = 2 / (2 wn) = 0.354, overshoot
  // exp(-pi zeta / sqrt(1 - zeta^2)) = 30.5 % (second-order step response, closed form).
  const Spec spec = parse_spec(nlohmann::json::parse(R"({"plant": {"gain": 1, "poles": [0, -2]},
    "requirements": {"overshoot_pct": {"max": 20}}, "stages": {"lead": 1, "frequency_range_rad_s": [0.1, 100]}})"));
  const Verifier v(LoopContext::FromSpec(spec));
  CHECK(v.context().frequency_range.first == 0.1);
  CHECK(v.context().frequency_range.second == 100.0);
  Zpk k8;
  k8.gain = 8.0;
  const Candidate c = v.verify(k8);
  const double zeta = 1.0 / std::sqrt(8.0);
  const double os = 100.0 * std::exp(-M_PI * zeta / std::sqrt(1.0 - zeta * zeta));
  REQUIRE(c.worst[static_cast<size_t>(MetricId::Overshoot)].value);
  CHECK(*c.worst[static_cast<size_t>(MetricId::Overshoot)].value == Approx(os).epsilon(1e-3));
  CHECK_FALSE(c.meets);
  CHECK(c.violation > 0.0);
  Zpk k1;  // K = 1: zeta = 1, no overshoot
  k1.gain = 1.0;
  CHECK(v.verify(k1).meets);
}

TEST_CASE("the settling-cliff check can be deferred and added later with the same result", "[synthesis][candidate]") {
  // 6 / ((s + 1)(s + 2)(s + 3)) with the PI 0.7708487 (s + 0.8149) / s, whose overshoot sits at the
  // 2 % band (the parked PI of tests/synthesis/test_fragility.cpp, scipy reference there).
  const Spec spec = parse_spec(nlohmann::json::parse(R"({"plant": {"gain": 6, "poles": [-1, -2, -3]},
    "requirements": {"settling_time_s": {"max": 30, "band_pct": 2}}})"));
  const Verifier v(LoopContext::FromSpec(spec));
  const Zpk pi{{-0.8149}, {0.0}, 0.7708487};
  const Candidate full = v.verify(pi);
  Candidate later = v.verify(pi, Objective::LeastEffort, false);
  CHECK(full.fragility_checked);
  CHECK_FALSE(later.fragility_checked);
  CHECK_FALSE(later.fragile);
  v.add_fragility(later);
  CHECK(later.fragility_checked);
  CHECK(later.fragile == full.fragile);
  CHECK(later.settling_jump_share == full.settling_jump_share);
  CHECK(full.fragile);  // the cliff: a 10 % narrower band adds an oscillation period
}
