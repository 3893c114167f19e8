#include <catch2/catch.hpp>

#include <cmath>

#include "polewright/synthesis/retune_problem.hpp"

using namespace pw;

TEST_CASE("the retune problem scores the change distance squared and the screening violation", "[synthesis][retune_problem]") {
  Plant g;  // 4 / (s (s + 2))
  g.tf.gain = 4;
  g.tf.poles = {Complex(0, 0), Complex(-2, 0)};
  RequirementSet req;
  req.items = {{MetricId::DampingRatio, Sense::AtLeast, 0.48}, {MetricId::NaturalFrequency, Sense::AtLeast, 3.9}};
  const CompensatorScorer scorer({g}, req, region_from_requirements(req), AnalysisOptions::Screening(AnalysisOptions{}),
                                 Objective::LeastEffort, 3.0);
  Zpk lead;  // 4.68 (s + 2.9)/(s + 5.4), textbook worked example (from memory): meets both
  lead.gain = 4.68;
  lead.zeros = {Complex(-2.9, 0)};
  lead.poles = {Complex(-5.4, 0)};
  const RetuneSpace rs = make_retune_space(lead, {0.1, 100.0});
  const RetuneProblem p(rs, scorer);
  CHECK(p.dim() == rs.dim());
  const DesignScore at = p.score(rs.current);
  CHECK(at.feasible);
  CHECK(at.objective == 0.0);
  std::vector<double> moved = rs.current;
  moved[0] -= 0.5;  // a third of the gain: zeta rises, wn falls below 3.9
  const DesignScore s = p.score(moved);
  CHECK(s.objective == Approx(0.25));  // (0.5 decades)^2
  CHECK_FALSE(s.feasible);
  CHECK(s.violation == scorer.score(retune_to_zpk(rs, moved)).violation);
}
