#include "polewright/model/pid_form.hpp"

#include <algorithm>
#include <cmath>

namespace pw {

const char* pid_shape_name(PidShape s) {
  switch (s) {
    case PidShape::P: return "P";
    case PidShape::PI: return "PI";
    case PidShape::PD: return "PD";
    case PidShape::PID: return "PID";
  }
  return "P";
}

namespace {

// Coefficients of prod(s - z) in ascending powers (real parts: the zeros come in conjugate pairs).
std::vector<double> ascending_product(const Roots& zeros) {
  std::vector<Complex> c = {Complex(1.0, 0.0)};
  for (const Complex& z : zeros) {
    std::vector<Complex> next(c.size() + 1, Complex(0.0, 0.0));
    for (size_t i = 0; i < c.size(); ++i) {
      next[i] -= z * c[i];
      next[i + 1] += c[i];
    }
    c = next;
  }
  std::vector<double> out(c.size());
  for (size_t i = 0; i < c.size(); ++i) out[i] = c[i].real();
  return out;
}

}  // namespace

std::optional<PidForm> pid_form(const Zpk& c) {
  if (!(std::isfinite(c.gain) && c.gain != 0.0)) return std::nullopt;
  const double tol = zpk_origin_tolerance(c);
  int integrators = 0;
  Roots others;
  for (const Complex& p : c.poles) {
    if (std::abs(p) <= tol) ++integrators;
    else others.push_back(p);
  }
  for (const Complex& z : c.zeros)
    if (std::abs(z) <= tol) return std::nullopt;  // a zero at the origin: no PID term gives it
  if (integrators > 1 || others.size() > 1) return std::nullopt;
  const bool filter = others.size() == 1;
  if (filter && !(others[0].imag() == 0.0 && others[0].real() < 0.0)) return std::nullopt;
  const size_t max_zeros = static_cast<size_t>(integrators) + others.size();
  if (c.zeros.size() > max_zeros) return std::nullopt;

  // C(s) = k prod(s - z) / (s^I (s - p)^F) = k Tf^F prod(s - z) / (s^I (Tf s + 1)^F), Tf = -1/p.
  PidParallel q;
  q.tf = filter ? -1.0 / others[0].real() : 0.0;
  std::vector<double> a = ascending_product(c.zeros);
  for (double& v : a) v *= c.gain * (filter ? q.tf : 1.0);
  a.resize(3, 0.0);
  // Kp + Ki/s + Kd s/(Tf s + 1) over s^I (Tf s + 1)^F has numerator coefficients (ascending)
  // I=1,F=1: Ki, Kp + Ki Tf, Kp Tf + Kd; I=1,F=0: Ki, Kp; I=0,F=1: Kp, Kp Tf + Kd; I=0,F=0: Kp.
  size_t next = 0;
  if (integrators == 1) q.ki = a[next++];
  q.kp = a[next++] - q.ki * q.tf;
  if (filter) q.kd = a[next] - q.kp * q.tf;

  // Every term shares the sign of the gain (zero allowed); compare at the roots' frequency scale.
  const double w = zpk_frequency_scale(c);
  const double size = std::max({std::abs(q.kp), std::abs(q.ki) / w, std::abs(q.kd) * w});
  auto snap = [&](double& v, double weight) {
    if (std::abs(v) * weight <= 1e-9 * size) v = 0.0;
  };
  snap(q.kp, 1.0);
  snap(q.ki, 1.0 / w);
  snap(q.kd, w);
  const double sign = c.gain > 0.0 ? 1.0 : -1.0;
  for (double v : {q.kp, q.ki, q.kd})
    if (v * sign < 0.0) return std::nullopt;
  if (filter && q.kd == 0.0) return std::nullopt;  // a filter pole without a derivative: a lag, not a PID

  PidForm f;
  f.parallel = q;
  f.shape = filter ? (integrators ? PidShape::PID : PidShape::PD) : (integrators ? PidShape::PI : PidShape::P);
  if (q.kp != 0.0) {
    PidStandard s;
    s.k = q.kp;
    s.ti = q.ki != 0.0 ? q.kp / q.ki : 0.0;
    s.td = q.kd / q.kp;
    s.n = q.tf > 0.0 ? s.td / q.tf : 0.0;
    f.standard = s;
  }
  return f;
}

Zpk zpk_from_pid(const PidParallel& p) {
  // Numerator and denominator in descending powers of s, over s (Tf s + 1) as needed.
  const bool integral = p.ki != 0.0;
  const bool derivative = p.kd != 0.0;
  Poly num, den;
  if (integral && derivative) {
    num = {p.kp * p.tf + p.kd, p.kp + p.ki * p.tf, p.ki};
    den = {p.tf, 1.0, 0.0};
  } else if (integral) {
    num = {p.kp, p.ki};
    den = {1.0, 0.0};
  } else if (derivative) {
    num = {p.kp * p.tf + p.kd, p.kp};
    den = {p.tf, 1.0};
  } else {
    num = {p.kp};
    den = {1.0};
  }
  if (derivative && p.tf == 0.0) {  // an ideal derivative: improper, kept as an exact zero pair
    num = integral ? Poly{p.kd, p.kp, p.ki} : Poly{p.kd, p.kp};
    den = integral ? Poly{1.0, 0.0} : Poly{1.0};
  }
  return zpk_from_polynomials(num, den);
}

}  // namespace pw
