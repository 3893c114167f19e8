#include <catch2/catch.hpp>

#include "polewright/synthesis/search_problem.hpp"

using namespace pw;

// The feasibility-first comparison of constrained search (any feasible point beats any infeasible
// one; feasible points by objective, infeasible ones by violation: Deb's rules, from memory).
TEST_CASE("one score comparator: feasible first, then objective or violation", "[synthesis][search_problem]") {
  const DesignScore feasible_low{0.0, 1.0, true}, feasible_high{0.0, 2.0, true};
  const DesignScore near_miss{0.01, -5.0, false}, far_miss{3.0, -9.0, false};
  CHECK(better_score(feasible_high, near_miss));
  CHECK_FALSE(better_score(near_miss, feasible_high));
  CHECK(better_score(feasible_low, feasible_high));
  CHECK(better_score(near_miss, far_miss));  // the objective of infeasible points does not count
  CHECK_FALSE(better_score(feasible_low, feasible_low));  // strict: equal scores keep their order
  // The penalties keep every unstable loop behind every stable one, and the barrier behind both.
  CHECK(kUnstableViolation > 0.0);
  CHECK(kBarrierOffset > kUnstableViolation + 2 * kUnstablePenalty + kIllPosedPenalty);
}
