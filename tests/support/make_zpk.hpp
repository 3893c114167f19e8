// Test helper: a Zpk from gain, zeros and poles in one expression.
#pragma once

#include "polewright/model/zpk.hpp"

namespace pw::test {

inline Zpk make(double k, Roots z, Roots p) {
  Zpk o;
  o.gain = k;
  o.zeros = std::move(z);
  o.poles = std::move(p);
  return o;
}

}  // namespace pw::test
