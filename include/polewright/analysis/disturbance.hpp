// Disturbance rejection and noise sensitivity of the unity-feedback loop: the response of y to a
// unit step entering at the plant input (load, y/d = G S = G / (1 + C G)) or at the plant output
// (y/d_o = S = 1 / (1 + C G)), and the gain from measurement noise to the control effort, C S.
#pragma once

#include <optional>

#include "polewright/analysis/closed_loop.hpp"
#include "polewright/analysis/frequency.hpp"
#include "polewright/analysis/step.hpp"

namespace pw {

enum class DisturbanceInput { Load, Output };

// The loop's state space with the disturbance as its input and y as the output of both channels
// (Cy = Cu): the load loop closes the plant around the compensator in the feedback path (the same
// closed-loop poles), the output loop is 1 - T of the reference loop.
ClosedLoop disturbance_loop(const LoopParts& parts, DisturbanceInput where);

// Figures of the response of y to a unit disturbance step (they scale with the step size, the
// recovery time does not).
//   peak: max |y(t)| over the horizon, refined between samples like the step's peak effort;
//   rejected: the final value y(inf) is zero (|y(inf)| <= 1e-8 peak): the loop has integral action
//     where the disturbance enters (C has an integrator for a load; C G for an output disturbance);
//   recovery_time_s: the last time |y| leaves the band `band` * peak (exact refinement like the
//     settling time); nullopt when the disturbance is not rejected (the output never returns);
//   iae: integral of |y| over t >= 0, exact from the modal antiderivative between the sign changes
//     of y (found on the samples, refined by bisection), or, when the modal residues fail their
//     checks, the trapezoid on the samples over a horizon where the transient left is below
//     1e-3 band peak; nullopt when not rejected (the integral grows without bound).
//   The peak is the supremum over t >= 0, so it includes |y(inf)|.
struct DisturbanceMetrics {
  double final_value = 0.0;
  double peak = 0.0;
  bool rejected = false;
  std::optional<double> recovery_time_s;
  std::optional<double> iae;
  double horizon_s = 0.0;
  int samples = 0;
  StepTrace trace;  // y in trace.y when options.keep_trace
};

// `loop` from disturbance_loop (stable and well posed); `options` the step settings (sample count,
// refinement; its band and horizon are replaced), `band` the recovery band as a fraction of the peak.
DisturbanceMetrics disturbance_response(const ClosedLoop& loop, const StepOptions& options, double band,
                                        double residue_share_threshold);

// Noise figures: peak over frequency of |C S| = |C / (1 + L)| (the grid of frequency_metrics, the
// largest grid value rescanned and refined by golden section; the high-frequency limit counts too)
// and |C(j inf)|, the compensator's high-frequency gain (its direct feed-through).
struct NoiseMetrics {
  std::optional<double> effort_peak;
  std::optional<double> effort_peak_at_rad_s;  // nullopt when the supremum is the limit w -> inf
  double high_frequency_gain = 0.0;
};

// With `gain_at_rad_s`, high_frequency_gain is |C(jw)| at that frequency instead of |C(j inf)|.
NoiseMetrics noise_metrics(const Zpk& compensator, const Zpk& loop, double delay_s, const FrequencyOptions& options,
                           std::optional<double> gain_at_rad_s = std::nullopt);

}  // namespace pw
