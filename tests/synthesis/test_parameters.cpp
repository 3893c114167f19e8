#include <catch2/catch.hpp>

#include <cmath>

#include "polewright/synthesis/parameters.hpp"

using namespace pw;

TEST_CASE("every point of the parameter box is a physical, proper compensator inside the range", "[synthesis][parameters]") {
  const Structure s{true, 2, 1, 1};
  const ParamSpace ps = make_param_space(s, {0.5, 600.0}, -2.0, 2.0, 1.0);
  CHECK(ps.dim() == 1 + 1 + 2 * 2 + 2 + 3);
  for (double u : {0.0, 0.3, 0.77, 1.0}) {
    std::vector<double> x(static_cast<size_t>(ps.dim()));
    for (int i = 0; i < ps.dim(); ++i) x[static_cast<size_t>(i)] = ps.lower[static_cast<size_t>(i)] + u * (ps.upper[static_cast<size_t>(i)] - ps.lower[static_cast<size_t>(i)]);
    const Zpk c = params_to_zpk(ps, x);
    CHECK(c.is_proper());
    CHECK(c.zeros.size() == c.poles.size());
    for (const Roots* set : {&c.zeros, &c.poles})
      for (const Complex& r : *set) {
        CHECK(r.real() <= 0.0);                       // minimum phase and stable stages
        if (std::abs(r) > 0.0) CHECK(std::abs(r) >= 0.5 * (1 - 1e-12));
        CHECK(std::abs(r) <= 600.0 * (1 + 1e-12));
      }
  }
}

TEST_CASE("lead stage: ratio and position map to zero and pole; unit DC gain", "[synthesis][parameters]") {
  const ParamSpace ps = make_param_space(Structure{false, 1, 0, 0}, {1.0, 100.0}, -3, 3, 1.0);
  const double ratio = 4.0, zero = 2.9;
  const std::vector<double> x = {std::log10(1.5), std::log10(ratio), lead_t(ps, zero, ratio)};
  const Zpk c = params_to_zpk(ps, x);
  REQUIRE(c.zeros.size() == 1);
  CHECK(-c.zeros[0].real() == Approx(zero));
  CHECK(-c.poles[0].real() == Approx(zero * ratio));
  CHECK(c.evaluate(Complex(0, 0)).real() == Approx(1.5));  // gain parameter is the DC gain
}

TEST_CASE("default frequency range and feedback sign", "[synthesis][parameters]") {
  Plant g;
  g.tf.gain = 4;
  g.tf.poles = {Complex(0, 0), Complex(-2, 0)};
  const auto r = default_frequency_range({g}, Region{});
  CHECK(r.first <= 2.0 / 30.0 + 1e-12);
  CHECK(r.second >= 2.0 * 30.0 - 1e-9);
  CHECK(feedback_sign(g) == 1.0);
  Plant u;  // 1/(s^2 - 400): negative DC gain, one positive real pole -> positive gain stabilises
  u.tf.poles = {Complex(20, 0), Complex(-20, 0)};
  CHECK(feedback_sign(u) == 1.0);
  Plant n;  // -1/(s + 1): negative gain plant needs a negative controller
  n.tf.gain = -1;
  n.tf.poles = {Complex(-1, 0)};
  CHECK(feedback_sign(n) == -1.0);
}
