// Transfer functions as zeros, poles and gain: gain * prod(s - z) / prod(s - p).
#pragma once

#include <string>

#include "polewright/model/polynomial.hpp"
#include "polewright/model/types.hpp"

namespace pw {

struct Zpk {
  Roots zeros;
  Roots poles;
  double gain = 1.0;

  int order() const { return static_cast<int>(poles.size()); }
  int relative_degree() const { return static_cast<int>(poles.size() - zeros.size()); }
  bool is_proper() const { return zeros.size() <= poles.size(); }

  Complex evaluate(Complex s) const;
};

// From numerator/denominator in descending powers. Leading numerator zeros are dropped; the
// denominator's leading coefficient must be non-zero (the caller validates).
Zpk zpk_from_polynomials(const Poly& numerator, const Poly& denominator);

// Numerator and denominator polynomials (denominator monic).
Poly zpk_numerator(const Zpk& z);
Poly zpk_denominator(const Zpk& z);

// Series connection a(s) b(s).
Zpk zpk_series(const Zpk& a, const Zpk& b);

// A root with |r| at most this counts as at the origin: 1e-12 of the roots' scale (at least 1).
double zpk_origin_tolerance(const Zpk& z);

// Number of poles minus zeros at the origin (|root| <= tol * scale): the loop type when positive.
int zpk_integrators(const Zpk& z);

// The gain of s^n H(s) as s -> 0 where n = zpk_integrators(z): the error constant of a loop.
double zpk_low_frequency_gain(const Zpk& z);

// Representative magnitude of the roots (geometric mean of non-zero |roots|; 1 when none).
double zpk_frequency_scale(const Zpk& z);

// A readable form: "3.1 (s + 40) / (s + 400)".
std::string zpk_to_string(const Zpk& z);

}  // namespace pw
