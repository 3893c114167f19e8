// The design job: structures simplest first, seeds from the published constructions plus
// low-discrepancy starts, NLopt polish, full-accuracy verification, ranking with diversity.
#pragma once

#include <atomic>
#include <optional>
#include <string>
#include <vector>

#include "polewright/requirements/evaluate.hpp"
#include "polewright/requirements/spec.hpp"
#include "polewright/synthesis/limits.hpp"
#include "polewright/synthesis/local_search.hpp"
#include "polewright/synthesis/structure.hpp"

namespace pw {

struct DesignOptions {
  int keep = 5;                           // candidates returned
  unsigned long long seed = 1;            // shifts the low-discrepancy starts
  int threads = 0;                        // 0 = all cores; results do not depend on it
  Objective objective = Objective::LeastEffort;
  long long max_evaluations = 200000;     // checked between structure levels (deterministic)
  double time_limit_s = 30.0;             // checked between structure levels (a safety stop)
  LocalOptions local;
  int global_points_base = 12;            // screening points per structure: base + per_dim * dim
  int global_points_per_dim = 4;
  int global_starts = 2;                  // best screening points polished per structure
  double diversity = 0.04;                // least distance (fraction of each parameter's range, max norm)
                                          // between two candidates of one structure
  int extra_levels = 0;                   // structure levels searched after the first one that fills `keep`
  bool explain_failure = true;            // binding requirements when nothing meets
  std::optional<Requirement> metric_objective;  // internal: optimise this metric instead (relaxed searches)
  const std::atomic<bool>* cancel = nullptr;    // when set and true, the search stops at its next task (like the time limit)
  bool IsValid(std::string* error) const;
  static DesignOptions FromSpec(const Spec& spec);
};

struct Candidate {
  int rank = 0;
  Structure structure;
  Zpk compensator;
  std::vector<double> parameters;
  std::string origin;                  // which start led here
  Evaluation verification;             // full-accuracy check over every plant
  std::vector<MetricValue> worst;      // worst case over the plants, per MetricId
  bool meets = false;
  double objective = 0.0;
  double violation = 0.0;
};

struct BindingRequirement {
  Requirement requirement;
  MetricValue best_value;              // best value of its metric reachable when it alone is relaxed
  bool relaxing_meets_the_rest = false;
};

struct DesignSummary {
  long long evaluations = 0;
  double seconds = 0.0;
  std::optional<double> first_verified_s;  // time to the first verified design that meets everything
  int structures_searched = 0;
  int local_runs = 0;
  bool budget_stop = false;
  bool time_stop = false;
  unsigned long long seed = 1;
  int threads = 1;
  std::string FullReport() const;
};

struct DesignReport {
  std::string spec_name;
  nlohmann::json spec_document;  // the spec as given
  std::vector<Plant> plants;
  RequirementSet requirements;
  AnalysisOptions analysis;
  Region region;
  std::pair<double, double> frequency_range;
  Objective objective = Objective::LeastEffort;
  std::vector<Candidate> candidates;
  std::vector<BindingRequirement> binding;
  std::vector<PlantLimit> limits;
  DesignSummary summary;
  bool met() const { return !candidates.empty() && candidates.front().meets; }
};

DesignReport run_design(const Spec& spec, const DesignOptions& options);

}  // namespace pw
