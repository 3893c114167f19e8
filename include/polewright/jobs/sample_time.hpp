// Guidance on the sample rate of a compensator as it will run: how fast the rate is against the
// loop's crossover, the phase the hold and the computation delay cost there, and the slowest
// sample time at which the sampled loop still meets every requirement.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "polewright/requirements/evaluate.hpp"
#include "polewright/requirements/implementation.hpp"

namespace pw {

// At the nominal continuous loop's highest gain crossover wc: the rate ratio (2 pi / T) / wc, the
// phase lag of the zero-order hold wc T / 2 and of the computation delay wc d T (field notes:
// both in degrees). Common practice asks for a ratio of 10 to 20 or more.
struct RateGuidance {
  double sample_time_s = 0.0;
  double crossover_rad_s = 0.0;
  double rate_ratio = 0.0;
  double hold_phase_deg = 0.0;
  double delay_phase_deg = 0.0;
};
// nullopt when the nominal continuous loop has no gain crossover.
std::optional<RateGuidance> rate_guidance(const Implementation& im, const Evaluation& continuous);

struct SampleTimeOptions {
  // The sample times tried lie between the rates 2 pi / T = fastest_ratio w and slowest_ratio wc
  // (wc: the nominal continuous crossover; without one, the fastest closed-loop pole that matters;
  // w: the largest of wc and every compensator and plant root's magnitude, so that a notch on a
  // mode far above the crossover is tried at a rate it needs). The fastest trial is never slower
  // than the spec's own sample time.
  double fastest_ratio = 200.0;
  double slowest_ratio = 2.0;
  int grid_points = 13;               // log-spaced trials over that range, fastest first
  double relative_tolerance = 0.01;   // bisection stops when the bracket is this narrow
  bool IsValid(std::string* error) const;
};

struct SampleTimeTrial {
  double sample_time_s = 0.0;
  bool met = false;
  bool implementable = true;  // false: the method cannot map the compensator at this T
};

// The slowest sample time that meets: trials from the fastest rate down a log grid until the first
// that fails, then bisection between the last that met and that one. Met is not monotone in T in
// general (a notch, a resonance): the answer is the edge of the first failure seen from the fast
// end, and every trial is listed.
struct SampleTimeSearch {
  Implementation implementation;          // method, delay (in samples) and word length held fixed
  double reference_rad_s = 0.0;           // wc, or the pole frequency used in its place
  bool reference_is_crossover = true;
  std::optional<double> slowest_met_s;    // nullopt: not even the fastest trial meets
  std::optional<double> first_failed_s;   // nullopt: every trial up to the slowest meets
  bool continuous_met = false;            // the continuous loop meets (else the rate is not the cause)
  std::vector<SampleTimeTrial> trials;    // in the order tried
};

// `base`: the spec's implementation (its sample time is replaced), or a default one (Tustin, no
// delay, double) when the spec has none. `continuous`: the continuous evaluation of `c`.
SampleTimeSearch find_slowest_sample_time(const Zpk& c, const std::vector<Plant>& plants, const RequirementSet& req,
                                          const Region& region, const AnalysisOptions& options,
                                          const Implementation& base, const Evaluation& continuous,
                                          const SampleTimeOptions& search = {});

}  // namespace pw
