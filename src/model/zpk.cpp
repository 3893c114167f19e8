#include "polewright/model/zpk.hpp"

#include <cmath>
#include <cstdio>
#include <sstream>

namespace pw {

Complex Zpk::evaluate(Complex s) const {
  // Interleave zeros and poles so the running product stays of moderate size. Plain real
  // arithmetic: std::complex multiply and divide go through the slow C99 Annex G helpers.
  double ar = gain, ai = 0.0;
  const double sr = s.real(), si = s.imag();
  const size_t n = std::max(zeros.size(), poles.size());
  for (size_t i = 0; i < n; ++i) {
    if (i < zeros.size()) {
      const double br = sr - zeros[i].real(), bi = si - zeros[i].imag();
      const double r = ar * br - ai * bi;
      ai = ar * bi + ai * br;
      ar = r;
    }
    if (i < poles.size()) {
      const double br = sr - poles[i].real(), bi = si - poles[i].imag();
      const double d = br * br + bi * bi;
      const double r = (ar * br + ai * bi) / d;
      ai = (ai * br - ar * bi) / d;
      ar = r;
    }
  }
  return Complex(ar, ai);
}

Zpk zpk_from_polynomials(const Poly& numerator, const Poly& denominator) {
  const Poly num = poly_trim(numerator);
  const Poly den = poly_trim(denominator);
  Zpk z;
  if (num.empty()) {
    z.gain = 0.0;
    z.poles = poly_roots(den);
    return z;
  }
  z.gain = num.front() / den.front();
  z.zeros = poly_roots(num);
  z.poles = poly_roots(den);
  return z;
}

Poly zpk_numerator(const Zpk& z) {
  Poly p = poly_from_roots(z.zeros);
  for (double& c : p) c *= z.gain;
  return p;
}

Poly zpk_denominator(const Zpk& z) { return poly_from_roots(z.poles); }

Zpk zpk_series(const Zpk& a, const Zpk& b) {
  Zpk out;
  out.gain = a.gain * b.gain;
  out.zeros = a.zeros;
  out.zeros.insert(out.zeros.end(), b.zeros.begin(), b.zeros.end());
  out.poles = a.poles;
  out.poles.insert(out.poles.end(), b.poles.begin(), b.poles.end());
  return out;
}

double zpk_frequency_scale(const Zpk& z) {
  double log_sum = 0.0;
  int count = 0;
  for (const Roots* set : {&z.zeros, &z.poles})
    for (const Complex& r : *set)
      if (std::abs(r) > 0.0) {
        log_sum += std::log(std::abs(r));
        ++count;
      }
  return count ? std::exp(log_sum / count) : 1.0;
}

double zpk_origin_tolerance(const Zpk& z) { return 1e-12 * std::max(1.0, zpk_frequency_scale(z)); }

int zpk_integrators(const Zpk& z) {
  const double tol = zpk_origin_tolerance(z);
  int n = 0;
  for (const Complex& p : z.poles) n += std::abs(p) <= tol ? 1 : 0;
  for (const Complex& q : z.zeros) n -= std::abs(q) <= tol ? 1 : 0;
  return n;
}

double zpk_low_frequency_gain(const Zpk& z) {
  const double tol = zpk_origin_tolerance(z);
  Complex acc(z.gain, 0.0);
  for (const Complex& q : z.zeros)
    if (std::abs(q) > tol) acc *= -q;
  for (const Complex& p : z.poles)
    if (std::abs(p) > tol) acc /= -p;
  return acc.real();
}

namespace {

std::string num(double v) {
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.6g", v);
  return buf;
}

std::string factors(const Roots& roots) {
  std::string out;
  for (size_t i = 0; i < roots.size(); ++i) {
    const Complex r = roots[i];
    if (r.imag() < 0.0) continue;  // the conjugate was written with its partner
    if (r.imag() > 0.0) {
      const double wn = std::abs(r);
      const double zeta = -r.real() / wn;
      out += "(s^2 + " + num(2.0 * zeta * wn) + " s + " + num(wn * wn) + ")";
    } else if (r.real() == 0.0) {
      out += "s";
    } else if (r.real() < 0.0) {
      out += "(s + " + num(-r.real()) + ")";
    } else {
      out += "(s - " + num(r.real()) + ")";
    }
  }
  return out;
}

}  // namespace

std::string zpk_to_string(const Zpk& z) {
  std::string n = factors(z.zeros);
  std::string d = factors(z.poles);
  std::string out = num(z.gain);
  if (!n.empty()) out += " " + n;
  if (!d.empty()) out += " / " + d;
  return out;
}

}  // namespace pw
