#include <catch2/catch.hpp>

#include <cmath>

#include "polewright/model/pade.hpp"

using namespace pw;

TEST_CASE("Pade coefficients match the closed form", "[model][pade]") {
  // (2,2): (1 - x/2 + x^2/12) / (1 + x/2 + x^2/12) (standard table, from memory; derivable by
  // matching the Taylor series of e^-x).
  const auto c2 = pade_denominator_coefficients(2);
  CHECK(c2[0] == 1.0);
  CHECK(c2[1] == Approx(0.5));
  CHECK(c2[2] == Approx(1.0 / 12.0));
  const auto c3 = pade_denominator_coefficients(3);  // 1 + x/2 + x^2/10 + x^3/120
  CHECK(c3[2] == Approx(0.1));
  CHECK(c3[3] == Approx(1.0 / 120.0));
}

TEST_CASE("Pade delay is all-pass, unit DC gain, and close to e^-jwT below wT ~ n", "[model][pade]") {
  const double T = 0.5;
  const Zpk d = pade_delay(T, 6);
  REQUIRE(d.poles.size() == 6);
  REQUIRE(d.zeros.size() == 6);
  CHECK(std::abs(d.evaluate(Complex(0, 0)) - 1.0) < 1e-12);
  for (double w : {0.5, 2.0, 8.0}) {
    const Complex v = d.evaluate(Complex(0, w));
    CHECK(std::abs(std::abs(v) - 1.0) < 1e-12);  // all-pass
    if (w * T <= 1.0) CHECK(std::abs(v - std::polar(1.0, -w * T)) < 1e-8);
  }
  for (const Complex& p : d.poles) CHECK(p.real() < 0.0);
  CHECK(pade_delay(0.0, 6).poles.empty());
}
