// Single-input single-output state-space models and their interconnection.
#pragma once

#include "polewright/model/types.hpp"
#include "polewright/model/zpk.hpp"

namespace pw {

struct StateSpace {
  Mat A;
  Vec B;
  RowVec C;
  double D = 0.0;
  int states() const { return static_cast<int>(A.rows()); }
};

// A realisation as a cascade of first- and second-order sections (complex pairs in real modal
// form), which is far better conditioned than a companion form of the expanded polynomials.
// Requires a proper transfer function.
StateSpace realize(const Zpk& z);

// Series connection: the output of `first` drives `second`.
StateSpace series(const StateSpace& first, const StateSpace& second);

// Transfer function value C (sI - A)^-1 B + D (for tests and checks; not for hot paths).
Complex ss_evaluate(const StateSpace& sys, Complex s);

}  // namespace pw
