#include <cmath>
#include <functional>

#include "polewright/requirements/evaluate.hpp"

namespace pw {

namespace {

bool inside(const LoopParts& parts, double k, const Region& region, double share) {
  const ClosedLoop cl = close_loop(parts.compensator, parts.plant, k);
  if (!cl.well_posed) return false;
  const PoleAnalysis pa = analyze_poles(cl, parts, k, share);
  if (!pa.stable) return false;
  return region_holds(region, pa.poles);
}

// Walks from 1 towards `limit` by `ratio` steps, then bisects the first change in log gain.
double edge(const std::function<bool(double)>& ok, double limit, double ratio, bool& at_limit) {
  const bool up = limit > 1.0;
  double good = 1.0;
  for (;;) {
    double next = up ? good * ratio : good / ratio;
    if (up ? next >= limit : next <= limit) next = limit;
    if (!ok(next)) {
      double a = std::log(good), b = std::log(next);
      for (int it = 0; it < 40; ++it) {
        const double m = 0.5 * (a + b);
        (ok(std::exp(m)) ? a : b) = m;
      }
      at_limit = false;
      return std::exp(a);
    }
    good = next;
    if (good == limit) {
      at_limit = true;
      return limit;
    }
  }
}

}  // namespace

GainToleranceResult gain_tolerance_screen(const LoopParts& parts, const Region& region, double share, double t) {
  GainToleranceResult g;
  if (!inside(parts, 1.0, region, share)) return g;
  auto side = [&](double far) {
    if (inside(parts, far, region, share)) return far;
    double a = 0.0, b = std::log(far);
    for (int it = 0; it < 8; ++it) {
      const double m = 0.5 * (a + b);
      (inside(parts, std::exp(m), region, share) ? a : b) = m;
    }
    return std::exp(a);
  };
  g.hi = side(1.0 + t);
  g.lo = side(std::max(kGainScanMin, 1.0 - t));
  g.tolerance_pct = 100.0 * std::min(*g.hi - 1.0, 1.0 - *g.lo);
  return g;
}

GainToleranceResult gain_tolerance_scan(const std::function<bool(double)>& ok, double ratio) {
  GainToleranceResult g;
  if (!ok(1.0)) return g;
  g.hi = edge(ok, kGainScanMax, ratio, g.hi_at_limit);
  g.lo = edge(ok, kGainScanMin, ratio, g.lo_at_limit);
  g.tolerance_pct = 100.0 * std::min(*g.hi - 1.0, 1.0 - *g.lo);
  return g;
}

GainToleranceResult gain_tolerance(const LoopParts& parts, const Region& region, double share, double ratio) {
  return gain_tolerance_scan([&](double k) { return inside(parts, k, region, share); }, ratio);
}

}  // namespace pw
