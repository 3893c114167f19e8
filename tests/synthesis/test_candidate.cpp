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
