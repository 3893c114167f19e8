#include "polewright/model/root_accuracy.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

namespace pw {

namespace {

constexpr double kEps = std::numeric_limits<double>::epsilon();

// First-order absolute error bound of root r for relative coefficient errors of 4 n eps.
double first_order_bound(const Poly& p, Complex r) {
  const int n = static_cast<int>(p.size()) - 1;
  double mag = 0.0;
  Complex d(0.0, 0.0);
  const double ar = std::abs(r);
  for (int i = 0; i <= n; ++i) {
    mag = mag * ar + std::abs(p[static_cast<size_t>(i)]);
    if (i < n) d = d * r + p[static_cast<size_t>(i)] * static_cast<double>(n - i);
  }
  const double dd = std::abs(d);
  return dd > 0.0 ? 4.0 * n * kEps * mag / dd : std::numeric_limits<double>::infinity();
}

// The polynomial without its trailing zeros, and the roots without the exact zeros split off.
void strip_origin(const Poly& p_in, const Roots& roots_in, Poly& p, Roots& roots) {
  p = poly_trim(p_in);
  int zeros = 0;
  while (p.size() > 1 && p.back() == 0.0) {
    p.pop_back();
    ++zeros;
  }
  for (const Complex& r : roots_in) {
    if (zeros > 0 && r == Complex(0.0, 0.0)) {
      --zeros;
      continue;
    }
    roots.push_back(r);
  }
}

}  // namespace

std::vector<bool> isolated_roots(const Poly& p, const Roots& roots) {
  std::vector<bool> out(roots.size(), true);
  for (size_t i = 0; i < roots.size(); ++i) {
    double sep = std::numeric_limits<double>::infinity();
    for (size_t j = 0; j < roots.size(); ++j)
      if (j != i) sep = std::min(sep, std::abs(roots[i] - roots[j]));
    out[i] = first_order_bound(p, roots[i]) < 0.01 * sep;
  }
  return out;
}

RootAccuracy root_accuracy(const Poly& p_in, const Roots& roots_in) {
  Poly p;
  Roots roots;
  strip_origin(p_in, roots_in, p, roots);
  RootAccuracy acc;
  if (roots.empty() || p.size() < 2) return acc;
  const std::vector<bool> iso = isolated_roots(p, roots);
  std::vector<int> cluster(roots.size(), -1);
  int clusters = 0;
  for (size_t i = 0; i < roots.size(); ++i) {
    if (iso[i]) {
      const double rel = first_order_bound(p, roots[i]) / std::abs(roots[i]);
      if (rel > acc.worst_relative) acc = {rel, 1, roots[i]};
      continue;
    }
    if (cluster[i] >= 0) continue;
    // Link the non-isolated roots within 10 % of one another into one cluster.
    std::vector<size_t> members{i};
    cluster[i] = clusters;
    for (size_t k = 0; k < members.size(); ++k)
      for (size_t j = 0; j < roots.size(); ++j)
        if (!iso[j] && cluster[j] < 0 &&
            std::abs(roots[j] - roots[members[k]]) <= 0.1 * std::abs(roots[members[k]])) {
          cluster[j] = clusters;
          members.push_back(j);
        }
    ++clusters;
    Complex c(0.0, 0.0);
    for (size_t m : members) c += roots[m];
    c /= static_cast<double>(members.size());
    double spread = 0.0;
    for (size_t m : members) spread = std::max(spread, std::abs(roots[m] - c));
    const double floor = std::pow(kEps, 1.0 / static_cast<double>(members.size()));
    const double rel = std::max(spread / std::abs(c), floor);
    if (rel > acc.worst_relative) acc = {rel, static_cast<int>(members.size()), c};
  }
  return acc;
}

}  // namespace pw
