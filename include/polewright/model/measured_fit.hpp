// A rational model (with an optional dead time) fitted to a measured frequency response by
// Sanathanan-Koerner iterations, the order chosen by the fit error with a penalty per parameter.
#pragma once

#include <string>
#include <vector>

#include "polewright/model/measured.hpp"
#include "polewright/model/zpk.hpp"

namespace pw {

struct FitOptions {
  int max_poles = 8;          // orders 1..max_poles are tried, each with 0..poles zeros
  int iterations = 20;        // Sanathanan-Koerner reweighting steps per order
  // Order choice: minimise  M ln(E / M) + penalty * k ln M  over the candidates, where M is twice the
  // number of points (real and imaginary parts), E the weighted squared relative error and k the
  // number of parameters (an information criterion; 1 is the usual weight, larger prefers lower orders).
  double penalty = 1.0;
  bool estimate_delay = false;  // estimate a dead time from the phase slope, then refine it by the fit error
  double delay_s = 0.0;         // fixed dead time when estimate_delay is false
  bool enforce_stable = true;   // reflect right-half-plane poles into the left half plane
  bool IsValid(std::string* error) const;
};

struct DecadeFitError {
  double w_lo = 0.0, w_hi = 0.0;  // rad/s, [w_lo, w_hi) (the last point joins the decade below when it sits on w_hi)
  int points = 0;
  double rms_magnitude_db = 0.0;  // 20 log10 |fit / data|
  double rms_phase_deg = 0.0;     // angle(fit / data)
};

struct RationalFit {
  Zpk model;
  double delay_s = 0.0;
  double rms_relative_error = 0.0;  // sqrt(mean |fit / data - 1|^2), coherence-weighted
  double criterion = 0.0;
  int reflected_poles = 0;           // unstable poles moved to the left half plane
  std::vector<DecadeFitError> per_decade;
  std::vector<std::string> notes;
};

// The best model over the orders of `options`.
RationalFit fit_rational(const MeasuredResponse& data, const FitOptions& options);

// The model with exactly `poles` poles and `zeros` zeros (zeros <= poles) for the given dead time.
RationalFit fit_rational_order(const MeasuredResponse& data, int poles, int zeros, double delay_s, const FitOptions& options);

// -d(phase)/dw by least squares over the upper third of the points (log-spaced index): the dead
// time the phase slope suggests, 0 when the slope is not negative.
double delay_from_phase_slope(const MeasuredResponse& data);

// Fit errors per decade of frequency for a model against the data.
std::vector<DecadeFitError> fit_error_per_decade(const MeasuredResponse& data, const Zpk& model, double delay_s);

}  // namespace pw
