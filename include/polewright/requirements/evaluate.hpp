// One loop (compensator + plant) evaluated against the requirements, and the worst case over the
// plant variants.
#pragma once

#include <array>
#include <cmath>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "polewright/analysis/analysis_options.hpp"
#include "polewright/analysis/closed_loop.hpp"
#include "polewright/analysis/disturbance.hpp"
#include "polewright/analysis/frequency.hpp"
#include "polewright/analysis/saturated.hpp"
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

// The metric values of a loop, indexed by MetricId.
using MetricValues = std::array<MetricValue, kMetricCount>;

// Each metric gets its value from the analysis figures here and only here: the continuous loop of
// check, design and retune (evaluate_loop) and the sampled loop of export (discrete_metric_values)
// both go through these, so a new metric is assigned in one place.
//   poles: the smallest damping ratio among the poles that matter (+inf: none) and the natural
//   frequency of the dominant one; frequency: margins (infinite when there is no crossover),
//   crossover, bandwidth, |S| peak; steady state (infinite when the error grows without bound);
//   step: overshoot, settling time, rise time, peak effort; gain tolerance in percent.
void set_pole_metrics(MetricValues& v, double min_damping, std::optional<double> natural_frequency);
void set_frequency_metrics(MetricValues& v, const FrequencyMetrics& f);
void set_steady_state_metrics(MetricValues& v, const SteadyState& s);
void set_step_metrics(MetricValues& v, const StepMetrics& s);
void set_gain_tolerance_metric(MetricValues& v, double tolerance_pct);
//   disturbance: peak |y|, recovery time and IAE of the load (or output) step of size `step`
//   (recovery and IAE infinite when the disturbance is not rejected); noise: peak |C S| and |C(j inf)|.
void set_disturbance_metrics(MetricValues& v, DisturbanceInput where, const DisturbanceMetrics& d, double step);
void set_noise_metrics(MetricValues& v, const NoiseMetrics& n);
//   saturated: overshoot, settling and rise time of the step with the actuator limits (settling
//   infinite when y is outside the band at the horizon or cannot reach the target within the limits).
void set_saturated_metrics(MetricValues& v, const SaturatedStepFigures& s);

// The step of the loop with the spec's actuator limits (req.actuator, of size req.reference_step),
// over three times the linear step's horizon (at least 1.5 times a saturated_settling_time_s
// limit) at the linear step's sample interval (at most 30000 samples). A compensator without an
// integrator runs without anti-windup (nothing winds up); nullopt when it has more than one and
// anti-windup is asked for, or when the loop cannot be simulated.
std::optional<SaturatedStepFigures> saturated_step(const LoopParts& parts, const PoleAnalysis& poles,
                                                   const StepMetrics& linear, const RequirementSet& req);

//   saturated load: peak |y - y0| and recovery time of the load step of size req.disturbance_step
//   arriving while the loop holds req.held_reference() (recovery infinite when not rejected).
void set_saturated_load_metrics(MetricValues& v, const SaturatedDisturbanceFigures& d);

// That load step with the actuator limits: over three times the linear load response's horizon
// (at least 1.5 times a saturated_load_recovery_s limit) at its sample interval (at most 30000
// samples); rejected only where the linear loop rejects the load. nullopt as for saturated_step,
// and when the loop cannot hold the operating reference within the limits.
std::optional<SaturatedDisturbanceFigures> saturated_load(const LoopParts& parts, const DisturbanceMetrics& linear,
                                                          const RequirementSet& req);

// The sum of the requirement violations of v, leaving out the metrics `skip` says to.
template <class Skip>
double violation_except(const RequirementSet& req, const MetricValues& v, Skip&& skip) {
  double sum = 0.0;
  for (const Requirement& r : req.items)
    if (!skip(r.metric)) sum += requirement_violation(r, v[static_cast<size_t>(r.metric)]);
  return sum;
}

struct LoopEvaluation {
  std::string plant_name;
  bool well_posed = true;
  bool stable = false;
  PoleAnalysis poles;
  std::optional<StepMetrics> step;
  FrequencyMetrics frequency;
  SteadyState steady_state;
  GainToleranceResult gain;
  std::optional<DisturbanceMetrics> load, output;  // per unit step, when a requirement asks
  std::optional<NoiseMetrics> noise;
  std::optional<SaturatedStepFigures> saturated;  // the step with the actuator limits, when asked
  std::optional<SaturatedDisturbanceFigures> saturated_load;  // the load step with them, when asked
  // A measured plant: the frequency figures (margins, crossovers, bandwidth, |S|, |C S|) come from
  // the data, the poles, the step and the rest from the fitted model; `data_notes` says what the
  // measured range cannot show.
  bool frequency_from_data = false;
  std::vector<std::string> data_notes;
  bool region_ok = false;                          // every pole that matters inside the region
  std::optional<Complex> dominant_pole;            // slowest-decaying pole that matters
  MetricValues values{};                           // indexed by MetricId
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

// Whether `req` names a figure of the loop frequency response (margins, crossover, bandwidth, peak
// sensitivity, delay margin), or of the reference step (overshoot, settling, rise, peak effort).
bool needs_frequency_response(const RequirementSet& req);
bool needs_step_response(const RequirementSet& req);

// The screening gate of the step and the disturbance steps: true when the figures other than the
// time-domain ones (and the gain tolerance) violate `req` by at most `gate` in total.
bool time_domain_gate(const RequirementSet& req, const MetricValues& v, double gate);

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

// The worst case of one requirement over the plants: the rule check, design, retune and export
// share. Ranking (larger is worse):
//   * a larger violation is worse; an unstable loop violates every requirement by at least
//     kUnstableViolation;
//   * among violations that tie (capped ones), the larger real shortfall is worse, by a tie-break
//     of at most kShortfallTieBreak (tanh of the shortfall over the limit's scale);
//   * among plants that meet it, the smaller margin is worse: the key is -margin / scale times
//     kMetMarginWeight (below zero, so any violation ranks above it), and an unbounded value that
//     meets it (an infinite margin) is the best of all (kUnboundedMetKey).
// Plants are given by count and an accessor: `plant(i)` returns {value, stable} of plant i.
constexpr double kUnstableViolation = 1e3;
constexpr double kShortfallTieBreak = 1e-9;
constexpr double kMetMarginWeight = 1e-6;
constexpr double kUnboundedMetKey = -1e300;

struct PlantValue {
  MetricValue value;
  bool stable = false;
};

struct WorstCase {
  MetricValue worst;      // the value of the worst plant
  int plant = 0;          // its index
  double violation = 0.0; // its violation (with the unstable floor)
};

// Violation of r by one plant (requirement_violation, at least kUnstableViolation when unstable).
double plant_violation(const Requirement& r, const PlantValue& p);
// The ranking key above for one plant with its violation.
double worst_case_key(const Requirement& r, const MetricValue& v, double violation);

// `violations`, when given, receives each plant's violation (resized to `count`).
template <class PlantAt>
WorstCase worst_over_plants(const Requirement& r, size_t count, const PlantAt& plant,
                            std::vector<double>* violations = nullptr) {
  WorstCase w;
  if (violations) violations->assign(count, 0.0);
  double worst_key = -INFINITY;
  for (size_t i = 0; i < count; ++i) {
    const PlantValue p = plant(i);
    const double viol = plant_violation(r, p);
    if (violations) (*violations)[i] = viol;
    const double key = worst_case_key(r, p.value, viol);
    if (key > worst_key) {
      worst_key = key;
      w.worst = p.value;
      w.plant = static_cast<int>(i);
      w.violation = viol;
    }
  }
  return w;
}

Evaluation evaluate_all(const Zpk& compensator, const std::vector<Plant>& plants, const RequirementSet& req,
                        const Region& region, const AnalysisOptions& options, const EvaluationNeeds& needs = {});

// The worst case over loops already evaluated (evaluate_all's second half; the sampled loops of
// check with an implementation go through it too).
Evaluation evaluation_of(std::vector<LoopEvaluation> loops, const RequirementSet& req);

}  // namespace pw
