// The sampled loop: a discrete compensator Cd(z) (z-plane zeros/poles/gain), a computation delay of
// d samples, and the plant behind a zero-order hold at the sample time T, sampled exactly (matrix
// exponential), including a dead time that is not a whole number of samples (the modified ZOH).
#pragma once

#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "polewright/analysis/frequency.hpp"
#include "polewright/analysis/steady_state.hpp"
#include "polewright/analysis/step.hpp"
#include "polewright/model/plant.hpp"
#include "polewright/model/state_space.hpp"

namespace pw {

// x[k+1] = Phi x[k] + Gamma0 u[k - n] + Gamma1 u[k - n - 1], y[k] = C x[k] + D u[k - n - f], where
// the plant dead time plus d samples is n T + delta (0 <= delta < T), f = 1 when delta > 0,
// Gamma0 = int_0^{T - delta} e^(A s) ds B and Gamma1 = e^(A (T - delta)) int_0^delta e^(A s) ds B.
// Exact for a piecewise-constant input.
struct SampledPlant {
  StateSpace core;       // A = Phi, B = Gamma0, C, D of the plant's own states
  Vec gamma1;            // Gamma1 (empty when delta = 0)
  int delay_samples = 0; // n
  double fraction = 0.0; // delta / T
  double sample_time_s = 0.0;
  // The same plant in upper Hessenberg form (Phi = Q H Q^T; hb = Q^T Gamma0, hg = Q^T Gamma1,
  // hc = C Q), set by sample_plant: each point of the frequency response is then an O(n^2) solve.
  // Left empty (or out of step with core) the response falls back to a dense LU solve.
  Mat hess;
  Vec hb, hg;
  RowVec hc;
  // And in modal form when Phi's eigenvectors are well conditioned (cond_1 <= 1e4): Gd(z) z^n -
  // D z^-f = sum_i (rb_i + rg_i / z) / (z - lambda_i), n divisions per point. Empty otherwise.
  std::vector<Complex> lambda, rb, rg;
};

// Throws std::invalid_argument for T <= 0 or compute_delay < 0.
SampledPlant sample_plant(const Plant& plant, double sample_time_s, int compute_delay);

// The same as one state space u[k] -> y[k] with the delayed inputs as extra states (throws
// std::invalid_argument beyond kMaxStates, the most a StateSpace holds).
StateSpace sampled_plant_state_space(const SampledPlant& p);

// Gd(z) = z^-n (C (zI - Phi)^-1 (Gamma0 + Gamma1 z^-1) + D z^-f).
Complex sampled_plant_response(const SampledPlant& p, Complex z);

struct DiscreteLoopAnalysis;

struct DiscreteLoopOptions {
  double sample_time_s = 0.0;  // T > 0 (required)
  int compute_delay = 0;       // d >= 0 samples between sampling y and applying u
  double band = 0.02;          // settling band (fraction of the final value)
  double residue_share = 0.02; // a pole "matters" at this share of the step response or more
  int min_samples = 0;         // simulate at least this many samples
  int max_samples = 200000;    // and at most this many
  // Screening: when > 0, simulate at most this many samples and take the figures from that window
  // (a loop still outside the band at its end has no settling time; not flagged as truncated).
  int window_samples = 0;
  bool keep_trace = false;
  // Step figures of y between the samples too: the continuous plant output inside each hold
  // interval (exact propagation e^(A tau) with the held input, which switches inside the interval
  // for a fractional dead time), on `points_per_sample` points per interval refined by the exact
  // map near the extrema and the settling crossing. Off: figures at the sample instants only.
  bool between_samples = false;
  int points_per_sample = 16;  // at most; fewer on very long horizons (at least 4)
  TestSignal error_signal = TestSignal::Step;
  FrequencyOptions frequency;
  // Screening (the defaults compute everything): `frequency_response` false leaves the frequency
  // figures empty; `stop_if_unstable` ends the analysis of an unstable loop after its poles; a set
  // `step_gate` is asked after the poles, the frequency response and the steady state, and the step
  // is simulated only when it answers true.
  bool frequency_response = true;
  bool stop_if_unstable = false;
  std::function<bool(const DiscreteLoopAnalysis&)> step_gate;
  // Screening: the step at the instants from the modal expansion y[k] = y_f + sum c_i z_i^k (and
  // the same for u), one complex product per mode pair and sample, when the expansion reproduces
  // y[0] and u[0] to 1e-9 of its coefficients; otherwise, and by default, the state recurrence.
  // Not with between_samples.
  bool modal_step = false;

  bool IsValid(std::string* error) const;
};

struct DiscretePole {
  Complex z;
  Complex s;                    // equivalent s-plane pole ln(z) / T (principal branch)
  double damping = 1.0;         // of s (1 for z = 0)
  double natural_frequency = 0; // |s| (infinite for z = 0)
  double share = 1.0;           // share of the sampled step response
  double residue = -1.0;        // |c_i| in y[k] = y_f + sum c_i z_i^k (-1 when the expansion is unreliable)
  bool matters = true;
};

struct DiscreteLoopAnalysis {
  bool well_posed = true;
  bool stable = false;                 // every closed-loop pole has |z| < 1
  int states = 0;
  std::vector<DiscretePole> poles;     // by |z|, largest first
  std::optional<DiscretePole> dominant;  // the largest |z| among the poles that matter
  std::optional<StepMetrics> step;     // sampled unit-step response (stable loops); with
                                       // between_samples, overshoot, peak time, undershoot and
                                       // settling of the continuous output between the samples
  std::optional<StepMetrics> step_at_samples;  // with between_samples: the figures at the instants
  bool step_truncated = false;         // the horizon wanted more than max_samples samples
  FrequencyMetrics frequency;          // of L(e^{jwT}) on (0, pi / T]
  SteadyState steady_state;            // from the discrete error constants
  double nyquist_rad_s = 0.0;
};

// Largest closed-loop state count the analysis takes (plant + delayed inputs + compensator). The
// analysis uses dynamic-size matrices, so a dead time of up to a few hundred samples fits; the
// eigen-decompositions grow as the cube of this.
constexpr int kMaxDiscreteStates = 400;

// L(e^{jwT}) = Cd(e^{jwT}) Gd(e^{jwT}).
Complex sampled_loop_response(const Zpk& cd, const SampledPlant& p, double w);

// Closed-loop poles of the sampled loop with the compensator scaled by gain_scale, largest |z| first,
// with their shares of the sampled step response (the gain-tolerance scan of the export uses it).
struct DiscretePoles {
  bool well_posed = true;
  bool stable = false;
  std::vector<DiscretePole> poles;
};
DiscretePoles discrete_closed_loop_poles(const Zpk& cd, const SampledPlant& p, double gain_scale, double residue_share);

// Throws std::invalid_argument for invalid options or a loop with more than kMaxDiscreteStates
// states (a dead time of many samples).
DiscreteLoopAnalysis analyze_discrete_loop(const Zpk& cd, const Plant& plant, const DiscreteLoopOptions& options);

}  // namespace pw
