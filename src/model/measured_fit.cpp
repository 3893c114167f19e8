#include "polewright/model/measured_fit.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <limits>

#include <Eigen/Dense>

#include "polewright/model/polynomial.hpp"

namespace pw {

bool FitOptions::IsValid(std::string* error) const {
  auto fail = [&](const char* m) {
    if (error) *error = m;
    return false;
  };
  if (max_poles < 1 || max_poles > 16) return fail("max_poles must be within 1..16");
  if (iterations < 1 || iterations > 200) return fail("iterations must be within 1..200");
  if (!(penalty >= 0.0) || !std::isfinite(penalty)) return fail("penalty must be >= 0");
  if (!(delay_s >= 0.0) || !std::isfinite(delay_s)) return fail("delay_s must be >= 0");
  return true;
}

namespace {

// Data prepared for one dead time: values with the delay removed, scaled frequencies s / w0 and
// base weights coherence / |G| (the error is relative, so every decade of magnitude counts).
struct Prepared {
  std::vector<Complex> g, s;
  std::vector<double> v;
  double w0 = 1.0;
};

Prepared prepare(const MeasuredResponse& d, double delay_s) {
  Prepared p;
  p.w0 = std::sqrt(d.w_min() * d.w_max());
  for (size_t k = 0; k < d.size(); ++k) {
    const double w = d.w_rad_s[k];
    p.g.push_back(std::polar(std::exp(d.log_mag[k]), d.phase_rad[k] + w * delay_s));
    p.s.push_back(Complex(0.0, w / p.w0));
    const double c = d.coherence.empty() ? 1.0 : std::max(d.coherence[k], 1e-3);
    p.v.push_back(c / std::exp(d.log_mag[k]));
  }
  return p;
}

// Powers s^0..s^n of every point.
std::vector<std::vector<Complex>> powers(const Prepared& p, int n) {
  std::vector<std::vector<Complex>> out(p.s.size(), std::vector<Complex>(n + 1));
  for (size_t k = 0; k < p.s.size(); ++k) {
    out[k][0] = 1.0;
    for (int i = 1; i <= n; ++i) out[k][i] = out[k][i - 1] * p.s[k];
  }
  return out;
}

Complex eval_ascending(const Eigen::VectorXd& c, const std::vector<Complex>& pw_k) {
  Complex v = 0.0;
  for (int i = 0; i < c.size(); ++i) v += c[i] * pw_k[i];
  return v;
}

// Columns scaled to unit norm, then the least-squares solution by column-pivoting QR (or the
// smallest right singular vector for the homogeneous problem).
Eigen::VectorXd solve_scaled(Eigen::MatrixXd A, const Eigen::VectorXd* b) {
  Eigen::VectorXd scale(A.cols());
  for (int j = 0; j < A.cols(); ++j) {
    const double n = A.col(j).norm();
    scale[j] = n > 0.0 ? 1.0 / n : 1.0;
    A.col(j) *= scale[j];
  }
  Eigen::VectorXd x;
  if (b) {
    x = A.colPivHouseholderQr().solve(*b);
  } else {
    Eigen::BDCSVD<Eigen::MatrixXd> svd(A, Eigen::ComputeThinV);
    x = svd.matrixV().col(A.cols() - 1);
  }
  return x.cwiseProduct(scale);
}

Poly descending(const Eigen::VectorXd& asc) {
  Poly p(asc.data(), asc.data() + asc.size());
  std::reverse(p.begin(), p.end());
  // Negligible leading coefficients (relative to the largest) drop the degree.
  double big = 0.0;
  for (double c : p) big = std::max(big, std::abs(c));
  size_t lead = 0;
  while (lead + 1 < p.size() && std::abs(p[lead]) <= 1e-11 * big) ++lead;
  return Poly(p.begin() + static_cast<long>(lead), p.end());
}

double fit_error(const Prepared& p, const std::vector<Complex>& model) {
  double e = 0.0;
  for (size_t k = 0; k < p.g.size(); ++k) {
    const double c = p.v[k] * std::abs(p.g[k]);  // the coherence weight
    e += c * c * std::norm(model[k] / p.g[k] - 1.0);
  }
  return e;
}

}  // namespace

RationalFit fit_rational_order(const MeasuredResponse& d, int n, int m, double delay_s, const FitOptions& opt) {
  if (n < 1 || m < 0 || m > n) throw std::invalid_argument("fit_rational_order: need 0 <= zeros <= poles, poles >= 1");
  if (d.size() < static_cast<size_t>(n + m + 2)) throw MeasuredDataError(d.source + ": too few points for the model order");
  const Prepared p = prepare(d, delay_s);
  const auto P = powers(p, n);
  const size_t K = p.g.size();
  const int cols = (m + 1) + (n + 1);
  // Sanathanan-Koerner: minimise |N(s) - G D(s)| v / |D_prev(s)|, D_prev from the previous step.
  std::vector<double> inv_dprev(K, 1.0);
  Eigen::VectorXd den = Eigen::VectorXd::Zero(n + 1);
  for (int it = 0; it < opt.iterations; ++it) {
    Eigen::MatrixXd A(2 * K, cols);
    for (size_t k = 0; k < K; ++k) {
      const double wk = p.v[k] * inv_dprev[k];
      for (int i = 0; i <= m; ++i) {
        const Complex e = wk * P[k][i];
        A(2 * k, i) = e.real();
        A(2 * k + 1, i) = e.imag();
      }
      for (int i = 0; i <= n; ++i) {
        const Complex e = -wk * p.g[k] * P[k][i];
        A(2 * k, m + 1 + i) = e.real();
        A(2 * k + 1, m + 1 + i) = e.imag();
      }
    }
    const Eigen::VectorXd x = solve_scaled(A, nullptr);
    Eigen::VectorXd next = x.tail(n + 1);
    if (next.norm() == 0.0 || !next.allFinite()) break;
    next /= next.cwiseAbs().maxCoeff();
    const double change = (next - den).norm() + 0.0;
    const double change_flip = (next + den).norm();
    den = next;
    for (size_t k = 0; k < K; ++k) {
      const double a = std::abs(eval_ascending(den, P[k]));
      inv_dprev[k] = a > 0.0 ? 1.0 / a : 1.0;
    }
    if (std::min(change, change_flip) < 1e-10) break;
  }

  RationalFit fit;
  fit.delay_s = delay_s;
  Roots poles_scaled = poly_roots(descending(den));
  for (Complex& r : poles_scaled) {
    if (opt.enforce_stable && r.real() > 0.0) {
      r = Complex(-r.real(), r.imag());
      ++fit.reflected_poles;
    }
  }
  poles_scaled = make_conjugate_symmetric(poles_scaled);
  const int n_final = static_cast<int>(poles_scaled.size());
  // The numerator for the final poles: minimise |N(s) / D(s) - G| v, linear in N.
  const Poly dpoly = poly_from_roots(poles_scaled);
  std::vector<Complex> dval(K);
  for (size_t k = 0; k < K; ++k) dval[k] = poly_evaluate(dpoly, p.s[k]);
  const int mm = std::min(m, n_final);
  Eigen::MatrixXd A(2 * K, mm + 1);
  Eigen::VectorXd b(2 * K);
  for (size_t k = 0; k < K; ++k) {
    for (int i = 0; i <= mm; ++i) {
      const Complex e = p.v[k] * P[k][i] / dval[k];
      A(2 * k, i) = e.real();
      A(2 * k + 1, i) = e.imag();
    }
    const Complex r = p.v[k] * p.g[k];
    b[2 * k] = r.real();
    b[2 * k + 1] = r.imag();
  }
  const Eigen::VectorXd num = solve_scaled(A, &b);
  const Poly npoly = descending(num);
  Roots zeros_scaled = npoly.size() > 1 ? poly_roots(npoly) : Roots{};
  const int deg_n = static_cast<int>(npoly.size()) - 1;
  fit.model.gain = npoly.empty() ? 0.0 : npoly.front() * std::pow(p.w0, n_final - deg_n);
  for (const Complex& z : zeros_scaled) fit.model.zeros.push_back(z * p.w0);
  for (const Complex& r : poles_scaled) fit.model.poles.push_back(r * p.w0);
  fit.model.zeros = make_conjugate_symmetric(fit.model.zeros);
  fit.model.poles = make_conjugate_symmetric(fit.model.poles);

  std::vector<Complex> model(K);
  for (size_t k = 0; k < K; ++k) model[k] = poly_evaluate(npoly, p.s[k]) / dval[k];
  const double e = fit_error(p, model);
  double wsum = 0.0;
  for (size_t k = 0; k < K; ++k) {
    const double c = p.v[k] * std::abs(p.g[k]);
    wsum += c * c;
  }
  fit.rms_relative_error = std::sqrt(e / std::max(wsum, 1e-300));
  const double M = 2.0 * static_cast<double>(K);
  const int params = n + m + 1 + (opt.estimate_delay ? 1 : 0);
  fit.criterion = M * std::log(std::max(e, 1e-300) / M) + opt.penalty * params * std::log(M);
  if (!std::isfinite(fit.criterion)) fit.criterion = std::numeric_limits<double>::max();
  fit.per_decade = fit_error_per_decade(d, fit.model, delay_s);
  if (fit.reflected_poles > 0)
    fit.notes.push_back(std::to_string(fit.reflected_poles) + " unstable fitted pole(s) reflected into the left half plane");
  return fit;
}

double delay_from_phase_slope(const MeasuredResponse& d) {
  const size_t n = d.size(), start = n - std::max<size_t>(3, n / 3);
  double sw = 0, sp = 0, sww = 0, swp = 0;
  const double cnt = static_cast<double>(n - start);
  for (size_t k = start; k < n; ++k) {
    sw += d.w_rad_s[k];
    sp += d.phase_rad[k];
    sww += d.w_rad_s[k] * d.w_rad_s[k];
    swp += d.w_rad_s[k] * d.phase_rad[k];
  }
  const double den = cnt * sww - sw * sw;
  if (!(den > 0.0)) return 0.0;
  const double slope = (cnt * swp - sw * sp) / den;
  return slope < 0.0 ? -slope : 0.0;
}

std::vector<DecadeFitError> fit_error_per_decade(const MeasuredResponse& d, const Zpk& model, double delay_s) {
  std::vector<DecadeFitError> out;
  for (size_t k = 0; k < d.size(); ++k) {
    const double w = d.w_rad_s[k];
    const double lo = std::pow(10.0, std::floor(std::log10(w) + 1e-12));
    const bool last_on_edge = k + 1 == d.size() && !out.empty() && std::abs(w / out.back().w_hi - 1.0) < 1e-9;
    if (!last_on_edge && (out.empty() || !(w < out.back().w_hi))) {
      DecadeFitError e;
      e.w_lo = lo;
      e.w_hi = lo * 10.0;
      out.push_back(e);
    }
    const Complex r = model.evaluate(Complex(0.0, w)) * std::polar(1.0, -w * delay_s) / d.point(k);
    DecadeFitError& e = out.back();
    ++e.points;
    const double db = 20.0 * std::log10(std::abs(r)), deg = std::arg(r) * 180.0 / M_PI;
    e.rms_magnitude_db += db * db;
    e.rms_phase_deg += deg * deg;
  }
  for (DecadeFitError& e : out) {
    e.rms_magnitude_db = std::sqrt(e.rms_magnitude_db / e.points);
    e.rms_phase_deg = std::sqrt(e.rms_phase_deg / e.points);
    if (!std::isfinite(e.rms_magnitude_db)) e.rms_magnitude_db = std::numeric_limits<double>::max();
    if (!std::isfinite(e.rms_phase_deg)) e.rms_phase_deg = 180.0;
  }
  return out;
}

RationalFit fit_rational(const MeasuredResponse& d, const FitOptions& opt) {
  std::string why;
  if (!opt.IsValid(&why)) throw std::invalid_argument("fit options: " + why);
  auto best_order = [&](double delay) {
    RationalFit best;
    bool have = false;
    for (int n = 1; n <= opt.max_poles; ++n)
      for (int m = 0; m <= n; ++m) {
        if (d.size() < static_cast<size_t>(n + m + 2)) continue;
        RationalFit f = fit_rational_order(d, n, m, delay, opt);
        if (!have || f.criterion < best.criterion) {
          best = std::move(f);
          have = true;
        }
      }
    if (!have) throw MeasuredDataError(d.source + ": too few points to fit a model");
    return best;
  };
  if (!opt.estimate_delay) return best_order(opt.delay_s);

  // Dead time: start from the phase slope and pick the order there. A model of that order can
  // mimic part of a dead time with all-pass pairs, so every order up to its parameter count gets
  // its own delay (a scan over [0, 2 T0] and a golden section around the best), and the lowest
  // criterion wins.
  const double t0 = delay_from_phase_slope(d);
  RationalFit first = best_order(t0);
  if (t0 <= 0.0) {
    first.notes.push_back("no dead time: the phase does not fall linearly at the top of the range");
    return first;
  }
  const int budget = first.model.order() + static_cast<int>(first.model.zeros.size());
  RationalFit out = first;
  const int scan = 16;
  const double step = 2.0 * t0 / scan;
  for (int n = 1; n <= opt.max_poles; ++n)
    for (int m = 0; m <= n && n + m <= budget; ++m) {
      if (d.size() < static_cast<size_t>(n + m + 2)) continue;
      auto crit = [&](double t) { return fit_rational_order(d, n, m, t, opt).criterion; };
      double best_t = 0.0, best_c = crit(0.0);
      for (int i = 1; i <= scan; ++i) {
        const double c = crit(step * i);
        if (c < best_c) { best_c = c; best_t = step * i; }
      }
      double a = std::max(0.0, best_t - step), b = best_t + step;
      const double g = 0.5 * (std::sqrt(5.0) - 1.0);
      double c1 = b - g * (b - a), c2 = a + g * (b - a), f1 = crit(c1), f2 = crit(c2);
      for (int it = 0; it < 30 && (b - a) > 1e-6 * t0; ++it) {
        if (f1 < f2) { b = c2; c2 = c1; f2 = f1; c1 = b - g * (b - a); f1 = crit(c1); }
        else { a = c1; c1 = c2; f1 = f2; c2 = a + g * (b - a); f2 = crit(c2); }
      }
      const double t = 0.5 * (a + b);
      RationalFit f = fit_rational_order(d, n, m, crit(t) <= best_c ? t : best_t, opt);
      if (f.criterion < out.criterion) out = std::move(f);
    }
  char buf[160];
  std::snprintf(buf, sizeof buf, "dead time %.4g s estimated (phase slope %.4g s, refined by the fit error)", out.delay_s, t0);
  out.notes.push_back(buf);
  return out;
}

}  // namespace pw
