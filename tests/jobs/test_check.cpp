#include <catch2/catch.hpp>

#include <cmath>

#include "polewright/jobs/check.hpp"
#include "polewright/requirements/spec_parse.hpp"

using namespace pw;

TEST_CASE("run_check evaluates every plant and traces the nominal locus", "[jobs][check]") {
  const Spec spec = parse_spec(read_json_file(std::string(POLEWRIGHT_SOURCE_DIR) + "/specs/wafer-stage.json"));
  CheckOptions o;
  std::string err;
  CHECK(o.IsValid(&err));
  const CheckReport r = run_check(spec, *spec.current, o);
  CHECK(r.evaluation.plants.size() == spec.plants.size());
  CHECK(r.evaluation.outcomes.size() == spec.requirements.items.size());
  CHECK_FALSE(r.locus.branches.empty());
  CHECK(r.region.min_damping > 0.0);
}

TEST_CASE("an unstable pole cancelled by a compensator zero is an error", "[jobs][check]") {
  Plant g;
  g.tf.gain = 1;
  g.tf.poles = {Complex(3, 0), Complex(-1, 0)};
  Zpk c;
  c.zeros = {Complex(3, 0)};
  c.poles = {Complex(-10, 0)};
  CHECK_THROWS_WITH(check_cancellations(c, g, "$.current"), Catch::Contains("$.current") && Catch::Contains("cancels"));
  c.zeros = {Complex(-1, 0)};  // a stable cancellation is allowed
  CHECK_NOTHROW(check_cancellations(c, g, "$.current"));
}

TEST_CASE("run_check blames a cancelling compensator at the path it came from", "[jobs][check]") {
  // 1/((s - 3)(s + 1)) under a zero at +3: refused, naming the compensator's own path.
  const Spec spec = parse_spec(nlohmann::json::parse(
      R"({"plant": {"gain": 1, "poles": [3, -1]}, "requirements": {"phase_margin_deg": {"min": 30}}})"));
  Zpk c;
  c.gain = 5;
  c.zeros = {Complex(3, 0)};
  c.poles = {Complex(-10, 0)};
  CHECK_THROWS_WITH(run_check(spec, c), Catch::StartsWith("$.current: compensator zero"));
  CheckOptions own_file;
  own_file.compensator_path = "$";
  CHECK_THROWS_WITH(run_check(spec, c, own_file), Catch::StartsWith("$: compensator zero"));
}

TEST_CASE("the cancellation test is relative and does not depend on the time unit", "[jobs][check][stress]") {
  // The same loop in seconds and in units 1e4 times faster must be judged alike (scaling s).
  for (double unit : {1e-4, 1.0, 1e4}) {
    Plant g;
    g.tf.gain = 1;
    g.tf.poles = {Complex(2 * unit, 0), Complex(-5 * unit, 0)};
    Zpk c;
    c.poles = {Complex(-100 * unit, 0)};
    c.zeros = {Complex(2 * unit * (1 + 1e-9), 0)};  // within 1e-6 relative: a cancellation
    CHECK_THROWS_WITH(check_cancellations(c, g, "$.current"), Catch::Contains("cancels"));
    c.zeros = {Complex(2 * unit * (1 + 1e-4), 0)};  // 1e-4 away: no cancellation, the loop is
    CHECK_NOTHROW(check_cancellations(c, g, "$.current"));  // judged (unstable) on its poles
  }
  // An integrator (p = 0) is measured against the loop's frequency scale (geometric mean of the
  // non-zero root magnitudes, here 1e-4): a zero at 1e-11 cancels it, one at 1e-8 does not.
  Plant g;
  g.tf.poles = {Complex(0, 0), Complex(-1e-4, 0)};
  Zpk c;
  c.poles = {Complex(-1e-4, 0)};
  c.zeros = {Complex(-1e-11, 0)};
  CHECK_THROWS_WITH(check_cancellations(c, g, "$.current"), Catch::Contains("cancels"));
  c.zeros = {Complex(-1e-8, 0)};
  CHECK_NOTHROW(check_cancellations(c, g, "$.current"));
}

TEST_CASE("conditioning_warnings names a repeated root given as coefficients", "[jobs][check][stress]") {
  // (s + 2)^8 expanded (binomial coefficients times powers of 2): an 8-fold root, fixed by the
  // coefficients only to about eps^(1/8) = 1.1e-2 relative.
  nlohmann::json doc = {{"plant", {{"numerator", {256}}, {"denominator", {1, 16, 112, 448, 1120, 1792, 1792, 1024, 256}}}},
                        {"current", {{"gain", 1.2}}}};
  const std::vector<std::string> w = conditioning_warnings(doc);
  REQUIRE(w.size() == 1);
  CHECK_THAT(w[0], Catch::Contains("$.plant.denominator") && Catch::Contains("8 roots"));
  // The same plant as eight equal poles is exact: no warning; nor for a well-conditioned cubic.
  doc["plant"] = {{"gain", 256}, {"poles", {-2, -2, -2, -2, -2, -2, -2, -2}}};
  CHECK(conditioning_warnings(doc).empty());
  doc["plant"] = {{"numerator", {6}}, {"denominator", {1, 6, 11, 6}}};
  CHECK(conditioning_warnings(doc).empty());
}

TEST_CASE("check: a crossover far above the plant's roots is found and the loop does not pass", "[jobs][check]") {
  // Issue 18: plant poles [0, -1e-6], C = 1e6: true crossover 1000 rad/s, PM ~ 5.7e-8 deg,
  // |S| ~ 1e9 (closed form, see test_frequency.cpp); the tool used to say PM unbounded, Ms 0.0101, met.
  const nlohmann::json doc = {{"plant", {{"gain", 1}, {"poles", {0, -1e-6}}}},
                              {"requirements", {{"phase_margin_deg", {{"min", 30}}}, {"peak_sensitivity", {{"max", 2}}}}},
                              {"current", {{"gain", 1e6}}}};
  const Spec spec = parse_spec(doc);
  const CheckReport r = run_check(spec, *spec.current, CheckOptions{});
  const LoopEvaluation& e = r.evaluation.plants[0];
  REQUIRE(e.frequency.crossover_rad_s);
  CHECK(*e.frequency.crossover_rad_s == Approx(1000.0).epsilon(1e-6));
  REQUIRE(e.values[static_cast<size_t>(MetricId::PhaseMargin)].value);
  CHECK(*e.values[static_cast<size_t>(MetricId::PhaseMargin)].value < 1e-3);
  REQUIRE(e.values[static_cast<size_t>(MetricId::PeakSensitivity)].value);
  CHECK(*e.values[static_cast<size_t>(MetricId::PeakSensitivity)].value > 1e4);
  CHECK_FALSE(r.evaluation.all_met);
  for (const RequirementOutcome& o : r.evaluation.outcomes) CHECK_FALSE(o.met);
}

TEST_CASE("check: 1/(s+1)^3 at its critical gain K = 8 is marginal, not stable", "[jobs][check]") {
  // Issue 18: it reported stable (Re -1.7e-16), overshoot 86.6 % for an oscillation that does not
  // decay; its own locus says stable for k in (0, 1) (Routh-Hurwitz: K < 8).
  const nlohmann::json doc = {{"plant", {{"gain", 1}, {"poles", {-1, -1, -1}}}},
                              {"requirements", {{"overshoot_pct", {{"max", 90}}}}},
                              {"current", {{"gain", 8}}}};
  const Spec spec = parse_spec(doc);
  const CheckReport r = run_check(spec, *spec.current, CheckOptions{});
  const LoopEvaluation& e = r.evaluation.plants[0];
  CHECK_FALSE(e.stable);
  CHECK(e.poles.marginal);
  CHECK_FALSE(e.step);
  CHECK_FALSE(r.evaluation.all_met);
  REQUIRE(r.locus.stable_intervals.size() == 1);
  REQUIRE(r.locus.stable_intervals[0].hi);
  CHECK(*r.locus.stable_intervals[0].hi == Approx(1.0).epsilon(1e-6));
}

namespace {
const char* kSampledSpec = R"({
  "name": "sampled servo",
  "plant": {"numerator": [1], "denominator": [1, 1, 0]},
  "requirements": {"overshoot_pct": {"max": 20}, "phase_margin_deg": {"min": 30}},
  "current": {"gain": 1.0, "zeros": [], "poles": []},
  "implementation": {"sample_time_s": 0.5, "method": "zoh"}
})";
}  // namespace

TEST_CASE("check with an implementation judges the sampled loop and keeps the continuous one beside it",
          "[jobs][check][implementation]") {
  const Spec spec = parse_spec(parse_json_text(kSampledSpec));
  REQUIRE(spec.implementation);
  const CheckReport r = run_check(spec, *spec.current);
  REQUIRE(r.sampled);
  REQUIRE(r.continuous);
  // Continuous: 1 / (s (s + 1)) under K = 1 is the standard second-order loop with zeta = 0.5,
  // overshoot exp(-pi zeta / sqrt(1 - zeta^2)) = 16.3 % (analytic), so 20 % is met.
  const auto& cos = r.continuous->outcomes[0].worst;
  REQUIRE(cos.value);
  CHECK(*cos.value == Approx(100.0 * std::exp(-M_PI * 0.5 / std::sqrt(0.75))).epsilon(1e-4));
}
TEST_CASE("check with an implementation: the sampled step matches the ZOH difference equation", "[jobs][check][implementation]") {
  const Spec spec = parse_spec(parse_json_text(kSampledSpec));
  const CheckReport r = run_check(spec, *spec.current);
  REQUIRE(r.sampled);
  // ZOH table entry (from memory): 1 / (s (s + 1)) at T -> (b1 z + b0) / ((z - 1)(z - e)), e = e^-T,
  // b1 = T - 1 + e, b0 = 1 - e - T e. Closed loop under K = 1 run as a difference equation.
  const double T = 0.5, e = std::exp(-T), b1 = T - 1.0 + e, b0 = 1.0 - e - T * e;
  std::vector<double> y(400, 0.0);
  y[1] = b1;  // y[1] = b1 r[0]
  for (size_t k = 2; k < y.size(); ++k) y[k] = -(b1 - 1.0 - e) * y[k - 1] - (e + b0) * y[k - 2] + b1 + b0;
  double peak = 0.0;
  for (double v : y) peak = std::max(peak, v);
  const auto& at = r.sampled->loops[0].analysis.step_at_samples;
  REQUIRE(at);
  CHECK(*at->overshoot_pct == Approx(100.0 * (peak - 1.0)).epsilon(1e-9));
  // The verdict is the sampled loop's: its overshoot (between the samples, at least the one at
  // them) is what the requirement row holds.
  const auto& sos = r.evaluation.outcomes[0].worst;
  REQUIRE(sos.value);
  CHECK(*sos.value >= *at->overshoot_pct);
  CHECK(r.evaluation.all_met == (*sos.value <= 20.0 && *r.evaluation.outcomes[1].worst.value >= 30.0));
  CHECK(r.continuous->all_met);
  CHECK_FALSE(r.evaluation.all_met);  // sampled at 0.5 s the loop overshoots beyond 20 %
}

TEST_CASE("check without an implementation has no sampled figures", "[jobs][check][implementation]") {
  const Spec spec = parse_spec(read_json_file(std::string(POLEWRIGHT_SOURCE_DIR) + "/specs/wafer-stage.json"));
  const CheckReport r = run_check(spec, *spec.current);
  CHECK_FALSE(r.sampled);
  CHECK_FALSE(r.continuous);
}
