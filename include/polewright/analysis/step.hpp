// Unit reference step of the closed loop, by exact zero-order-hold discretisation.
#pragma once

#include <optional>
#include <vector>

#include "polewright/analysis/closed_loop.hpp"

namespace pw {

struct StepOptions {
  // Simulated time; 0 picks it from the poles and their residues so that the transient left at
  // the end is provably inside a tenth of the settling band (see choose_step_horizon).
  double horizon_s = 0.0;
  // Number of samples including t = 0. With `adaptive_samples` the count may grow so that every
  // pole that matters gets at least 20 samples per period and 5 per time constant.
  int samples = 1000;
  bool adaptive_samples = true;
  int max_samples = 200000;
  // Settling band as a fraction of the final value (0.02 = 2 %).
  double band = 0.02;
  // Refine event times (rise, settling, peak) by exact propagation between samples; when false,
  // linear interpolation and a parabola through the peak sample are used (cheap search path).
  bool exact_refinement = true;
  // Keep the sampled y and u in the result (reports, plots).
  bool keep_trace = false;

  bool IsValid(std::string* error) const;
};

struct StepTrace {
  double dt = 0.0;
  std::vector<double> y;
  std::vector<double> u;
};

struct StepMetrics {
  double horizon_s = 0.0;
  int samples = 0;
  double final_value = 0.0;
  std::optional<double> overshoot_pct;    // 0 when y never exceeds y(inf)
  std::optional<double> peak_time_s;      // only when there is overshoot
  std::optional<double> rise_time_s;      // 10 % -> 90 %
  std::optional<double> settling_time_s;  // null when not settled within the horizon
  std::optional<double> peak_effort;      // max |u|
  double undershoot_pct = 0.0;            // largest excursion opposite to y(inf), in percent
  StepTrace trace;
};

// Horizon from the slowest decay and the residues: the smallest t with sum |c_i| e^(Re p_i t) below
// 0.1 band |y(inf)| (at least 10 / decay of the slowest pole that matters), at least
// 1.5 * min_horizon_s.
double choose_step_horizon(const PoleAnalysis& poles, double final_value, double band, double min_horizon_s);

// Simulates a stable, well-posed loop and extracts the step figures.
StepMetrics step_response(const ClosedLoop& loop, const PoleAnalysis& poles, const StepOptions& options,
                          double min_horizon_s = 0.0);

}  // namespace pw
