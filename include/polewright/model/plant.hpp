// A plant: a proper transfer function with an optional dead time, or a measured frequency response
// with a rational model fitted to it.
#pragma once

#include <memory>
#include <string>

#include "polewright/model/zpk.hpp"

namespace pw {

struct MeasuredPlant;  // polewright/model/measured_plant.hpp

struct Plant {
  std::string name;     // label of the variant ("nominal" for the nominal plant)
  Zpk tf;               // rational part (for a measured plant: the fitted model)
  double delay_s = 0.0; // dead time T: the plant carries e^(-sT) (for a measured plant: the fit's)
  // Set for a plant known by a measured frequency response: the frequency-domain figures are then
  // taken from the data, and `tf` / `delay_s` (the fit) serve the poles, the locus and the
  // time-domain figures. Shared: copies of a spec do not copy the data.
  std::shared_ptr<const MeasuredPlant> measured;
};

}  // namespace pw
