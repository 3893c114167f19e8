// The design job: structures simplest first, seeds from the published constructions plus
// low-discrepancy starts, NLopt polish, full-accuracy verification, ranking with diversity.
#pragma once

#include <atomic>
#include <optional>
#include <string>
#include <vector>

#include "polewright/requirements/evaluate.hpp"
#include "polewright/requirements/spec.hpp"
#include "polewright/synthesis/candidate.hpp"
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
  double time_limit_s = 30.0;             // checked between structure levels and escalation rounds (a safety stop)
  // Escalation when the first pass has no verified design: rounds of near-miss polish, fresh
  // starts and global search until a design meets or this budget is spent. The budget is counted
  // in screening evaluations (budget_s times a nominal rate, see design.cpp), so the same spec,
  // seed and threads give the same result on any machine; 0 turns the escalation off.
  double budget_s = 10.0;
  // Design margin (fraction of each limit, search.margin_pct / 100): the search aims inside the
  // limits tightened by it (with_design_margin); verdicts stay against the stated limits.
  double margin = 0.03;
  LocalOptions local;
  int global_points_base = 12;            // screening points per structure: base + per_dim * dim
  int global_points_per_dim = 4;
  int global_starts = 2;                  // best screening points polished per structure
  double diversity = 0.04;                // least distance (fraction of each parameter's range, max norm)
                                          // between two candidates of one structure
  int extra_levels = 0;                   // structure levels searched after the first one that fills `keep`
  bool explain_failure = true;            // binding requirements when nothing meets
  std::optional<Requirement> metric_objective;  // internal: optimise this metric instead (relaxed searches)
  // When given and set, the search stops at its next check (between tasks and inside every local
  // search); the result so far is returned.
  const std::atomic<bool>* cancel = nullptr;
  bool IsValid(std::string* error) const;
  static DesignOptions FromSpec(const Spec& spec);
};

struct BindingRequirement {
  Requirement requirement;
  MetricValue best_value;              // best value of its metric reachable when it alone is relaxed
  bool relaxing_meets_the_rest = false;
  // The design behind best_value: it meets every other requirement (set exactly when
  // relaxing_meets_the_rest), so an engineer can see what relaxing this one requirement buys.
  std::optional<Zpk> best_design;
};

// What one phase of the search spent.
struct SearchPhase {
  std::string name;        // "first pass", "escalation round 1", ...
  long long evaluations = 0;
  int local_runs = 0;
  double seconds = 0.0;
};

struct DesignSummary {
  long long evaluations = 0;
  std::vector<SearchPhase> phases;
  long long escalation_budget = 0;  // evaluations the escalation could spend (0: it did not run)
  long long escalation_spent = 0;
  bool met = false;                 // the search ended with a design that meets everything
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
  LoopContext context;  // plants, requirements, analysis, region, frequency range (the Verifier's)
  Objective objective = Objective::LeastEffort;
  std::vector<Candidate> candidates;
  std::vector<BindingRequirement> binding;
  std::vector<PlantLimit> limits;
  DesignSummary summary;
  bool met() const { return !candidates.empty() && candidates.front().meets; }
};

DesignReport run_design(const Spec& spec, const DesignOptions& options);

}  // namespace pw
