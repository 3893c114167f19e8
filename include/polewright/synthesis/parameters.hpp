// The parameter space of one structure: every stage parametrised so that it stays physical.
//
// x[0] = log10 |k| (the compensator gain at DC, stages normalised to unit DC gain), then per stage:
//   integrator  log10 wi                    -> (s + wi) / s
//   lead        log10 a, t in [0, 1]        -> zero z = lo (hi / (lo a))^t, pole p = a z
//   lag         log10 r, t in [0, 1]        -> pole p = lo (hi / (lo r))^t, zero z = r p
//   notch       log10 wn, log10 d, log10 zp -> (s^2 + 2 d zp wn s + wn^2) / (s^2 + 2 zp wn s + wn^2)
// with lo, hi the frequency range: every corner stays inside it, every stage is biproper, so the
// compensator is always proper.
#pragma once

#include <string>
#include <utility>
#include <vector>

#include "polewright/model/plant.hpp"
#include "polewright/requirements/region.hpp"
#include "polewright/synthesis/structure.hpp"

namespace pw {

struct StageLimits {
  double ratio_min = 1.2;    // lead a and lag r
  double ratio_max = kStageRatioMax;
  double depth_min = kNotchDepthMin;  // notch zeta_zero / zeta_pole
  double depth_max = 0.7;
  double width_min = kNotchWidthMin;  // notch zeta_pole
  double width_max = 1.0;    // critically damped at most: the poles stay at the centre
};

struct ParamSpace {
  Structure structure;
  std::vector<StageKind> stages;
  std::vector<double> lower, upper;
  std::vector<std::string> names;
  double freq_lo = 0.0, freq_hi = 0.0;  // rad/s
  double gain_sign = 1.0;
  StageLimits limits;
  // stages.pid: the integrator's corner must stay below the lead's pole (the derivative filter),
  // else the terms of the PID reading change sign (synthesis/problem.hpp scores the excess).
  bool pid_shape = false;
  int dim() const { return static_cast<int>(lower.size()); }
};

// How far a point of a pid_shape space is from a PID with its filter: ln(wi / p_lead) when the
// integrator's corner wi lies above the lead's pole, else 0 (also 0 for any other space).
double pid_shape_violation(const ParamSpace& ps, const Zpk& c);

// Gain bounds are [gain_log10_lo, gain_log10_hi]; stage bounds come from the range and limits.
ParamSpace make_param_space(const Structure& s, std::pair<double, double> range, double gain_log10_lo,
                            double gain_log10_hi, double gain_sign, const StageLimits& limits = {});

// The compensator for a point (clamped into the bounds).
Zpk params_to_zpk(const ParamSpace& ps, const std::vector<double>& x);

// Inverse maps used by the seeds: stage parameters from corner frequencies.
double lead_t(const ParamSpace& ps, double zero, double ratio);
double lag_t(const ParamSpace& ps, double pole, double ratio);

// Frequency range for the stage corners when the spec gives none: two decades around the plant's
// roots, its dead time and the region's frequencies (1/30 of the lowest, 30 times the highest).
std::pair<double, double> default_frequency_range(const std::vector<Plant>& plants, const Region& region);

// The sign of the compensator gain that gives negative feedback: the sign of the plant's
// low-frequency gain, flipped once per open-loop pole on the positive real axis (common practice:
// a stabilising controller of a plant with an odd number of such poles has the opposite sign).
double feedback_sign(const Plant& plant);

}  // namespace pw
