#include <catch2/catch.hpp>

#include "polewright/analysis/steady_state.hpp"

using namespace pw;

TEST_CASE("error constants by loop type (final-value theorem)", "[analysis][steady_state]") {
  Zpk type0;  // 10/((s+1)(s+2)(s+5)): Kp = 1, step error 1/(1 + Kp) = 0.5
  type0.gain = 10;
  type0.poles = {Complex(-1, 0), Complex(-2, 0), Complex(-5, 0)};
  CHECK(steady_state_error(type0, TestSignal::Step).error.value() == Approx(0.5));
  CHECK_FALSE(steady_state_error(type0, TestSignal::Ramp).error);  // unbounded

  Zpk type1;  // 36 (s + 0.5) / (s (s+3)(s+12)(s+0.1)): Kv = 36*0.5/(3*12*0.1) = 5, ramp error 0.2
  type1.gain = 36;
  type1.zeros = {Complex(-0.5, 0)};
  type1.poles = {Complex(0, 0), Complex(-3, 0), Complex(-12, 0), Complex(-0.1, 0)};
  const SteadyState s1 = steady_state_error(type1, TestSignal::Ramp);
  CHECK(s1.loop_type == 1);
  CHECK(s1.error_constant == Approx(5.0));
  CHECK(s1.error.value() == Approx(0.2));
  CHECK(steady_state_error(type1, TestSignal::Step).error.value() == 0.0);
  CHECK_FALSE(steady_state_error(type1, TestSignal::Parabola).error);

  Zpk type2;  // 30 (s + 1) / (s^2 (s + 10)): Ka = 3, parabola error 1/3
  type2.gain = 30;
  type2.zeros = {Complex(-1, 0)};
  type2.poles = {Complex(0, 0), Complex(0, 0), Complex(-10, 0)};
  CHECK(steady_state_error(type2, TestSignal::Parabola).error.value() == Approx(1.0 / 3.0));
}
