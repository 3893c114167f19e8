#include "polewright/synthesis/retune_problem.hpp"

namespace pw {

DesignScore RetuneProblem::score(const std::vector<double>& x) const {
  DesignScore s = scorer_->score(retune_to_zpk(*space_, x));
  const double d = change_distance(*space_, x);
  s.objective = d * d;
  return s;
}

}  // namespace pw
