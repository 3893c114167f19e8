// Sampled traces of one compensator of a result, recomputed from the result's spec through the
// analysis library (as the HTML report does): step y(t), u(t) per plant, and L(jw) on the grid.
#pragma once

#include <complex>
#include <string>
#include <vector>

#include "polewright/requirements/result_parse.hpp"

namespace pwpy {

struct PlantTraces {
  std::string name;              // the plant's name ("" for an unnamed nominal plant)
  bool stable = false;
  double dt = 0.0;               // step sample interval (s)
  std::vector<double> y, u;      // samples at t = k dt, k = 0..n-1 (empty for an unstable loop)
  std::vector<std::complex<double>> loop;  // L(jw) on the shared grid, exact delay
};

struct Traces {
  int rank = 1;
  std::vector<double> frequency_rad_s;  // frequency_grid of the nominal loop
  std::vector<PlantTraces> plants;      // nominal first, then the variants
};

// Throws pw::SpecError naming "$.spec" when the result carries no spec (and none is given), or
// `rank` when it is out of range.
Traces compute_traces(const pw::ResultInput& result, int rank);

}  // namespace pwpy
