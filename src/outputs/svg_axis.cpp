#include "svg_axis.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "svg_text.hpp"

namespace pw {

double nice_step(double range, int target) {
  if (!(range > 0.0) || !std::isfinite(range)) return 1.0;
  const double raw = range / std::max(1, target);
  const double p = std::pow(10.0, std::floor(std::log10(raw)));
  const double f = raw / p;
  const double m = f < 1.5 ? 1.0 : (f < 3.5 ? 2.0 : (f < 7.5 ? 5.0 : 10.0));
  return m * p;
}

std::vector<double> nice_linear_ticks(double lo, double hi, int target) {
  std::vector<double> out;
  if (!(hi > lo) || !std::isfinite(lo) || !std::isfinite(hi)) return out;
  const double step = nice_step(hi - lo, target);
  const double tol = 1e-9 * (hi - lo);
  const double first = std::ceil((lo - tol) / step);
  for (double k = first;; k += 1.0) {
    double v = k * step;
    if (v > hi + tol) break;
    if (std::abs(v) < 1e-12 * step) v = 0.0;
    out.push_back(v);
    if (out.size() > 1000) break;
  }
  return out;
}

void nice_bounds(double& lo, double& hi, int target) {
  if (!std::isfinite(lo) || !std::isfinite(hi)) {
    lo = 0.0;
    hi = 1.0;
  }
  if (lo > hi) std::swap(lo, hi);
  if (hi - lo <= 1e-12 * std::max(std::abs(lo), std::abs(hi))) {
    const double d = lo == 0.0 ? 1.0 : 0.1 * std::abs(lo);
    lo -= d;
    hi += d;
  }
  const double step = nice_step(hi - lo, target);
  lo = std::floor(lo / step + 1e-9) * step;
  hi = std::ceil(hi / step - 1e-9) * step;
}

std::vector<Tick> log_ticks(double lo, double hi) {
  std::vector<Tick> out;
  if (!(lo > 0.0) || !(hi > lo) || !std::isfinite(hi)) return out;
  const double tol = 1e-9;
  const int e0 = static_cast<int>(std::floor(std::log10(lo) + tol));
  const int e1 = static_cast<int>(std::floor(std::log10(hi) + tol));
  int decades_inside = 0;
  for (int e = e0; e <= e1; ++e) {
    const double d = std::pow(10.0, e);
    if (d >= lo * (1 - tol) && d <= hi * (1 + tol)) ++decades_inside;
  }
  const bool label_minors = decades_inside < 2;
  const bool every_other = decades_inside > 8;
  for (int e = e0; e <= e1; ++e) {
    const double d = std::pow(10.0, e);
    for (int m = 1; m <= 9; ++m) {
      const double v = m * d;
      if (v < lo * (1 - tol) || v > hi * (1 + tol)) continue;
      Tick t;
      t.value = v;
      t.major = m == 1;
      if (m == 1) {
        if (!every_other || e % 2 == 0) t.label = format_decade(e);
      } else if (label_minors && (m == 2 || m == 5)) {
        t.label = format_tick(v, d);
      }
      out.push_back(t);
    }
  }
  return out;
}

std::vector<Tick> linear_ticks(double lo, double hi, int target) {
  std::vector<Tick> out;
  const double step = nice_step(hi - lo, target);
  for (double v : nice_linear_ticks(lo, hi, target)) out.push_back({v, format_tick(v, step), true});
  return out;
}

double Axis::map(double v) const {
  if (!std::isfinite(v)) return std::numeric_limits<double>::quiet_NaN();
  double a = lo, b = hi, x = v;
  if (log) {
    if (v <= 0.0 || lo <= 0.0 || hi <= 0.0) return std::numeric_limits<double>::quiet_NaN();
    a = std::log10(lo);
    b = std::log10(hi);
    x = std::log10(v);
  }
  if (b == a) return 0.5 * (p0 + p1);
  return p0 + (x - a) / (b - a) * (p1 - p0);
}

double Axis::unmap(double p) const {
  if (p1 == p0) return lo;
  const double f = (p - p0) / (p1 - p0);
  if (log) return std::pow(10.0, std::log10(lo) + f * (std::log10(hi) - std::log10(lo)));
  return lo + f * (hi - lo);
}

std::vector<Tick> Axis::ticks() const {
  if (fixed_ticks.empty()) return log ? log_ticks(lo, hi) : linear_ticks(lo, hi, target_ticks);
  std::vector<double> v;
  const double a = std::min(lo, hi), b = std::max(lo, hi), tol = 1e-9 * std::max(std::abs(a), std::abs(b));
  for (double x : fixed_ticks)
    if (std::isfinite(x) && x >= a - tol && x <= b + tol && (!log || x > 0.0)) v.push_back(x);
  std::sort(v.begin(), v.end());
  v.erase(std::unique(v.begin(), v.end()), v.end());
  const size_t every = std::max<size_t>(1, (v.size() + 2 * static_cast<size_t>(std::max(1, target_ticks)) - 1) /
                                               (2 * static_cast<size_t>(std::max(1, target_ticks))));
  std::vector<Tick> out;
  for (size_t i = 0; i < v.size(); ++i) {
    Tick t;
    t.value = v[i];
    t.major = i % every == 0;
    if (t.major) t.label = format_number(v[i], 4);
    out.push_back(t);
  }
  return out;
}

}  // namespace pw
