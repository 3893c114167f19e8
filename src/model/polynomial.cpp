#include "polewright/model/polynomial.hpp"

#include <algorithm>
#include <cmath>
#include <string>

#include "polewright/model/eigen.hpp"
#include "polewright/model/root_accuracy.hpp"

namespace pw {

Poly poly_trim(const Poly& p) {
  size_t first = 0;
  while (first < p.size() && p[first] == 0.0) ++first;
  return Poly(p.begin() + static_cast<long>(first), p.end());
}

int poly_degree(const Poly& p) { return static_cast<int>(poly_trim(p).size()) - 1; }

Poly poly_multiply(const Poly& a, const Poly& b) {
  if (a.empty() || b.empty()) return {};
  Poly out(a.size() + b.size() - 1, 0.0);
  for (size_t i = 0; i < a.size(); ++i)
    for (size_t j = 0; j < b.size(); ++j) out[i + j] += a[i] * b[j];
  return out;
}

Poly poly_from_roots(const Roots& roots) {
  std::vector<Complex> c{Complex(1.0, 0.0)};
  for (const Complex& r : roots) {
    std::vector<Complex> next(c.size() + 1, Complex(0.0, 0.0));
    for (size_t i = 0; i < c.size(); ++i) {
      next[i] += c[i];
      next[i + 1] -= c[i] * r;
    }
    c.swap(next);
  }
  Poly out(c.size());
  for (size_t i = 0; i < c.size(); ++i) out[i] = c[i].real();
  return out;
}

Complex poly_evaluate(const Poly& p, Complex s) {
  Complex acc(0.0, 0.0);
  for (double c : p) acc = acc * s + c;
  return acc;
}

namespace {

Complex poly_derivative_at(const Poly& p, Complex s) {
  Complex acc(0.0, 0.0);
  const int n = static_cast<int>(p.size()) - 1;
  for (int i = 0; i < n; ++i) acc = acc * s + p[static_cast<size_t>(i)] * static_cast<double>(n - i);
  return acc;
}

// Newton polish: keep a step only when it lowers |p(s)|.
Complex polish_root(const Poly& p, Complex s) {
  Complex best = s;
  double best_res = std::abs(poly_evaluate(p, s));
  for (int it = 0; it < 4 && best_res > 0.0; ++it) {
    const Complex d = poly_derivative_at(p, best);
    if (std::abs(d) == 0.0) break;
    const Complex cand = best - poly_evaluate(p, best) / d;
    const double res = std::abs(poly_evaluate(p, cand));
    if (!(res < best_res)) break;
    best = cand;
    best_res = res;
  }
  return best;
}

}  // namespace

Roots make_conjugate_symmetric(const Roots& roots, double rel_tol) {
  Roots reals;
  Roots uppers;
  std::vector<bool> used(roots.size(), false);
  for (size_t i = 0; i < roots.size(); ++i) {
    if (used[i]) continue;
    const Complex r = roots[i];
    const double scale = std::max(std::abs(r), 1e-300);
    if (std::abs(r.imag()) <= rel_tol * scale) {
      used[i] = true;
      reals.push_back(Complex(r.real(), 0.0));
      continue;
    }
    // Find the closest partner to conj(r).
    size_t best = roots.size();
    double best_d = 0.0;
    for (size_t j = 0; j < roots.size(); ++j) {
      if (j == i || used[j]) continue;
      const double d = std::abs(roots[j] - std::conj(r));
      if (best == roots.size() || d < best_d) {
        best = j;
        best_d = d;
      }
    }
    used[i] = true;
    if (best == roots.size() || best_d > 1e-6 * scale + 1e-300) {
      // No partner: the imaginary part must be a rounding artefact of a real root.
      reals.push_back(Complex(r.real(), 0.0));
      continue;
    }
    used[best] = true;
    const Complex mean = 0.5 * (r + std::conj(roots[best]));
    uppers.push_back(Complex(mean.real(), std::abs(mean.imag())));
  }
  std::sort(reals.begin(), reals.end(), [](Complex a, Complex b) { return a.real() < b.real(); });
  std::sort(uppers.begin(), uppers.end(), [](Complex a, Complex b) {
    return a.real() != b.real() ? a.real() < b.real() : a.imag() < b.imag();
  });
  Roots out = reals;
  for (const Complex& u : uppers) {
    out.push_back(u);
    out.push_back(std::conj(u));
  }
  return out;
}

Roots poly_roots(const Poly& p_in) {
  Poly p = poly_trim(p_in);
  Roots out;
  while (p.size() > 1 && p.back() == 0.0) {
    out.push_back(Complex(0.0, 0.0));
    p.pop_back();
  }
  const int n = static_cast<int>(p.size()) - 1;
  if (n <= 0) return out;
  for (double c : p)
    if (!std::isfinite(c)) throw NumericalError("polynomial roots: a coefficient is not finite");
  if (n == 1) {
    if (!std::isfinite(p[1] / p[0]))
      throw NumericalError("polynomial roots: the coefficients span more than the range of a double (coefficient 1 over "
                           "the leading one overflows); rescale the polynomial");
    out.push_back(Complex(-p[1] / p[0], 0.0));
    return make_conjugate_symmetric(out);
  }
  // Companion matrix of the monic polynomial.
  Mat comp = Mat::Zero(n, n);
  for (int j = 0; j < n; ++j) {
    comp(0, j) = -p[static_cast<size_t>(j + 1)] / p[0];
    if (!std::isfinite(comp(0, j)))
      throw NumericalError("polynomial roots: the coefficients span more than the range of a double (coefficient " +
                           std::to_string(j + 1) + " over the leading one overflows); rescale the polynomial");
  }
  for (int i = 1; i < n; ++i) comp(i, i - 1) = 1.0;
  const CVec ev = eigenvalues_balanced(comp);
  Roots found;
  for (int i = 0; i < n; ++i) {
    if (!std::isfinite(ev(i).real()) || !std::isfinite(ev(i).imag()))
      throw NumericalError("polynomial roots: the eigenvalue iteration did not converge");
    found.push_back(ev(i));
  }
  // Polish only isolated roots: the eigenvalues of a cluster (a repeated root perturbed by
  // rounding) are right as a set, and polishing them one by one moves the cluster.
  const std::vector<bool> isolated = isolated_roots(p, found);
  for (int i = 0; i < n; ++i)
    if (isolated[static_cast<size_t>(i)]) found[static_cast<size_t>(i)] = polish_root(p, found[static_cast<size_t>(i)]);
  for (const Complex& r : make_conjugate_symmetric(found)) out.push_back(r);
  return make_conjugate_symmetric(out);
}

}  // namespace pw
