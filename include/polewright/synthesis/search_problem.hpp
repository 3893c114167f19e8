// The problem side of the search (pagmo style: the problem knows how to score a point, the
// algorithm does not know what a loop is). Design and retune are two problems over this interface;
// the local search (local_search.hpp) and the escalation work on any of them.
#pragma once

#include <vector>
#include "polewright/requirements/evaluate.hpp"

namespace pw {

// The score of one point: the violation first, the objective among feasible points.
struct DesignScore {
  double violation = 0.0;  // sum over requirements of the worst normalised violation; 0 = feasible
  double objective = 0.0;  // lower is better; meaningful when feasible
  bool feasible = false;
};

// Penalty and tie-break constants of the scores (one place for every copy).
// A loop that is not stable scores at least kUnstableViolation (requirements/evaluate.hpp), so any
// stable loop is better.
// Added per plant whose loop is ill-posed (an improper or cancelling loop: no closed loop to rate).
constexpr double kIllPosedPenalty = 200.0;
// Added per unstable plant, plus up to the same again graded by how far its rightmost pole sits in
// the right half plane (tanh of the real part over the reference frequency), so a search can climb out.
constexpr double kUnstablePenalty = 100.0;
// In the objective phase infeasible points score this plus their violation (an extreme barrier).
constexpr double kBarrierOffset = 1e6;
// The objective when the metric it rests on is missing (a step that never settles, say).
constexpr double kMissingObjective = 1e9;

class Problem {
 public:
  virtual ~Problem() = default;
  virtual int dim() const = 0;
  virtual const std::vector<double>& lower() const = 0;
  virtual const std::vector<double>& upper() const = 0;
  virtual DesignScore score(const std::vector<double>& x) const = 0;
};

// The one comparator of scores: feasible beats infeasible; among feasible points the lower
// objective, among infeasible ones the lower violation. Strict (false for equal scores), so a
// stable sort keeps the order of equals.
inline bool better_score(const DesignScore& a, const DesignScore& b) {
  if (a.feasible != b.feasible) return a.feasible;
  if (a.feasible) return a.objective < b.objective;
  return a.violation < b.violation;
}

}  // namespace pw
