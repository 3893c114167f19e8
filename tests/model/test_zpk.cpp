#include <catch2/catch.hpp>

#include "polewright/model/zpk.hpp"

using namespace pw;

TEST_CASE("zpk from polynomials and back", "[model][zpk]") {
  // 1.2e5 / (s^2 + 24 s): gain 1.2e5, poles 0 and -24.
  const Zpk z = zpk_from_polynomials({1.2e5}, {1, 24, 0});
  CHECK(z.gain == Approx(1.2e5));
  REQUIRE(z.poles.size() == 2);
  CHECK(z.is_proper());
  CHECK(z.relative_degree() == 2);
  const Poly den = zpk_denominator(z);
  CHECK(den[1] == Approx(24.0));
  CHECK(zpk_numerator(z)[0] == Approx(1.2e5));
  // Leading numerator zeros are dropped: (0 s + 2) / (s + 1) has no zero.
  CHECK(zpk_from_polynomials({0, 2}, {1, 1}).zeros.empty());
}

TEST_CASE("zpk evaluate, series, integrators and low-frequency gain", "[model][zpk]") {
  Zpk g;
  g.gain = 4;
  g.poles = {Complex(0, 0), Complex(-2, 0)};
  Zpk c;
  c.gain = 4.68;
  c.zeros = {Complex(-2.9, 0)};
  c.poles = {Complex(-5.4, 0)};
  const Zpk l = zpk_series(c, g);
  CHECK(l.order() == 3);
  CHECK(zpk_integrators(l) == 1);
  // Kv = 4.68 * 4 * 2.9 / (5.4 * 2) (final-value theorem by hand).
  CHECK(zpk_low_frequency_gain(l) == Approx(4.68 * 4 * 2.9 / (5.4 * 2)));
  const Complex s(0.3, 1.7);
  CHECK(std::abs(l.evaluate(s) - 4.68 * 4.0 * (s + 2.9) / ((s + 5.4) * s * (s + 2.0))) < 1e-12);
  CHECK(zpk_frequency_scale(c) == Approx(std::sqrt(2.9 * 5.4)));
}

TEST_CASE("zpk_to_string writes factors", "[model][zpk]") {
  Zpk c;
  c.gain = 3.1;
  c.zeros = {Complex(-40, 0)};
  c.poles = {Complex(-400, 0), Complex(0, 0)};
  CHECK(zpk_to_string(c) == "3.1 (s + 40) / (s + 400)s");
}

TEST_CASE("zpk_origin_tolerance: 1e-12 of the roots' scale, at least 1e-12", "[model][zpk]") {
  // Roots -100 and -1e4: geometric mean 1000, so a root within 1e-9 of 0 is at the origin.
  const Zpk wide{{-100.0}, {0.0, -1e4}, 1.0};
  CHECK(zpk_origin_tolerance(wide) == Approx(1e-9));
  // A near-origin root enters the scale itself: for poles 1e-13 and -5 the scale is below 1, so
  // the tolerance is 1e-12 and 1e-13 counts as an integrator while 2e-12 does not.
  CHECK(zpk_integrators(Zpk{{}, {1e-13, -5.0}, 1.0}) == 1);
  CHECK(zpk_integrators(Zpk{{}, {2e-12, -5.0}, 1.0}) == 0);
  // Slow roots never shrink it below 1e-12.
  CHECK(zpk_origin_tolerance(Zpk{{-1e-3}, {-1e-4}, 1.0}) == Approx(1e-12));
}
