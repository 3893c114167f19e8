// A global search over any Problem (search_problem.hpp) with one of NLopt's global methods on the
// violation (stopping at the first feasible point), then the local search's objective phase from
// the best point found. Used by the escalation when the first pass has no verified design.
#pragma once

#include <atomic>
#include <string>
#include <vector>

#include "polewright/synthesis/local_search.hpp"

namespace pw {

struct GlobalOptions {
  int evaluations = 2000;  // for the global method
  // NLopt's multi-level single-linkage over a low-discrepancy (Sobol) sequence, with Subplex as
  // its local method: it polishes from the best points of each sample and skips starts close to
  // an earlier one, which suits a landscape of a few basins.
  std::string algorithm = "GN_MLSL_LDS";
  std::string local_algorithm = "LN_SBPLX";
  int local_evaluations = 200;  // per local run inside the global method
  unsigned long long seed = 1;  // NLopt's generator (thread-local), set before the run
  bool IsValid(std::string* error) const;
};

// The global phase from x0 (its best point feeds the objective phase of `polish`).
LocalResult global_search(const Problem& problem, const std::vector<double>& x0, const GlobalOptions& options,
                          const LocalOptions& polish, const std::atomic<bool>* cancel = nullptr);

}  // namespace pw
