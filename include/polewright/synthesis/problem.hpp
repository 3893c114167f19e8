// The design problem (pagmo style: the problem knows how to score a point, the algorithm does not
// know what a loop is). One point is scored over every plant with the cheap screening evaluator.
#pragma once

#include <optional>
#include <vector>

#include "polewright/requirements/evaluate.hpp"
#include "polewright/requirements/spec.hpp"
#include "polewright/synthesis/parameters.hpp"

namespace pw {

struct DesignScore {
  double violation = 0.0;  // sum over requirements of the worst normalised violation; 0 = feasible
  double objective = 0.0;  // lower is better; meaningful when feasible
  bool feasible = false;
};

// The objective of a set of worst-case metrics (lower is better):
//   least_effort  log10(peak effort) + 0.25 log10 |C(inf)|   (effort and high-frequency gain)
//   fastest       settling time (2 % band unless the spec says otherwise)
//   most_robust   peak sensitivity |S|max (it bounds both margins: GM >= Ms/(Ms-1), PM >= 2 asin(1/(2 Ms)))
//   simplest      as least_effort (the ranking puts fewer stages first)
double objective_value(Objective o, const std::vector<MetricValue>& worst, double hf_gain);

// Worst value of each metric over the plants, in the direction that hurts (higher for metrics
// bounded above, lower for those bounded below; min-or-max metrics take the requirement's side).
std::vector<MetricValue> worst_metrics(const std::vector<LoopEvaluation>& plants, const RequirementSet& req);

class DesignProblem {
 public:
  DesignProblem(std::vector<Plant> plants, RequirementSet req, Region region, AnalysisOptions screening,
                Objective objective, ParamSpace space);

  // Replaces the objective by one metric (lower is better for an upper bound, higher for a lower
  // bound): used to find the best value of a requirement that is relaxed.
  void set_metric_objective(const Requirement& r) { metric_objective_ = r; }

  DesignScore score(const std::vector<double>& x) const;
  DesignScore score_compensator(const Zpk& c) const;
  const ParamSpace& space() const { return space_; }
  const RequirementSet& requirements() const { return req_; }

 private:
  std::vector<Plant> plants_;
  RequirementSet req_;
  Region region_;
  AnalysisOptions opt_;
  Objective objective_;
  ParamSpace space_;
  double frequency_ref_;
  std::optional<Requirement> metric_objective_;
};

}  // namespace pw
