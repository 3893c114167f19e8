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

TEST_CASE("the design margin moves every limit inwards by its share of the limit's size", "[synthesis][problem]") {
  // The rule of docs/manual.md (Design margin): L - m|L| for an upper limit, L + m|L| for a lower one.
  RequirementSet r;
  r.items = {{MetricId::Overshoot, Sense::AtMost, 20.0},
             {MetricId::PhaseMargin, Sense::AtLeast, 45.0},
             {MetricId::GainMargin, Sense::AtMost, -5.0},  // a negative upper limit moves down
             {MetricId::Overshoot, Sense::AtLeast, 0.0}};  // a zero limit has no size: unchanged
  const RequirementSet t = with_design_margin(r, 0.03);
  CHECK(t.items[0].limit == Approx(19.4).epsilon(1e-15));
  CHECK(t.items[1].limit == Approx(46.35).epsilon(1e-15));
  CHECK(t.items[2].limit == Approx(-5.15).epsilon(1e-15));
  CHECK(t.items[3].limit == 0.0);
  const RequirementSet none = with_design_margin(r, 0.0);
  for (size_t i = 0; i < r.items.size(); ++i) CHECK(none.items[i].limit == r.items[i].limit);
  // The settling band narrows by the margin, at least by 12 % when it is not 0: 2 % -> 1.76 % at 3 %,
  // 1.6 % at 20 %, unchanged at 0.
  CHECK(t.settling_band == Approx(r.settling_band * 0.88).epsilon(1e-15));
  CHECK(with_design_margin(r, 0.2).settling_band == Approx(r.settling_band * 0.8).epsilon(1e-15));
  CHECK(none.settling_band == r.settling_band);

  // meets_with_margin: 19.5 % overshoot meets 20 % but not 20 (1 - 0.03) = 19.4 %.
  Evaluation e;
  e.all_met = true;
  RequirementOutcome o;
  o.requirement = {MetricId::Overshoot, Sense::AtMost, 20.0};
  o.worst.value = 19.5;
  o.met = true;
  e.outcomes = {o};
  CHECK(meets_with_margin(e, 0.0));
  CHECK(meets_with_margin(e, 0.02));   // 19.6
  CHECK_FALSE(meets_with_margin(e, 0.03));
  e.all_met = false;
  CHECK_FALSE(meets_with_margin(e, 0.0));
}

TEST_CASE("with an implementation the scorer screens the sampled loop", "[synthesis][problem][implementation]") {
  // 1 / (s (s + 1)) under K = 1: continuous overshoot 16.3 % (zeta = 0.5, analytic) meets 20 %;
  // run by a zero-order hold at T = 0.5 s the loop overshoots beyond 20 % (tests/jobs/test_check.cpp,
  // the ZOH difference equation). At T = 0.01 s the sampled loop is close to the continuous one.
  Plant g;
  g.tf.gain = 1.0;
  g.tf.poles = {Complex(0, 0), Complex(-1, 0)};
  RequirementSet req;
  req.items = {{MetricId::Overshoot, Sense::AtMost, 20.0}};
  const Region region = region_from_requirements(req);
  const AnalysisOptions screening = AnalysisOptions::Screening(AnalysisOptions{});
  Implementation im;
  im.sample_time_s = 0.5;
  im.method = DiscreteMethod::Zoh;
  const CompensatorScorer continuous({g}, req, region, screening, Objective::LeastEffort, 1.0);
  const CompensatorScorer slow({g}, req, region, screening, Objective::LeastEffort, 1.0, im);
  im.sample_time_s = 0.01;
  const CompensatorScorer fast({g}, req, region, screening, Objective::LeastEffort, 1.0, im);
  Zpk k1;
  k1.gain = 1.0;
  CHECK(continuous.score(k1).feasible);
  CHECK_FALSE(slow.score(k1).feasible);
  CHECK(slow.score(k1).violation > 0.0);
  CHECK(fast.score(k1).feasible);
  REQUIRE(slow.implementation());
  CHECK_FALSE(continuous.implementation());
  // A compensator the implementation cannot run: prewarp without a warp point on a loop whose gain
  // never reaches 1 (0.1 / (s + 1) under K = 1), so there is no crossover to warp at.
  Plant low;
  low.tf.gain = 0.1;
  low.tf.poles = {Complex(-1, 0)};
  Implementation pw_im;
  pw_im.sample_time_s = 0.1;
  pw_im.method = DiscreteMethod::Prewarp;
  const CompensatorScorer none({low}, req, region, screening, Objective::LeastEffort, 1.0, pw_im);
  const DesignScore s = none.score(k1);
  CHECK_FALSE(s.feasible);
  CHECK(s.violation >= kUnstableViolation);
}
