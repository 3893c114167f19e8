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
