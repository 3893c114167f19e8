// Local polish of one starting point with NLopt: first reach feasibility, then minimise the
// objective with the requirements as an extreme barrier. The best point is kept here, because
// NLopt's C++ interface throws (roundoff-limited, forced stop) even after finding good points.
#pragma once

#include <atomic>
#include <string>
#include <vector>

#include "polewright/synthesis/problem.hpp"

namespace pw {

struct LocalOptions {
  // Evaluations for the feasibility phase (minimise the violation sum, stop at 0) and for the
  // objective phase (minimise the objective; infeasible points score 1e6 + violation).
  int feasibility_evaluations = 150;
  int objective_evaluations = 150;
  double relative_tolerance = 1e-4;  // on x, both phases
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
LocalResult local_search(const DesignProblem& problem, const std::vector<double>& x0, const LocalOptions& options,
                         const std::atomic<bool>* cancel = nullptr);

}  // namespace pw
