// Continuous compensators to discrete time, root by root (s-plane roots mapped to the z-plane),
// never through expanded high-order polynomials. A discrete transfer function is a Zpk whose roots
// are z-plane roots: gain * prod(z - z_i) / prod(z - p_i).
#pragma once

#include <optional>
#include <string>

#include "polewright/model/state_space.hpp"
#include "polewright/model/zpk.hpp"

namespace pw {

enum class DiscreteMethod { Tustin, Prewarp, Zoh, Matched };

const char* discrete_method_name(DiscreteMethod m);                  // "tustin", "prewarp", "zoh", "matched"
std::optional<DiscreteMethod> parse_discrete_method(const std::string& name);

struct DiscretizeOptions {
  double sample_time_s = 0.0;  // T > 0 (required)
  DiscreteMethod method = DiscreteMethod::Tustin;
  // Prewarp only: the warp point w0 (0 < w0 < pi / T) for every root that is not part of a notch.
  double prewarp_rad_s = 0.0;
  // Prewarp only: a notch stage (a complex zero pair and a complex pole pair whose natural
  // frequencies agree within 1 %) is warped at its own centre, the pole pair's natural frequency.
  bool warp_notches_at_centre = true;

  bool IsValid(std::string* error) const;
};

// The Tustin map of one root with the constant c (c = 2 / T, or w0 / tan(w0 T / 2) prewarped):
// z = (c + a) / (c - a).
Complex tustin_root(Complex a, double c);

// c = w0 / tan(w0 T / 2): the substitution s = c (z - 1) / (z + 1) is exact at s = j w0.
double prewarp_constant(double w0, double sample_time_s);

// The natural frequency of the notch a complex pole pair belongs to (nullopt when none).
std::optional<double> notch_centre_of(const Zpk& c, const Complex& pole);

// Exact zero-order-hold discretisation of a state-space model: Ad = e^(A T),
// Bd = integral_0^T e^(A s) ds B, from the matrix exponential of [[A, B], [0, 0]] T (balanced).
StateSpace zoh_state_space(const StateSpace& sys, double sample_time_s);

// Transmission zeros of a discrete (or continuous) SISO state-space model: the finite generalized
// eigenvalues of the pencil ([[A, B], [C, D]], [[I, 0], [0, 0]]).
Roots state_space_zeros(const StateSpace& sys);

// The discrete compensator Cd(z). Tustin and prewarp: each root by the Tustin map, the zeros at
// infinity to z = -1, the gain so that Cd(z) equals C(s) at the mapped point. ZOH: the poles
// exp(p T), zeros and gain from the exact ZOH state space. Matched: poles and zeros exp(r T),
// zeros at infinity to z = -1, gain so that the low-frequency gain matches:
// lim (z - 1)^n Cd(z) = T^n lim s^n C(s), n = integrators (the DC gain when n = 0).
// Throws std::invalid_argument for invalid options or a root the map sends to infinity.
Zpk discretize(const Zpk& c, const DiscretizeOptions& options);

// Evaluates a discrete transfer function on the unit circle: H(e^{j w T}).
Complex discrete_response(const Zpk& d, double w, double sample_time_s);

}  // namespace pw
