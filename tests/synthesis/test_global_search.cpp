#include <catch2/catch.hpp>

#include <cmath>
#include <thread>

#include "polewright/synthesis/global_search.hpp"

using namespace pw;

namespace {
// Feasible only in a small disc of radius 0.05 around (2.2, -1.7) inside [-3, 3]^2, objective the
// distance to (2.25, -1.7): the constrained minimum is that point itself, objective 0 (geometry).
// The violation grows with the distance to the disc, with ripples that trap a local method.
class SmallDisc : public Problem {
 public:
  int dim() const override { return 2; }
  const std::vector<double>& lower() const override { return lo_; }
  const std::vector<double>& upper() const override { return hi_; }
  DesignScore score(const std::vector<double>& x) const override {
    const double d = std::hypot(x[0] - 2.2, x[1] + 1.7);
    DesignScore s;
    s.violation = std::max(0.0, d - 0.05) * (1.2 + std::cos(6.0 * x[0]) * std::cos(6.0 * x[1]));
    s.feasible = s.violation == 0.0;
    s.objective = std::hypot(x[0] - 2.25, x[1] + 1.7);
    return s;
  }

 private:
  std::vector<double> lo_{-3.0, -3.0}, hi_{3.0, 3.0};
};
}  // namespace

TEST_CASE("global search finds a small feasible disc and is the same on any thread", "[synthesis][global_search]") {
  const SmallDisc p;
  GlobalOptions g;
  g.evaluations = 3000;
  std::string err;
  REQUIRE(g.IsValid(&err));
  LocalOptions polish;
  const LocalResult r = global_search(p, {-2.5, 2.5}, g, polish);
  REQUIRE(r.score.feasible);
  CHECK(r.score.objective < 0.01);
  CHECK(r.evaluations > 0);
  // NLopt's generator is per thread and seeded before each run: another thread gives the same point.
  LocalResult other;
  std::thread t([&] { other = global_search(p, {-2.5, 2.5}, g, polish); });
  t.join();
  CHECK(other.x == r.x);
  GlobalOptions bad;
  bad.algorithm = "NOT_AN_ALGORITHM";
  CHECK_FALSE(bad.IsValid(&err));
}
