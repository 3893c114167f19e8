// Test helpers: a Zpk from gain, zeros and poles in one expression; a nominal plant of a Zpk.
#pragma once

#include "polewright/model/plant.hpp"
#include "polewright/model/zpk.hpp"

namespace pw::test {

inline Zpk make(double k, Roots z, Roots p) {
  Zpk o;
  o.gain = k;
  o.zeros = std::move(z);
  o.poles = std::move(p);
  return o;
}

inline Plant plant_of(const Zpk& z, double delay = 0.0) {
  Plant p;
  p.name = "nominal";
  p.tf = z;
  p.delay_s = delay;
  return p;
}

}  // namespace pw::test
