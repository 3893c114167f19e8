#include <catch2/catch.hpp>

#include <algorithm>
#include <atomic>

#include "polewright/synthesis/local_search.hpp"
#include "polewright/synthesis/problem.hpp"
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

namespace {
// A toy problem with a known answer: feasible for x0 + x1 >= 1, objective x0^2 + x1^2; the
// constrained minimum is (0.5, 0.5) with objective 0.5 (Lagrange multipliers, closed form).
class HalfPlane : public Problem {
 public:
  int dim() const override { return 2; }
  const std::vector<double>& lower() const override { return lo_; }
  const std::vector<double>& upper() const override { return hi_; }
  DesignScore score(const std::vector<double>& x) const override {
    DesignScore s;
    s.violation = std::max(0.0, 1.0 - x[0] - x[1]);
    s.feasible = s.violation == 0.0;
    s.objective = x[0] * x[0] + x[1] * x[1];
    return s;
  }

 private:
  std::vector<double> lo_{-3.0, -3.0}, hi_{3.0, 3.0};
};
}  // namespace

TEST_CASE("local search works on any problem; the anchor pulls a feasible point back", "[synthesis][local_search]") {
  const HalfPlane p;
  LocalOptions o;
  o.objective_evaluations = 600;
  const LocalResult r = local_search(p, {2.5, 2.5}, o);
  REQUIRE(r.score.feasible);
  CHECK(r.score.objective == Approx(0.5).epsilon(1e-2));
  // With the anchor at the origin the pull back alone (no objective phase) moves a feasible start
  // (2, 2) along the segment: its first bisection point (1, 1) is feasible and becomes the far end
  // of the segment (the end follows the best point), whose feasible part ends at (0.5, 0.5).
  LocalOptions a;
  a.objective_evaluations = 0;
  a.anchor = {0.0, 0.0};
  const LocalResult pulled = local_search(p, {2.0, 2.0}, a);
  REQUIRE(pulled.score.feasible);
  CHECK(pulled.x[0] == pulled.x[1]);  // still on the segment
  CHECK(pulled.x[0] <= 1.0);
  CHECK(pulled.x[0] >= 0.5);
  CHECK(pulled.evaluations == 1 + a.anchor_bisections);
  std::atomic<bool> stop{true};  // cancelled before it starts: only the start is scored
  CHECK(local_search(p, {-2.0, -2.0}, o, &stop).evaluations == 1);
}
