// Limits the plant puts on any compensator (common-practice bounds, see the field notes), and
// whether the requirements ask for more.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "polewright/requirements/region.hpp"
#include "polewright/requirements/spec.hpp"

namespace pw {

struct PlantLimit {
  std::string kind;        // "rhp_zero", "unstable_pole", "dead_time", "integrators", "actuator_range"
  std::string plant;       // which plant
  double at = 0.0;         // the zero, pole (rad/s) or dead time (s); the integrators needed; the steady-state u
  std::optional<double> max_crossover_rad_s;
  std::optional<double> min_crossover_rad_s;
  bool binding = false;    // the requirements ask for more than the limit allows
  std::string requirement; // the requirement key that conflicts, when binding
  std::string message;     // one readable sentence
};

// The crossover the requirements call for, from the region (dominant second-order model:
// wc = wn sqrt(sqrt(1 + 4 zeta^4) - 2 zeta^2)) and any crossover or bandwidth bounds.
double required_crossover(const Region& region, const RequirementSet& req);

std::vector<PlantLimit> plant_limits(const std::vector<Plant>& plants, const RequirementSet& req, const Region& region,
                                     const StageSettings& stages);

// The requirement that needs an integrator in the compensator itself: a bound on load_recovery_s
// or load_iae (a load step at the plant input is rejected only by a compensator integrator). With
// "integrator": "auto" the design then searches the structures with one only.
std::optional<MetricId> compensator_integrator_driver(const RequirementSet& req);

}  // namespace pw
