// The retune problem: a point of a retune space (retune_space.hpp) scored with the screening
// evaluator; the objective is the squared change distance from the current design.
#pragma once

#include "polewright/synthesis/problem.hpp"
#include "polewright/synthesis/retune_space.hpp"

namespace pw {

class RetuneProblem : public Problem {
 public:
  // Both are referenced, not copied: they must outlive the problem.
  RetuneProblem(const RetuneSpace& space, const CompensatorScorer& scorer) : space_(&space), scorer_(&scorer) {}
  int dim() const override { return space_->dim(); }
  const std::vector<double>& lower() const override { return space_->lower; }
  const std::vector<double>& upper() const override { return space_->upper; }
  DesignScore score(const std::vector<double>& x) const override;
  const RetuneSpace& space() const { return *space_; }

 private:
  const RetuneSpace* space_;
  const CompensatorScorer* scorer_;
};

}  // namespace pw
