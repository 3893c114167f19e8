// Plot axes: linear axes with "nice" ticks (steps of 1, 2 or 5 times a power of ten) and
// logarithmic axes with decade ticks and unlabelled minor ticks at 2..9 times each decade.
#pragma once

#include <string>
#include <vector>

namespace pw {

struct Tick {
  double value = 0.0;
  std::string label;  // empty for a minor tick
  bool major = true;
};

// The nice step for about `target` intervals over `range`: 1, 2 or 5 times a power of ten.
double nice_step(double range, int target);

// Multiples of nice_step(hi - lo, target) inside [lo, hi] (with a relative tolerance of 1e-9).
std::vector<double> nice_linear_ticks(double lo, double hi, int target);

// [lo, hi] widened outward to multiples of the nice step; a zero-width range becomes +-1 around it
// (or +-10 % of it).
void nice_bounds(double& lo, double& hi, int target);

// Ticks of a logarithmic axis over [lo, hi] (lo > 0): every power of ten inside is a labelled
// major tick, 2..9 times each decade an unlabelled minor tick. When fewer than two decades are
// inside, the minors 2 and 5 are labelled too. Over more than 8 decades only every other decade
// is labelled.
std::vector<Tick> log_ticks(double lo, double hi);

// Linear ticks with labels (format_tick, one decimal count for the axis).
std::vector<Tick> linear_ticks(double lo, double hi, int target);

// A data range mapped to a pixel interval. Pixels may run backwards (y axes: p0 > p1).
struct Axis {
  double lo = 0.0, hi = 1.0;  // data range
  bool log = false;
  double p0 = 0.0, p1 = 1.0;  // pixels of lo and hi
  int target_ticks = 6;
  std::string label;          // quantity and unit, e.g. "time t (s)"
  // When set: the ticks are exactly these values (inside [lo, hi]), labelled with format_number
  // (4 digits); with more than `target_ticks` * 2 values only every k-th is labelled.
  std::vector<double> fixed_ticks;

  // Pixel of data value v; NaN for a non-finite v or (log axes) v <= 0.
  double map(double v) const;
  // Data value of pixel p.
  double unmap(double p) const;
  std::vector<Tick> ticks() const;
};

}  // namespace pw
