// A plant: a proper transfer function with an optional dead time.
#pragma once

#include <string>

#include "polewright/model/zpk.hpp"

namespace pw {

struct Plant {
  std::string name;     // label of the variant ("nominal" for the nominal plant)
  Zpk tf;               // rational part
  double delay_s = 0.0; // dead time T: the plant carries e^(-sT)
};

}  // namespace pw
