#include "polewright/analysis/steady_state.hpp"

#include <cmath>

namespace pw {

SteadyState steady_state_error(const Zpk& loop, TestSignal signal) {
  SteadyState s;
  s.loop_type = zpk_integrators(loop);
  const int q = static_cast<int>(signal);  // integrators the input needs to be followed exactly
  s.error_constant = zpk_low_frequency_gain(loop);
  if (s.loop_type > q) {
    s.error = 0.0;
  } else if (s.loop_type == q) {
    const double K = s.error_constant;
    s.error = (q == 0) ? std::abs(1.0 / (1.0 + K)) : std::abs(1.0 / K);
    if (!std::isfinite(*s.error)) s.error.reset();
  }
  return s;
}

}  // namespace pw
