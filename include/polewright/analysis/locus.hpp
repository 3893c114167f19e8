// Root locus of 1 + k L(s) = 0 as the loop-gain scale k runs from 0 to infinity (k = 1 is the
// nominal loop). The dead time enters through its Pade approximant, as in the closed-loop poles.
#pragma once

#include <optional>
#include <vector>

#include "polewright/analysis/closed_loop.hpp"

namespace pw {

struct LocusOptions {
  double gain_min = 1e-5;    // first traced scale factor after k = 0
  double gain_max = 1e5;     // last traced scale factor
  int max_points = 4000;     // cap on traced gain values
  double max_move = 0.08;    // largest pole movement per step, relative to its size
  bool IsValid(std::string* error) const;
};

struct LocusLandmark {
  Complex s;
  double gain = 0.0;  // scale factor k at the landmark
};

struct GainInterval {
  double lo = 0.0;
  std::optional<double> hi;  // nullopt: unbounded
};

struct Locus {
  std::vector<double> gains;                  // gains[0] = 0 (open-loop poles)
  std::vector<std::vector<Complex>> branches; // branches[b][j]: branch b at gains[j]
  std::vector<Complex> open_loop_poles;
  std::vector<Complex> open_loop_zeros;
  std::optional<double> asymptote_centroid;   // when poles outnumber zeros
  std::vector<double> asymptote_angles_deg;
  std::vector<LocusLandmark> breakaways;       // real-axis break-away and break-in points
  std::vector<LocusLandmark> axis_crossings;   // imaginary-axis crossings, s = j w (w >= 0)
  std::vector<GainInterval> stable_intervals;  // scale factors with a stable closed loop
};

Locus root_locus(const LoopParts& parts, const LocusOptions& options);

// Stable intervals of the gain scale only (cheaper than the whole locus).
std::vector<GainInterval> stable_gain_intervals(const LoopParts& parts);

}  // namespace pw
