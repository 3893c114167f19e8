// Steady-state error from the error constants (final-value theorem), never from a simulation.
#pragma once

#include <optional>

#include "polewright/model/zpk.hpp"

namespace pw {

enum class TestSignal { Step = 0, Ramp = 1, Parabola = 2 };

struct SteadyState {
  int loop_type = 0;             // integrators in L
  double error_constant = 0.0;   // Kp, Kv or Ka for the chosen signal (the one that applies at this type)
  std::optional<double> error;   // unit-input error; nullopt when unbounded
};

// Assumes the closed loop is stable (the caller checks). `loop` is the rational part of L; a dead
// time does not change the error constants.
SteadyState steady_state_error(const Zpk& loop, TestSignal signal);

}  // namespace pw
