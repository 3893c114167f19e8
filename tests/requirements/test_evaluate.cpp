#include <catch2/catch.hpp>

#include <cmath>

#include "polewright/requirements/evaluate.hpp"

using namespace pw;

namespace {
Zpk lead() {  // 4.68 (s + 2.9) / (s + 5.4): textbook worked root-locus lead example (from memory)
  Zpk c;
  c.gain = 4.68;
  c.zeros = {Complex(-2.9, 0)};
  c.poles = {Complex(-5.4, 0)};
  return c;
}
Plant servo(double k = 4) {  // 4 / (s (s + 2))
  Plant g;
  g.tf.gain = k;
  g.tf.poles = {Complex(0, 0), Complex(-2, 0)};
  return g;
}
}  // namespace

TEST_CASE("published lead design puts the dominant poles near -2 +- j3.46", "[requirements][evaluate]") {
  // Target zeta 0.5, wn 4; the design lands at about -1.99 +- j3.45 (textbook worked example, from memory;
  // numpy/scipy fixture: -1.99425 +- j3.45488).
  RequirementSet req;
  req.items = {{MetricId::DampingRatio, Sense::AtLeast, 0.48}, {MetricId::NaturalFrequency, Sense::AtLeast, 3.9}};
  const Region region = region_from_requirements(req);
  const LoopEvaluation e = evaluate_loop(lead(), servo(), req, region, AnalysisOptions{});
  REQUIRE(e.stable);
  REQUIRE(e.dominant_pole);
  CHECK(e.dominant_pole->real() == Approx(-1.99).margin(0.01));
  CHECK(std::abs(e.dominant_pole->imag()) == Approx(3.45).margin(0.01));
  CHECK(e.values[static_cast<size_t>(MetricId::DampingRatio)].value.value() == Approx(0.5).margin(0.01));
  CHECK(e.values[static_cast<size_t>(MetricId::NaturalFrequency)].value.value() == Approx(3.99).margin(0.01));
  CHECK(e.region_ok);
  const Evaluation all = evaluate_all(lead(), {servo()}, req, region, AnalysisOptions{});
  CHECK(all.all_met);
  CHECK(all.total_violation == 0.0);
  // Peak effort u(0+) = 4.68: the compensator's high-frequency gain (strictly proper plant).
  CHECK(e.values[static_cast<size_t>(MetricId::PeakEffort)].value.value() == Approx(4.68).epsilon(1e-9));
}

TEST_CASE("worst case over variants and the unstable-loop rule", "[requirements][evaluate]") {
  RequirementSet req;
  req.items = {{MetricId::Overshoot, Sense::AtMost, 25.0}, {MetricId::PhaseMargin, Sense::AtLeast, 40.0}};
  const Region region = region_from_requirements(req);
  Plant heavy = servo(8);
  heavy.name = "double gain";
  const Evaluation ev = evaluate_all(lead(), {servo(), heavy}, req, region, AnalysisOptions{});
  REQUIRE(ev.outcomes.size() == 2);
  // Doubling the plant gain raises overshoot and lowers the phase margin: the variant is worst.
  CHECK(ev.outcomes[0].worst_plant == 1);
  CHECK(ev.outcomes[1].worst_plant == 1);
  CHECK(ev.worst_plant == ev.outcomes[0].worst_plant);
  // K/(s(s+1)(s+2)) with K = 8 > 6 is unstable (Routh): nothing is met.
  Plant third;
  third.tf.gain = 8;
  third.tf.poles = {Complex(0, 0), Complex(-1, 0), Complex(-2, 0)};
  const Evaluation un = evaluate_all(Zpk{}, {third}, req, region, AnalysisOptions{});
  CHECK_FALSE(un.all_stable);
  CHECK_FALSE(un.all_met);
  CHECK_FALSE(un.plants[0].step);
  for (const RequirementOutcome& o : un.outcomes) CHECK_FALSE(o.met);
}

TEST_CASE("screening needs compute only what the requirements use", "[requirements][evaluate]") {
  RequirementSet req;
  req.items = {{MetricId::PhaseMargin, Sense::AtLeast, 40.0}};
  EvaluationNeeds lean;
  lean.everything = false;
  const LoopEvaluation e = evaluate_loop(lead(), servo(), req, Region{}, AnalysisOptions::Screening(AnalysisOptions{}), lean);
  CHECK_FALSE(e.step);
  CHECK(e.values[static_cast<size_t>(MetricId::PhaseMargin)].value);
}

TEST_CASE("delay margin of K / (s (s + a)) against its closed form", "[requirements][evaluate][delay_margin]") {
  // Closed form: |L(jw)| = 1 at w_c^2 = (sqrt(a^4 + 4 K^2) - a^2) / 2, PM = atan(a / w_c), so the
  // delay margin is atan(a / w_c) / w_c seconds.
  RequirementSet req;
  req.items = {{MetricId::DelayMargin, Sense::AtLeast, 0.1}};
  const Region region = region_from_requirements(req);
  Zpk unity;
  unity.gain = 1.0;
  for (double k : {1.0, 4.0, 25.0, 400.0})
    for (double a : {0.5, 2.0, 10.0}) {
      const double wc = std::sqrt(0.5 * (std::sqrt(a * a * a * a + 4.0 * k * k) - a * a));
      const double want = std::atan(a / wc) / wc;
      Plant g;
      g.tf.gain = k;
      g.tf.poles = {Complex(0, 0), Complex(-a, 0)};
      const LoopEvaluation e = evaluate_loop(unity, g, req, region, AnalysisOptions{});
      const MetricValue& dm = e.values[static_cast<size_t>(MetricId::DelayMargin)];
      REQUIRE(dm.value);
      CHECK(*dm.value == Approx(want).epsilon(1e-7));
      // The loop with that much dead time added sits on the edge: phase margin 0 (closed form).
      g.delay_s = want;
      const LoopEvaluation edge = evaluate_loop(unity, g, req, region, AnalysisOptions{});
      REQUIRE(edge.frequency.phase_margin_deg);
      CHECK(std::abs(*edge.frequency.phase_margin_deg) < 1e-5);
      // Its delay margin is then 0, or a whole turn 2 pi / w_c when the rounding left the phase a
      // hair below -180 deg (the margin is taken in [0, 2 pi)).
      const double left = edge.values[static_cast<size_t>(MetricId::DelayMargin)].value.value();
      CHECK(std::min(left, std::abs(left - 2.0 * M_PI / wc)) < 1e-6 * want);
    }
}

TEST_CASE("delay margin: the smallest over the crossovers; unbounded without one", "[requirements][evaluate][delay_margin]") {
  // Hand-built figures (the definition): crossovers at 1 and 10 rad/s with margins 60 and 30 deg
  // give (pi/3) / 1 and (pi/6) / 10; a negative margin counts from the next -180 deg line.
  FrequencyMetrics f;
  f.gain_crossovers_rad_s = {1.0, 10.0};
  f.phase_margins_deg = {60.0, 30.0};
  CHECK(delay_margin_value(f).value.value() == Approx(M_PI / 60.0));
  f.phase_margins_deg = {60.0, -30.0};  // needs 330 deg more lag at 10 rad/s
  CHECK(delay_margin_value(f).value.value() == Approx(std::min(M_PI / 3.0, 330.0 * M_PI / 180.0 / 10.0)));
  FrequencyMetrics none;
  CHECK(delay_margin_value(none).infinite);
  // A gain below 1 everywhere: no crossover, an unbounded delay margin that meets any minimum.
  RequirementSet req;
  req.items = {{MetricId::DelayMargin, Sense::AtLeast, 5.0}};
  Zpk small;
  small.gain = 0.5;
  Plant g;
  g.tf.gain = 1.0;
  g.tf.poles = {Complex(-1, 0)};
  const Evaluation ev = evaluate_all(small, {g}, req, region_from_requirements(req), AnalysisOptions{});
  CHECK(ev.plants[0].values[static_cast<size_t>(MetricId::DelayMargin)].infinite);
  CHECK(ev.all_met);
}
