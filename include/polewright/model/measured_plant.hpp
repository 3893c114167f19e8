// A plant known by a measured frequency response, with the rational model fitted to it.
#pragma once

#include <string>

#include "polewright/model/measured.hpp"
#include "polewright/model/measured_fit.hpp"

namespace pw {

struct MeasuredPlant {
  MeasuredResponse data;  // the plant's response (a measured loop already divided by the compensator)
  RationalFit fit;        // the model of the poles, the locus and the time-domain figures
  std::string file;       // the data file as the spec names it ("" for data given inline)
  bool from_loop = false; // the file held the open loop with the spec's `current` compensator in it
};

}  // namespace pw
