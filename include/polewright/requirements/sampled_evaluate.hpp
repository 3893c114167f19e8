// The sampled loop judged against the requirements: the compensator as it runs (discretised by
// the implementation's method, coefficients at its word length), the plant behind a zero-order hold
// with its dead time and the computation delay, every metric assigned by the same set_*_metrics
// routines as the continuous loop. Shared by check (a spec with an implementation block) and export.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "polewright/analysis/discrete_loop.hpp"
#include "polewright/requirements/evaluate.hpp"
#include "polewright/requirements/implementation.hpp"

namespace pw {

// Gain tolerance of the sampled loop (the continuous definition, poles mapped by s = ln(z) / T).
GainToleranceResult discrete_gain_tolerance(const Zpk& cd, const SampledPlant& sp, const Region& region, double share);

// The figures of a sampled loop as metric values (gain tolerance is left missing: see
// discrete_gain_tolerance).
MetricValues discrete_metric_values(const DiscreteLoopAnalysis& a);

// The discrete compensator rebuilt from its biquad sections with every coefficient (b0..b2, a1, a2,
// the cascade gain) rounded to single precision: the compensator a float implementation runs.
Zpk float_rounded_compensator(const Zpk& discrete);

// The compensator as the implementation runs it. The prewarp method warps at prewarp_rad_s, else at
// `crossover_rad_s` (the nominal continuous loop's), notches at their own centre. Throws SpecError
// naming "$.implementation..." when the method cannot map the compensator at this sample time or
// no warp point is known.
struct ImplementedCompensator {
  Zpk discrete;
  std::optional<double> warp_rad_s;  // prewarp: the warp point used
};
ImplementedCompensator implement_compensator(const Zpk& continuous, const Implementation& im,
                                             std::optional<double> crossover_rad_s);

// The plant as the sampled loop sees it: its dead time plus the computation delay (d T; a fraction
// of a sample is exact through the modified zero-order hold).
Plant plant_with_compute_delay(const Plant& plant, const Implementation& im);

// One plant's sampled loop: the discrete analysis (step figures hold between the samples too) and
// the metric values, as a LoopEvaluation whose poles are the s-plane equivalents ln(z) / T.
struct SampledLoopEvaluation {
  LoopEvaluation loop;             // values, poles (s equivalents), step, frequency, steady state
  DiscreteLoopAnalysis analysis;   // z-plane poles, the step at the samples and between them
};
// `min_samples`: simulate at least this many samples (the continuous step's horizon over T).
// `screening` (the search's cheap path; verification and check leave it off): step figures at the
// sample instants only, from a window of screening_window_samples(req, T) samples at most.
// `needs` with everything = false skips what the continuous screening skips (evaluate_loop): an
// unstable loop stops after its poles, the frequency response only when a requirement or
// needs.frequency asks, the step only past the time_domain_gate at needs.step_gate (or when
// needs.step asks), the gain-tolerance scan only when everything else is that close.
SampledLoopEvaluation evaluate_sampled_loop(const Zpk& discrete, const Plant& plant, const Implementation& im,
                                            const RequirementSet& req, const Region& region,
                                            const AnalysisOptions& options, int min_samples = 0,
                                            bool screening = false, const EvaluationNeeds& needs = {});

// The warning when a sampled step stops at `max_samples` samples of T before its slowest pole has decayed.
std::string sampled_step_truncated_warning(const std::string& plant_name, int max_samples, double sample_time_s);

// The screening's step window: four times the largest upper time limit of `req` (settling, rise)
// in samples of T, at least 200; 0 (no window) when `req` bounds no time.
int screening_window_samples(const RequirementSet& req, double sample_time_s);

// Every plant's sampled loop and the worst case over them (the check verdict with an implementation).
struct SampledEvaluation {
  Implementation implementation;
  ImplementedCompensator compensator;
  std::vector<SampledLoopEvaluation> loops;
  Evaluation evaluation;           // outcomes by worst_over_plants, as evaluate_all
  std::vector<std::string> warnings;
};
// `continuous`: the continuous evaluation of the same compensator (warp point, step horizons).
SampledEvaluation evaluate_sampled(const Zpk& continuous_compensator, const std::vector<Plant>& plants,
                                   const RequirementSet& req, const Region& region, const AnalysisOptions& options,
                                   const Implementation& im, const Evaluation& continuous);

// "tustin, delay 1 sample" ("delay 0.5 samples" for a fraction; ", float coefficients" after it
// with word_length float): the words the sampled label and the sample-time search use.
std::string implementation_words(const Implementation& im);

// "sampled at T = 0.002 s (tustin, delay 1 sample)"; "delay 0.5 samples" for a fraction.
std::string sampled_label(const Implementation& im);

}  // namespace pw
