// Discretisation: analytic properties of each method (sources named per check).
#include <catch2/catch.hpp>

#include <cmath>

#include "polewright/model/discretize.hpp"
#include "support/make_zpk.hpp"

using namespace pw;
using pw::test::make;

namespace {
DiscretizeOptions opts(double T, DiscreteMethod m, double w0 = 0.0) {
  DiscretizeOptions o;
  o.sample_time_s = T;
  o.method = m;
  o.prewarp_rad_s = w0;
  return o;
}
}  // namespace

TEST_CASE("method names round-trip and options are validated", "[export][discretize]") {
  for (DiscreteMethod m : {DiscreteMethod::Tustin, DiscreteMethod::Prewarp, DiscreteMethod::Zoh, DiscreteMethod::Matched})
    CHECK(parse_discrete_method(discrete_method_name(m)) == m);
  CHECK(!parse_discrete_method("bilinear2"));
  std::string err;
  CHECK(!opts(0.0, DiscreteMethod::Tustin).IsValid(&err));
  CHECK(!opts(NAN, DiscreteMethod::Tustin).IsValid(&err));
  CHECK(!opts(-1e-3, DiscreteMethod::Tustin).IsValid(&err));
  CHECK(opts(1e-3, DiscreteMethod::Tustin).IsValid(&err));
  CHECK(!opts(1e-3, DiscreteMethod::Prewarp, 0.0).IsValid(&err));
  CHECK(!opts(1e-3, DiscreteMethod::Prewarp, 4000.0).IsValid(&err));  // above pi / T = 3141.6
  CHECK(opts(1e-3, DiscreteMethod::Prewarp, 100.0).IsValid(&err));
  CHECK_THROWS_AS(discretize(make(1, {}, {-1}), opts(0.0, DiscreteMethod::Tustin)), std::invalid_argument);
}

TEST_CASE("Tustin root map and prewarp constant", "[export][discretize]") {
  // z = (1 + sT/2) / (1 - sT/2) with c = 2 / T (the Tustin substitution, field notes).
  const double T = 0.01;
  CHECK(std::abs(tustin_root(Complex(-10.0, 0.0), 2.0 / T) - Complex(0.95 / 1.05, 0.0)) < 1e-15);
  CHECK(std::abs(tustin_root(Complex(0.0, 0.0), 2.0 / T) - 1.0) == 0.0);
  // c = w0 / tan(w0 T / 2) -> 2 / T as w0 -> 0.
  CHECK(prewarp_constant(1e-6, T) == Approx(2.0 / T).epsilon(1e-12));
  CHECK(prewarp_constant(100.0, T) == Approx(100.0 / std::tan(0.5)).epsilon(1e-15));
}

TEST_CASE("prewarped Tustin is exact at the warp frequency", "[export][discretize]") {
  // Analytic property: s = c (z - 1)/(z + 1) with c = w0 / tan(w0 T / 2) maps z = e^{j w0 T} to
  // s = j w0 exactly, so Cd(e^{j w0 T}) = C(j w0).
  const Zpk lead = make(12.0, {-40.0}, {-400.0});
  const double T = 2e-3, w0 = 600.0;  // w0 T = 1.2 rad: plain Tustin is visibly off here
  const Zpk d = discretize(lead, opts(T, DiscreteMethod::Prewarp, w0));
  const Complex c = lead.evaluate(Complex(0.0, w0));
  CHECK(std::abs(discrete_response(d, w0, T) - c) <= 1e-12 * std::abs(c));
  const Zpk plain = discretize(lead, opts(T, DiscreteMethod::Tustin));
  CHECK(std::abs(discrete_response(plain, w0, T) - c) > 1e-2 * std::abs(c));

  // A notch is warped at its own centre whatever the global warp point is.
  const double wn = 900.0;
  const Zpk notch = make(1.0, {std::polar(wn, M_PI - std::acos(0.02)), std::polar(wn, -(M_PI - std::acos(0.02)))},
                         {std::polar(wn, M_PI - std::acos(0.5)), std::polar(wn, -(M_PI - std::acos(0.5)))});
  const Zpk dn = discretize(notch, opts(T, DiscreteMethod::Prewarp, 100.0));
  const Complex cn = notch.evaluate(Complex(0.0, wn));
  CHECK(std::abs(discrete_response(dn, wn, T) - cn) <= 1e-9);
  REQUIRE(notch_centre_of(notch, notch.poles[0]));
  CHECK(*notch_centre_of(notch, notch.poles[0]) == Approx(wn));
  CHECK(!notch_centre_of(lead, lead.poles[0]));
  // A notch above Nyquist cannot be warped at its centre.
  CHECK_THROWS_AS(discretize(notch, opts(4e-3, DiscreteMethod::Prewarp, 100.0)), std::invalid_argument);
}

TEST_CASE("matched pole-zero maps roots to exp(rT) and keeps the low-frequency gain", "[export][discretize]") {
  // Definition of the matched map: z = exp(r T), zeros at infinity to z = -1, DC gain matched.
  const double T = 0.01;
  const Zpk c = make(100.0, {}, {-10.0, -20.0});
  const Zpk d = discretize(c, opts(T, DiscreteMethod::Matched));
  REQUIRE(d.poles.size() == 2);
  REQUIRE(d.zeros.size() == 2);
  CHECK(std::abs(d.poles[0].real() - std::exp(-20.0 * T)) < 1e-15);
  CHECK(std::abs(d.poles[1].real() - std::exp(-10.0 * T)) < 1e-15);
  CHECK(d.zeros[0] == Complex(-1.0, 0.0));
  CHECK(d.evaluate(1.0).real() == Approx(c.evaluate(0.0).real()).epsilon(1e-13));
  // With an integrator: lim (z - 1) Cd(z) = T lim s C(s) (z - 1 ~ sT near z = 1).
  const Zpk pi = make(3.0, {-5.0}, {0.0});
  const Zpk dp = discretize(pi, opts(T, DiscreteMethod::Matched));
  const Complex z1(1.0 + 1e-7, 0.0);
  CHECK(((z1 - 1.0) * dp.evaluate(z1)).real() == Approx(T * 15.0).epsilon(1e-5));
  CHECK(dp.poles[0] == Complex(1.0, 0.0));
  CHECK(std::abs(dp.zeros[0].real() - std::exp(-5.0 * T)) < 1e-15);
}

TEST_CASE("zero-order hold is step invariant", "[export][discretize]") {
  // Analytic: the ZOH equivalent reproduces the continuous step response at the samples. For
  // C(s) = k (s + a)/(s + b): y(t) = k (a/b + (1 - a/b) e^(-b t)).
  const double k = 12.0, a = 40.0, b = 400.0, T = 1e-3;
  const Zpk d = discretize(make(k, {-a}, {-b}), opts(T, DiscreteMethod::Zoh));
  // y[n] from the discrete transfer function by direct recursion of (z - z0)/(z - p0).
  REQUIRE(d.poles.size() == 1);
  REQUIRE(d.zeros.size() == 1);
  const double p0 = d.poles[0].real(), z0 = d.zeros[0].real(), g = d.gain;
  CHECK(p0 == Approx(std::exp(-b * T)).epsilon(1e-14));
  double y = 0.0, uprev = 0.0;
  for (int n = 0; n < 30; ++n) {
    y = p0 * y + g * (1.0 - z0 * uprev);  // y[n] = p0 y[n-1] + g (u[n] - z0 u[n-1]), u = 1
    uprev = 1.0;
    const double t = n * T;
    CHECK(y == Approx(k * (a / b + (1.0 - a / b) * std::exp(-b * t))).epsilon(1e-12));
  }
}

TEST_CASE("zoh_state_space and state_space_zeros", "[export][discretize]") {
  // Scalar: Ad = e^(aT), Bd = (e^(aT) - 1) / a (closed form).
  StateSpace s;
  s.A = Mat::Constant(1, 1, -3.0);
  s.B = Vec::Constant(1, 1.0);
  s.C = RowVec::Constant(1, 1.0);
  const StateSpace d = zoh_state_space(s, 0.1);
  CHECK(d.A(0, 0) == Approx(std::exp(-0.3)).epsilon(1e-15));
  CHECK(d.B(0) == Approx((1.0 - std::exp(-0.3)) / 3.0).epsilon(1e-14));
  // Zeros of (s + 2)(s + 7) / ((s + 1)(s + 3)(s + 5)): -2 and -7 (strictly proper: the pencil path).
  const StateSpace r = realize(make(4.0, {-2.0, -7.0}, {-1.0, -3.0, -5.0}));
  Roots z = make_conjugate_symmetric(state_space_zeros(r));
  REQUIRE(z.size() == 2);
  CHECK(z[0].real() == Approx(-7.0).epsilon(1e-10));
  CHECK(z[1].real() == Approx(-2.0).epsilon(1e-10));
  // Biproper: eigenvalues of A - B C / D.
  const StateSpace q = realize(make(2.0, {-40.0}, {-400.0}));
  z = state_space_zeros(q);
  REQUIRE(z.size() == 1);
  CHECK(z[0].real() == Approx(-40.0).epsilon(1e-12));
}

TEST_CASE("discrete_response evaluates on the unit circle", "[export][discretize]") {
  // H(z) = z / (z - 0.5) at w T = pi: -1 / -1.5.
  const Zpk h = make(1.0, {0.0}, {0.5});
  CHECK(std::abs(discrete_response(h, M_PI / 0.1, 0.1) - Complex(1.0 / 1.5, 0.0)) < 1e-15);
}
