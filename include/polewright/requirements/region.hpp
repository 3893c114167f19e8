// The s-plane region the dominant closed-loop poles should lie in, from the requirements
// (second-order dominant-pole model: it guides, the simulated step and the margins decide).
#pragma once

#include <string>
#include <vector>

#include "polewright/requirements/requirement_set.hpp"
#include "polewright/model/types.hpp"
#include "polewright/analysis/closed_loop.hpp"

namespace pw {

struct Region {
  double min_damping = 0.0;     // zeta >= this
  double min_decay = 0.0;       // -Re p >= this (1/s)
  double min_frequency = 0.0;   // |p| >= this (rad/s)
  double max_frequency = 0.0;   // |p| <= this (rad/s); 0 = unbounded
  std::vector<std::string> derivations;  // one line per bound: which requirement and formula

  // Damping, decay and frequency bounds together.
  bool contains(Complex p) const;
  // Damping and decay bounds only.
  bool contains_shape(Complex p) const;
  bool bounded() const { return min_damping > 0.0 || min_decay > 0.0 || min_frequency > 0.0 || max_frequency > 0.0; }
};

// zeta from a fractional overshoot: -ln(OS) / sqrt(pi^2 + ln(OS)^2).
double damping_from_overshoot(double overshoot_fraction);

// Normalised closed-loop bandwidth of the standard second-order loop, wb / wn.
double bandwidth_ratio(double zeta);

Region region_from_requirements(const RequirementSet& req);

// The region test of a closed loop: every pole that matters meets the damping and decay bounds,
// and the dominant pole (the slowest-decaying pole that matters) also the frequency bounds. A
// fast pole that matters (say one pulled near a lead zero) is no bottleneck for speed, so the
// frequency bounds, which stand for speed and bandwidth of the dominant pair, are not put on it.
bool region_holds(const Region& region, const std::vector<PoleInfo>& poles);

}  // namespace pw
