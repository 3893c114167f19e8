// The one local search of the project, over any Problem (search_problem.hpp): first reach
// feasibility, then minimise the objective with the requirements as an extreme barrier. The best
// point is kept here, because NLopt's C++ interface throws (roundoff-limited, forced stop) even
// after finding good points. Design and retune both use it, with their own options.
#pragma once

#include <atomic>
#include <string>
#include <vector>

#include "polewright/synthesis/search_problem.hpp"

namespace pw {

struct LocalOptions {
  // Evaluations for the feasibility phase and for the objective phase (infeasible points score
  // kBarrierOffset + violation there).
  int feasibility_evaluations = 150;
  int objective_evaluations = 150;
  // Stopping tolerances on x (0 = not used; at least one must be set).
  double relative_tolerance = 1e-4;
  double absolute_tolerance = 0.0;
  // Initial steps of the two phases: fractions of each parameter's range, or absolute steps (in the
  // parameters' own units) when `absolute_steps` is set.
  double feasibility_step = 0.15;
  double objective_step = 0.03;
  bool absolute_steps = false;
  // The feasibility phase minimises objective_weight * objective + violation_weight * violation
  // (design: the violation alone, stopping at the first feasible point; retune: an exact L1 penalty
  // on the violation plus the squared change, run to its budget).
  double objective_weight = 0.0;
  double violation_weight = 1.0;
  bool stop_at_feasible = true;
  // When set (one value per parameter), a feasible point is first pulled back along the segment
  // towards this anchor (the least fraction of the step that stays feasible, by bisection) before
  // the objective phase.
  std::vector<double> anchor;
  int anchor_bisections = 12;
  // NLopt's derivative-free local method for both phases: Subplex copes with the kinks that
  // worst-case and piecewise metrics put in the landscape (COBYLA and BOBYQA were tried: both
  // stall on the barrier's discontinuities).
  std::string algorithm = "LN_SBPLX";
  bool IsValid(std::string* error) const;
};

struct LocalResult {
  std::vector<double> x;
  DesignScore score;
  long long evaluations = 0;
  std::string stop_reason;
};

// `cancel`, when given and set, stops the search at its next evaluation (the result so far is kept).
LocalResult local_search(const Problem& problem, const std::vector<double>& x0, const LocalOptions& options,
                         const std::atomic<bool>* cancel = nullptr);

}  // namespace pw
