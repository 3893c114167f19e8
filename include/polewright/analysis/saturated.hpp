// The unity-feedback loop with a limited actuator: r -> e = r - y -> C(s) -> v -> [limits] -> u ->
// G(s) -> y, with a load step d at the plant input and a step d_o at its output. Magnitude limits
// u_min <= u <= u_max, an optional rate limit |du/dt| <= R, and anti-windup for a compensator with
// one integrator. The loop is piecewise affine: between switching instants each mode is a linear
// system with constant input, propagated exactly by its matrix exponential; the switching
// instants are located by bisection on that exact propagation.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "polewright/model/state_space.hpp"
#include "polewright/model/zpk.hpp"

namespace pw {

enum class AntiWindup {
  None,             // the integrator runs on while the actuator is limited (windup)
  BackCalculation,  // xi' = Ki e + (u - v) / Tt: the integrator is pulled back to what u allows
  Conditional,      // xi' = 0 while u != v and Ki e would drive v further beyond u (clamping)
};

struct ActuatorLimits {
  double minimum = -1.0;
  double maximum = 1.0;
  std::optional<double> rate_limit;  // |du/dt| <= rate, units of u per second; none by default
  AntiWindup anti_windup = AntiWindup::None;
  double tracking_time_s = 0.0;      // Tt of back-calculation (> 0 then); unused otherwise

  // minimum < maximum, both finite; rate > 0; Tt > 0 finite for back-calculation.
  bool IsValid(std::string* error) const;
};

// The inputs after t = 0+, applied to the loop at rest: with initial_reference 0 all states and u
// are zero at t = 0- (u at the nearer limit should 0 lie outside them); otherwise the loop starts
// at the equilibrium it holds with that constant reference (u there must lie within the limits).
struct SaturatedInputs {
  double reference = 1.0;
  double load = 0.0;    // added to u at the plant input
  double output = 0.0;  // added to y at the plant output
  double initial_reference = 0.0;
};

struct SaturatedOptions {
  double horizon_s = 1.0;  // simulated time (> 0)
  int samples = 2001;      // uniform samples including t = 0 and t = horizon (>= 3)
  int max_switches = 10000;  // more switching instants than this is reported as chattering

  bool IsValid(std::string* error) const;
};

// The mode of the actuator over a stretch of time.
enum class ActuatorMode { Linear, AtMaximum, AtMinimum, RampingUp, RampingDown };

struct SaturatedResponse {
  double dt = 0.0;
  std::vector<double> y;  // plant output at t = k dt
  std::vector<double> u;  // applied actuator signal (after the limits)
  std::vector<double> v;  // the compensator's demand (before the limits)
  std::vector<double> switch_times_s;  // every instant the actuator mode changed, ascending
  double limited_time_s = 0.0;         // total time with u != v
  bool chattering = false;             // max_switches reached: the trace stops there (values held)
};

// Simulates the loop. `compensator` C(s) proper; `plant` G(s) as a state space (with any Pade
// delay in series) that is strictly proper or driven by a strictly proper compensator (the
// algebraic loop through the limits is refused). Anti-windup other than None needs exactly one
// pole of C at s = 0: C(s) = Ki / s + C0(s) is then split off and the integrator state xi kept
// apart. Throws std::invalid_argument with a one-line reason on input it cannot simulate.
//
// Accuracy: each interval is propagated exactly in its mode; a switching instant is found to
// within 1e-13 of the horizon. A limit reached and left again within one sample interval is
// missed, so the samples should resolve the loop's fastest mode that matters (as the step's do).
SaturatedResponse simulate_saturated(const Zpk& compensator, const StateSpace& plant, const ActuatorLimits& limits,
                                     const SaturatedInputs& inputs, const SaturatedOptions& options);

// Step figures of the loop with the limited actuator, judged on the continuous response: the
// samples locate each event, and the exact propagation in the mode of the moment refines it
// between them (the peak by golden section around the three highest sampled maxima, the band exit
// by bisection, after checking every later sampled excursion above half the band).
//   target: where y settles without limits (the linear loop's y(inf) for this step);
//   u_final: the linear loop's steady-state u; reachable is false when it lies beyond the limits,
//     and the settling time is then nullopt (y cannot settle at the target);
//   band: the settling band as a fraction of |target|.
struct SaturatedStepFigures {
  double target = 0.0;
  bool reachable = true;
  std::optional<double> overshoot_pct;    // 0 when y never passes the target; nullopt for target 0
  std::optional<double> settling_time_s;  // nullopt: outside the band at the horizon, or unreachable
  std::optional<double> rise_time_s;      // 10 % -> 90 % of the target
  SaturatedResponse response;
};

SaturatedStepFigures saturated_step_figures(const Zpk& compensator, const StateSpace& plant,
                                            const ActuatorLimits& limits, const SaturatedInputs& inputs,
                                            const SaturatedOptions& options, double target, double u_final,
                                            double band);

// Figures of a disturbance step arriving while the loop holds its reference (inputs.reference ==
// inputs.initial_reference, the load and/or output step nonzero), judged on the continuous response:
//   baseline, held_u: y and u at the equilibrium before the step;
//   peak: sup |y - baseline| over the horizon (refined between samples as the step's peak);
//   rejected: y returns to the baseline: `integral_action` (the linear loop rejects this
//     disturbance) and the u that holds the baseline against it (u0 - d - d_o / G(0)) within the limits;
//   recovery_time_s: the last instant |y - baseline| leaves band * peak (refined as the settling
//     time); nullopt when not rejected or still outside the band at the horizon.
struct SaturatedDisturbanceFigures {
  double baseline = 0.0;
  double held_u = 0.0;
  double peak = 0.0;
  bool rejected = false;
  std::optional<double> recovery_time_s;
  SaturatedResponse response;
};

SaturatedDisturbanceFigures saturated_disturbance_figures(const Zpk& compensator, const StateSpace& plant,
                                                          const ActuatorLimits& limits, const SaturatedInputs& inputs,
                                                          const SaturatedOptions& options, bool integral_action,
                                                          double band);

std::string anti_windup_name(AntiWindup a);

}  // namespace pw
