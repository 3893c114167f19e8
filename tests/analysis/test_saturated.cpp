// The loop with a limited actuator against closed forms worked by hand (first-order plants, where
// each mode's response is an exponential). tests/python/test_saturated.py compares the same
// simulation with scipy's solve_ivp of the nonlinear loop.
#include <catch2/catch.hpp>
#include <cmath>
#include <stdexcept>

#include "polewright/analysis/saturated.hpp"

using namespace pw;

namespace {

// G = b / (s + a) as a state space: x' = -a x + u, y = b x.
StateSpace first_order(double b, double a) {
  StateSpace g;
  g.A = Mat::Constant(1, 1, -a);
  g.B = Vec::Constant(1, 1.0);
  g.C = RowVec::Constant(1, b);
  return g;
}

Zpk pi(double kp, double ki) {  // Kp + Ki / s = Kp (s + Ki / Kp) / s
  Zpk c;
  c.gain = kp;
  c.zeros = {Complex(-ki / kp, 0.0)};
  c.poles = {Complex(0.0, 0.0)};
  return c;
}

Zpk proportional(double k) {
  Zpk c;
  c.gain = k;
  return c;
}

}  // namespace

TEST_CASE("simulate_saturated: limits never reached give the linear step y = K/(1+K) (1 - e^-(1+K)t)") {
  // G = 1 / (s + 1), C = 3: T = 3 / (s + 4) (worked by hand); u = 3 (1 - y) stays within +-10.
  ActuatorLimits lim;
  lim.minimum = -10.0;
  lim.maximum = 10.0;
  SaturatedOptions o;
  o.horizon_s = 2.0;
  o.samples = 201;
  const SaturatedResponse r = simulate_saturated(proportional(3.0), first_order(1.0, 1.0), lim, {}, o);
  REQUIRE(r.y.size() == 201);
  CHECK(r.switch_times_s.empty());
  CHECK(r.limited_time_s == 0.0);
  for (size_t k = 0; k < r.y.size(); ++k) {
    const double t = static_cast<double>(k) * r.dt;
    CHECK(r.y[k] == Approx(0.75 * (1.0 - std::exp(-4.0 * t))).margin(1e-12));
    CHECK(r.u[k] == Approx(3.0 * (1.0 - r.y[k])).margin(1e-12));
  }
}

TEST_CASE("simulate_saturated: a PI with conditional integration leaves the limit when Kp e = umax") {
  // G = 2.5 / (0.8 s + 1) = 3.125 / (s + 1.25), C = 1.6 + 3.2 / s, u <= 1, r = 1.5 (worked by
  // hand): v(0+) = 2.4, so u = 1 and y = 2.5 (1 - e^(-t / 0.8)) with the integrator frozen (e > 0),
  // until 1.6 (1.5 - y) = 1: t1 = -0.8 ln(1 - (1.5 - 1 / 1.6) / 2.5).
  ActuatorLimits lim;
  lim.minimum = 0.0;
  lim.maximum = 1.0;
  lim.anti_windup = AntiWindup::Conditional;
  SaturatedInputs in;
  in.reference = 1.5;
  SaturatedOptions o;
  o.horizon_s = 6.0;
  o.samples = 601;
  const SaturatedResponse r = simulate_saturated(pi(1.6, 3.2), first_order(3.125, 1.25), lim, in, o);
  const double t1 = -0.8 * std::log(1.0 - (1.5 - 1.0 / 1.6) / 2.5);
  REQUIRE(!r.switch_times_s.empty());
  CHECK(r.switch_times_s.front() == Approx(t1).margin(1e-11));
  CHECK(r.limited_time_s == Approx(t1).margin(1e-11));
  for (size_t k = 0; k < r.y.size(); ++k) {
    const double t = static_cast<double>(k) * r.dt;
    if (t >= t1) break;
    CHECK(r.u[k] == 1.0);
    CHECK(r.y[k] == Approx(2.5 * (1.0 - std::exp(-t / 0.8))).margin(1e-12));
  }
  // Afterwards the loop is linear and settles at r with u = r / 2.5 = 0.6 within the limits.
  CHECK(r.y.back() == Approx(1.5).margin(1e-6));
  CHECK(r.u.back() == Approx(0.6).margin(1e-6));
}

TEST_CASE("simulate_saturated: a rate-limited actuator ramps, and y follows the lag's ramp response") {
  // G = 1 / (s + 1), C = 100, |du/dt| <= 1, |u| <= 10: the demand 100 (1 - y) runs far ahead of u,
  // so u(t) = t and y(t) = t - 1 + e^-t (the ramp response of the lag, by hand) while
  // 100 (1 - y) > t, that is for t below about 1.98.
  ActuatorLimits lim;
  lim.minimum = -10.0;
  lim.maximum = 10.0;
  lim.rate_limit = 1.0;
  SaturatedOptions o;
  o.horizon_s = 1.5;
  o.samples = 151;
  const SaturatedResponse r = simulate_saturated(proportional(100.0), first_order(1.0, 1.0), lim, {}, o);
  CHECK(r.switch_times_s.empty());  // ramping from t = 0+ throughout
  for (size_t k = 0; k < r.y.size(); ++k) {
    const double t = static_cast<double>(k) * r.dt;
    CHECK(r.u[k] == Approx(t).margin(1e-12));
    CHECK(r.y[k] == Approx(t - 1.0 + std::exp(-t)).margin(1e-12));
  }
}

TEST_CASE("simulate_saturated: a lower limit holds a negative demand and the loop settles below the reference") {
  // G = 1 / (s + 1), C = 3, reference -2 with u >= -1: v(0+) = -6, u = -1 for good since the
  // demand 3 (-2 - y) stays below -1 while y > -5/3; y = -(1 - e^-t) -> -1 (by hand).
  ActuatorLimits lim;
  lim.minimum = -1.0;
  lim.maximum = 1.0;
  SaturatedInputs in;
  in.reference = -2.0;
  SaturatedOptions o;
  o.horizon_s = 3.0;
  o.samples = 31;
  const SaturatedResponse r = simulate_saturated(proportional(3.0), first_order(1.0, 1.0), lim, in, o);
  CHECK(r.switch_times_s.empty());
  CHECK(r.limited_time_s == Approx(3.0).margin(1e-12));
  for (size_t k = 0; k < r.y.size(); ++k) {
    const double t = static_cast<double>(k) * r.dt;
    CHECK(r.u[k] == -1.0);
    CHECK(r.y[k] == Approx(-(1.0 - std::exp(-t))).margin(1e-12));
  }
}

TEST_CASE("simulate_saturated: refused input says why") {
  SaturatedOptions o;
  ActuatorLimits lim;
  std::string why;
  lim.minimum = 1.0;
  lim.maximum = 0.0;
  CHECK_FALSE(lim.IsValid(&why));
  CHECK(why == "the actuator minimum must be below its maximum");
  lim.minimum = -1.0;
  lim.maximum = 1.0;
  lim.rate_limit = 0.0;
  CHECK_FALSE(lim.IsValid(&why));
  lim.rate_limit.reset();
  lim.anti_windup = AntiWindup::BackCalculation;
  CHECK_FALSE(lim.IsValid(&why));
  CHECK(why == "back-calculation needs a positive finite tracking time");
  lim.tracking_time_s = 0.1;
  CHECK(lim.IsValid(&why));
  // No integrator to wind up: anti-windup is refused, the plain simulation is not.
  CHECK_THROWS_WITH(simulate_saturated(proportional(2.0), first_order(1.0, 1.0), lim, {}, o),
                    Catch::Contains("exactly one integrator (it has 0)"));
  lim.anti_windup = AntiWindup::None;
  CHECK_NOTHROW(simulate_saturated(proportional(2.0), first_order(1.0, 1.0), lim, {}, o));
  // Feed-through in both: the loop through the limits would be algebraic.
  StateSpace g = first_order(1.0, 1.0);
  g.D = 0.5;
  CHECK_THROWS_WITH(simulate_saturated(proportional(2.0), g, lim, {}, o), Catch::Contains("algebraic"));
  o.samples = 2;
  CHECK_THROWS_AS(simulate_saturated(proportional(2.0), first_order(1.0, 1.0), lim, {}, o), std::invalid_argument);
  CHECK(anti_windup_name(AntiWindup::BackCalculation) == "back_calculation");
}

TEST_CASE("simulate_saturated: from the operating point the loop rests at y = r0, u = r0 / G(0)") {
  // G = 3.125 / (s + 1.25), G(0) = 2.5; r0 = 1.5 is held by u0 = 0.6 (final-value theorem, by hand).
  ActuatorLimits lim;
  lim.minimum = 0.0;
  lim.maximum = 1.0;
  SaturatedInputs in;
  in.reference = in.initial_reference = 1.5;
  SaturatedOptions o;
  o.horizon_s = 4.0;
  o.samples = 401;
  for (AntiWindup aw : {AntiWindup::None, AntiWindup::Conditional}) {
    lim.anti_windup = aw;
    const SaturatedResponse r = simulate_saturated(pi(1.6, 3.2), first_order(3.125, 1.25), lim, in, o);
    for (size_t k = 0; k < r.y.size(); ++k) {
      CHECK(r.y[k] == Approx(1.5).margin(1e-12));
      CHECK(r.u[k] == Approx(0.6).margin(1e-12));
    }
  }
  // 3.0 would need u0 = 1.2, beyond the maximum: refused, said.
  in.reference = in.initial_reference = 3.0;
  CHECK_THROWS_WITH(simulate_saturated(pi(1.6, 3.2), first_order(3.125, 1.25), lim, in, o),
                    Catch::Contains("cannot hold the operating reference"));
}

TEST_CASE("simulate_saturated: conditional integration slides along the limit and leaves it where Kp y' = Ki e") {
  // The pump above holding r0 = 1.5 (u0 = 0.6) meets a load d = 0.59 at its input. u falls to the
  // lower limit 0 at t1 with y above r0: frozen, v = Kp e + xi would rise at once (-Kp y' > 0);
  // integrating, it would fall. So u = 0 and v stays at 0 while y runs open loop (worked by hand):
  //   y(t) = y_inf + (y1 - y_inf) e^(-a (t - t1)), y_inf = b d / a = 1.475;
  // the slide ends when integrating no longer pushes v down: -Kp y' + Ki (r0 - y) = 0, that is
  //   y* = (Kp b d - Ki r0) / (Kp a - Ki) = 1.541667, at t2 = t1 + ln((y1 - y_inf) / (y* - y_inf)) / a.
  const double kp = 1.6, ki = 3.2, a = 1.25, b = 3.125, d = 0.59, r0 = 1.5;
  ActuatorLimits lim;
  lim.minimum = 0.0;
  lim.maximum = 1.0;
  lim.anti_windup = AntiWindup::Conditional;
  SaturatedInputs in;
  in.reference = in.initial_reference = r0;
  in.load = d;
  SaturatedOptions o;
  o.horizon_s = 3.0;
  o.samples = 3001;
  const SaturatedResponse r = simulate_saturated(pi(kp, ki), first_order(b, a), lim, in, o);
  REQUIRE_FALSE(r.chattering);
  REQUIRE(r.switch_times_s.size() == 2);
  const double t1 = r.switch_times_s[0], t2 = r.switch_times_s[1];
  const double y_inf = b * d / a, y_star = (kp * b * d - ki * r0) / (kp * a - ki);
  // y1 from the first sample of the slide, carried back to t1 by the closed form.
  const size_t k1 = static_cast<size_t>(std::ceil(t1 / r.dt));
  const double y1 = y_inf + (r.y[k1] - y_inf) * std::exp(a * (k1 * r.dt - t1));
  CHECK(t2 == Approx(t1 + std::log((y1 - y_inf) / (y_star - y_inf)) / a).epsilon(1e-10));
  for (size_t k = k1; k * r.dt < t2; ++k) {
    CHECK(r.u[k] == 0.0);
    CHECK(std::abs(r.v[k]) < 1e-12);
    CHECK(r.y[k] == Approx(y_inf + (y1 - y_inf) * std::exp(-a * (k * r.dt - t1))).margin(1e-12));
  }
  CHECK(r.limited_time_s == Approx(t2 - t1).epsilon(1e-9));
}

TEST_CASE("saturated_disturbance_figures: a load beyond the headroom leaves y off the operating point") {
  // Holding r0 = 1.5 (u0 = 0.6), a load d = 0.8 needs u = -0.2 < 0: u stays at 0 and y settles at
  // G(0) d = 2.0 (by hand), so the peak deviation tends to 0.5 and y never recovers.
  ActuatorLimits lim;
  lim.minimum = 0.0;
  lim.maximum = 1.0;
  lim.anti_windup = AntiWindup::Conditional;
  SaturatedInputs in;
  in.reference = in.initial_reference = 1.5;
  in.load = 0.8;
  SaturatedOptions o;
  o.horizon_s = 20.0;
  o.samples = 4001;
  const SaturatedDisturbanceFigures f =
      saturated_disturbance_figures(pi(1.6, 3.2), first_order(3.125, 1.25), lim, in, o, true, 0.02);
  CHECK(f.baseline == Approx(1.5).margin(1e-12));
  CHECK(f.held_u == Approx(0.6).margin(1e-12));
  CHECK_FALSE(f.rejected);
  CHECK_FALSE(f.recovery_time_s);
  CHECK(f.peak == Approx(0.5).margin(1e-9));
  // A load of 0.3 is met (u = 0.3): rejected, and the recovery is the last exit from 2 % of the peak.
  in.load = 0.3;
  const SaturatedDisturbanceFigures g =
      saturated_disturbance_figures(pi(1.6, 3.2), first_order(3.125, 1.25), lim, in, o, true, 0.02);
  CHECK(g.rejected);
  REQUIRE(g.recovery_time_s);
  CHECK(*g.recovery_time_s > 0.0);
  // Not the same as a reference step: reference must stay at initial_reference.
  in.reference = 2.0;
  CHECK_THROWS_WITH(saturated_disturbance_figures(pi(1.6, 3.2), first_order(3.125, 1.25), lim, in, o, true, 0.02),
                    Catch::Contains("holds the reference"));
}
