#include <catch2/catch.hpp>

#include "polewright/synthesis/problem.hpp"

using namespace pw;

namespace {
Plant servo() {
  Plant g;
  g.tf.gain = 4;
  g.tf.poles = {Complex(0, 0), Complex(-2, 0)};
  return g;
}
RequirementSet textbook() {
  RequirementSet r;
  r.items = {{MetricId::DampingRatio, Sense::AtLeast, 0.48}, {MetricId::NaturalFrequency, Sense::AtLeast, 3.9}};
  return r;
}
}  // namespace

TEST_CASE("the problem scores the published lead as feasible and a pure gain as not", "[synthesis][problem]") {
  const RequirementSet req = textbook();
  const ParamSpace ps = make_param_space(Structure{false, 1, 0, 0}, {0.1, 100.0}, -3, 3, 1.0);
  const DesignProblem p({servo()}, req, region_from_requirements(req), AnalysisOptions::Screening(AnalysisOptions{}),
                        Objective::LeastEffort, ps);
  Zpk lead;  // 4.68 (s + 2.9)/(s + 5.4), textbook worked example (from memory)
  lead.gain = 4.68;
  lead.zeros = {Complex(-2.9, 0)};
  lead.poles = {Complex(-5.4, 0)};
  const DesignScore s = p.score_compensator(lead);
  CHECK(s.feasible);
  CHECK(s.violation == 0.0);
  // least_effort: log10(peak effort 4.68) + 0.25 log10(|C(inf)| = 4.68).
  CHECK(s.objective == Approx(1.25 * std::log10(4.68)).epsilon(1e-3));
  Zpk gain;
  gain.gain = 4.0;  // wn = 4 but zeta = 0.25
  const DesignScore g = p.score_compensator(gain);
  CHECK_FALSE(g.feasible);
  CHECK(g.violation > 0.0);
  Zpk unstable;  // negative gain: a closed-loop pole in the right half plane
  unstable.gain = -1.0;
  CHECK(p.score_compensator(unstable).violation > 1e3);
}

TEST_CASE("worst metrics take the side that hurts", "[synthesis][problem]") {
  std::vector<LoopEvaluation> e(2);
  e[0].values[static_cast<size_t>(MetricId::Overshoot)].value = 5.0;
  e[1].values[static_cast<size_t>(MetricId::Overshoot)].value = 9.0;
  e[0].values[static_cast<size_t>(MetricId::PhaseMargin)].value = 50.0;
  e[1].values[static_cast<size_t>(MetricId::PhaseMargin)].infinite = true;
  const std::vector<MetricValue> w = worst_metrics(e, RequirementSet{});
  CHECK(*w[static_cast<size_t>(MetricId::Overshoot)].value == 9.0);
  CHECK(*w[static_cast<size_t>(MetricId::PhaseMargin)].value == 50.0);
  std::vector<MetricValue> m(kMetricCount);
  m[static_cast<size_t>(MetricId::SettlingTime)].value = 0.7;
  CHECK(objective_value(Objective::Fastest, m, 1.0) == 0.7);
}
