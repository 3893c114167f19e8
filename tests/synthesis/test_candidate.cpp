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

namespace {
// 1 / (s (s + 1)) under K = 1: continuous zeta = 0.5, overshoot 16.3 % (analytic), PM 51.8 deg;
// run by a zero-order hold at T = 0.5 s it overshoots beyond 20 % (tests/jobs/test_check.cpp).
const char* kSampledSpec = R"({
  "plant": {"numerator": [1], "denominator": [1, 1, 0]},
  "requirements": {"overshoot_pct": {"max": 20}, "phase_margin_deg": {"min": 30}},
  "stages": {"lead": 1, "frequency_range_rad_s": [0.05, 50]},
  "implementation": {"sample_time_s": 0.5, "method": "zoh"}
})";
}  // namespace

TEST_CASE("with an implementation the verifier judges the sampled loop, the continuous one beside it",
          "[synthesis][candidate][implementation]") {
  const Spec spec = parse_spec(nlohmann::json::parse(kSampledSpec));
  const Verifier v(LoopContext::FromSpec(spec));
  REQUIRE(v.context().implementation);
  Zpk k1;
  k1.gain = 1.0;
  const Candidate c = v.verify(k1);
  REQUIRE(c.continuous);
  CHECK(c.continuous->all_met);  // 16.3 % < 20 % in continuous time
  CHECK_FALSE(c.meets);          // the sampled loop overshoots more
  // The verdict is the one the sampled evaluation gives (the check path) on the same loop.
  const Evaluation s = evaluate_sampled(k1, spec.plants, spec.requirements, v.context().region, spec.analysis,
                                        *spec.implementation, *c.continuous)
                           .evaluation;
  REQUIRE(s.outcomes.size() == c.verification.outcomes.size());
  for (size_t i = 0; i < s.outcomes.size(); ++i) {
    CHECK(s.outcomes[i].met == c.verification.outcomes[i].met);
    REQUIRE(s.outcomes[i].worst.value);
    CHECK(*s.outcomes[i].worst.value == *c.verification.outcomes[i].worst.value);
  }
  CHECK(*c.worst[static_cast<size_t>(MetricId::Overshoot)].value > 20.0);
}

TEST_CASE("with an implementation the corner range is cut at half the Nyquist frequency, with a note",
          "[synthesis][candidate][implementation]") {
  // T = 0.5 s: pi / T = 6.283 rad/s, so corners stop at kCornerNyquistShare pi / T = 3.1416 rad/s.
  const Spec spec = parse_spec(nlohmann::json::parse(kSampledSpec));
  const LoopContext ctx = LoopContext::FromSpec(spec);
  REQUIRE(ctx.corner_cap_rad_s);
  CHECK(*ctx.corner_cap_rad_s == Approx(0.5 * M_PI / 0.5).epsilon(1e-12));
  CHECK(ctx.frequency_range.first == 0.05);
  CHECK(ctx.frequency_range.second == Approx(M_PI).epsilon(1e-12));
  CHECK(ctx.uncut_frequency_range.second == 50.0);
  CHECK(ctx.corner_note().find("3.14159 rad/s") != std::string::npos);
  // A range below the cap is left alone, and without an implementation there is no cut.
  nlohmann::json j = nlohmann::json::parse(kSampledSpec);
  j["stages"]["frequency_range_rad_s"] = {0.05, 3.0};
  const LoopContext low = LoopContext::FromSpec(parse_spec(j));
  CHECK_FALSE(low.corner_cap_rad_s);
  CHECK(low.frequency_range.second == 3.0);
  CHECK(low.corner_note().empty());
  j.erase("implementation");
  j["stages"]["frequency_range_rad_s"] = {0.05, 50.0};
  CHECK_FALSE(LoopContext::FromSpec(parse_spec(j)).corner_cap_rad_s);
}
