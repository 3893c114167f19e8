// Starting points: the published constructions, then low-discrepancy points.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "polewright/requirements/requirement_set.hpp"
#include "polewright/synthesis/parameters.hpp"

namespace pw {

struct Seed {
  std::vector<double> x;
  std::string origin;  // "root-locus lead", "bisector lead", "halton 12", ...
};

// The dominant-pole target at the corner of the region: damping and natural frequency just inside
// the region's bounds (with a 5 % allowance), or from the plant's scale when the region is open.
Complex target_pole(const Region& region, const Plant& plant, std::pair<double, double> range);

// The crossover a frequency-domain requirement asks for: the geometric mean of a crossover
// interval, 1.5 times a lower bound, 0.6 times an upper bound; else the same from a bandwidth
// bound divided by 1.4 (common practice). Used as the target's natural frequency when the region
// sets no speed.
std::optional<double> crossover_target(const RequirementSet& req);

// Seeds from the root-locus construction: the target pole s* at the corner of the region, the angle
// deficit of the loop there split over the lead stages (zero below s*, or on the bisector), the lag
// ratio from the required error constant with its zero a decade below crossover, a notch centred on
// each lightly damped plant pole pair, a PI zero a decade below crossover, and the gain from the
// magnitude condition |C G (s*)| = 1.
std::vector<Seed> published_seeds(const ParamSpace& ps, const Plant& nominal, const Region& region,
                                  const RequirementSet& req);

// Point i of the Halton sequence in [0, 1)^dim (prime bases), shifted modulo 1 by `shift`
// (a Cranley-Patterson rotation that the search draws from its seed).
std::vector<double> halton_point(long long index, int dim, const std::vector<double>& shift);

// A unit-cube point mapped into the bounds of ps.
std::vector<double> from_unit(const ParamSpace& ps, const std::vector<double>& u);

}  // namespace pw
