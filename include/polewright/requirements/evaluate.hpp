// One loop (compensator + plant) evaluated against the requirements, and the worst case over the
// plant variants.
#pragma once

#include <array>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "polewright/analysis/analysis_options.hpp"
#include "polewright/analysis/closed_loop.hpp"
#include "polewright/analysis/frequency.hpp"
#include "polewright/analysis/steady_state.hpp"
#include "polewright/analysis/step.hpp"
#include "polewright/requirements/region.hpp"
#include "polewright/requirements/requirement_set.hpp"

namespace pw {

// Interval of loop-gain scale factors around 1 over which the closed loop stays stable and the
// poles that matter stay inside the region, searched within [kGainScanMin, kGainScanMax].
constexpr double kGainScanMin = 0.01;
constexpr double kGainScanMax = 100.0;

struct GainToleranceResult {
  std::optional<double> lo, hi;  // nullopt when the nominal loop is not inside the region
  bool lo_at_limit = false, hi_at_limit = false;
  double tolerance_pct = 0.0;    // 100 min(hi - 1, 1 - lo), 0 when empty
};

// `step_ratio` is the outward step before bisecting the first change (40 bisections).
GainToleranceResult gain_tolerance(const LoopParts& parts, const Region& region, double residue_share,
                                   double step_ratio = 1.05);

// The same scan for any loop: `ok(k)` tells whether the loop with its compensator scaled by k is
// stable with the poles that matter inside the region (the sampled loop of the export uses it).
GainToleranceResult gain_tolerance_scan(const std::function<bool(double)>& ok, double step_ratio = 1.05);

// The search's screening version for a required tolerance t (fraction): it tests the scale factors
// 1 - t and 1 + t and only bisects (8 steps) towards a side that fails, so a loop that holds the
// requirement costs two pole analyses. The figure is then t itself (a lower bound); the
// full-accuracy verification reports the real one.
GainToleranceResult gain_tolerance_screen(const LoopParts& parts, const Region& region, double residue_share,
                                          double required);

struct LoopEvaluation {
  std::string plant_name;
  bool well_posed = true;
  bool stable = false;
  PoleAnalysis poles;
  std::optional<StepMetrics> step;
  FrequencyMetrics frequency;
  SteadyState steady_state;
  GainToleranceResult gain;
  bool region_ok = false;                          // every pole that matters inside the region
  std::optional<Complex> dominant_pole;            // slowest-decaying pole that matters
  std::array<MetricValue, kMetricCount> values{};  // indexed by MetricId
};

struct EvaluationNeeds {
  bool everything = true;  // false: only what the requirements use (search screening)
  // With everything = false: unstable loops stop after their poles; the step is simulated when a
  // requirement or `step` asks for it and the frequency-domain violations sum to at most
  // `step_gate`; the frequency response is computed when a requirement or `frequency` asks.
  bool step = false;
  bool frequency = false;
  double step_gate = 1.0;
};

LoopEvaluation evaluate_loop(const Zpk& compensator, const Plant& plant, const RequirementSet& req,
                             const Region& region, const AnalysisOptions& options, const EvaluationNeeds& needs = {});

// Delay margin: the smallest extra dead time that brings a gain crossover's phase to -180 deg,
// min over crossovers w_i of PM_i / w_i with PM_i in radians taken in [0, 2 pi); infinite without
// a crossover. For any loop's frequency figures (continuous or sampled).
MetricValue delay_margin_value(const FrequencyMetrics& f);

struct RequirementOutcome {
  Requirement requirement;
  MetricValue worst;      // worst value over the plants
  int worst_plant = 0;    // index into the plants
  bool met = false;
  double violation = 0.0; // normalised (see requirement_violation)
};

struct Evaluation {
  std::vector<LoopEvaluation> plants;      // nominal first, then the variants
  std::vector<RequirementOutcome> outcomes;
  bool all_stable = false;
  bool all_met = false;
  double total_violation = 0.0;
  int worst_plant = 0;                     // plant with the largest violation sum
};

Evaluation evaluate_all(const Zpk& compensator, const std::vector<Plant>& plants, const RequirementSet& req,
                        const Region& region, const AnalysisOptions& options, const EvaluationNeeds& needs = {});

}  // namespace pw
