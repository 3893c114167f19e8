#include <catch2/catch.hpp>

#include "polewright/synthesis/local_search.hpp"
#include "polewright/synthesis/seeds.hpp"

using namespace pw;

TEST_CASE("local search reaches feasibility from a poor start and then lowers the objective", "[synthesis][local_search]") {
  Plant g;
  g.tf.gain = 4;
  g.tf.poles = {Complex(0, 0), Complex(-2, 0)};
  RequirementSet req;
  req.items = {{MetricId::DampingRatio, Sense::AtLeast, 0.48}, {MetricId::NaturalFrequency, Sense::AtLeast, 3.9}};
  const ParamSpace ps = make_param_space(Structure{false, 1, 0, 0}, {0.1, 100.0}, -3, 3, 1.0);
  const DesignProblem p({g}, req, region_from_requirements(req), AnalysisOptions::Screening(AnalysisOptions{}),
                        Objective::LeastEffort, ps);
  // A weak lead well below the crossover (infeasible). Subplex is a local method: from some starts it
  // stalls in a local minimum, which is why the design job polishes several starts.
  const std::vector<double> start = {0.5, 0.2, 0.3};
  REQUIRE_FALSE(p.score(start).feasible);
  LocalOptions o;
  o.feasibility_evaluations = 600;
  std::string err;
  REQUIRE(o.IsValid(&err));
  const LocalResult r = local_search(p, start, o);
  CHECK(r.score.feasible);
  CHECK(r.evaluations <= 1 + o.feasibility_evaluations + o.objective_evaluations);
  // No more effort than the published design (4.68), textbook worked example (from memory).
  CHECK(r.score.objective < 1.25 * std::log10(4.68));
  // Deterministic: the same start gives the same point.
  CHECK(local_search(p, start, o).x == r.x);
  LocalOptions bad;
  bad.algorithm = "NOT_AN_ALGORITHM";
  CHECK_FALSE(bad.IsValid(&err));
}
