#include <catch2/catch.hpp>

#include <cmath>

#include "polewright/model/eigen.hpp"
#include "polewright/model/polynomial.hpp"

using namespace pw;

TEST_CASE("poly_trim and poly_degree drop leading zeros", "[model][polynomial]") {
  CHECK(poly_trim({0, 0, 1, 2}) == Poly{1, 2});
  CHECK(poly_degree({0, 0, 0}) == -1);
  CHECK(poly_degree({3}) == 0);
  CHECK(poly_degree({1, 24, 0}) == 2);
}

TEST_CASE("poly_multiply and poly_evaluate", "[model][polynomial]") {
  // (s + 1)(s + 2) = s^2 + 3 s + 2 (arithmetic by hand).
  CHECK(poly_multiply({1, 1}, {1, 2}) == Poly{1, 3, 2});
  CHECK(poly_evaluate({1, 3, 2}, Complex(-1, 0)) == Complex(0, 0));
  CHECK(poly_evaluate({1, 0, 1}, Complex(0, 1)) == Complex(0, 0));  // s^2 + 1 at s = j
}

TEST_CASE("poly_from_roots expands conjugate pairs to real coefficients", "[model][polynomial]") {
  // (s - (-1 + 2j))(s - (-1 - 2j)) = s^2 + 2 s + 5.
  const Poly p = poly_from_roots({Complex(-1, 2), Complex(-1, -2)});
  REQUIRE(p.size() == 3);
  CHECK(p[1] == Approx(2.0));
  CHECK(p[2] == Approx(5.0));
}

TEST_CASE("poly_roots: exact origin roots, conjugate symmetry, agreement with expansion", "[model][polynomial]") {
  const Roots r = poly_roots({1, 24, 0});
  REQUIRE(r.size() == 2);
  CHECK(r[0] == Complex(-24, 0));
  CHECK(r[1] == Complex(0, 0));  // split off exactly, not a rounding residue

  // Wilkinson-like cluster of order 10 (roots 1..10): ill-conditioned for plain companion roots;
  // balanced eigenvalues plus Newton polish get them to 1e-7 (numpy.roots reaches ~1e-9 here).
  Roots want;
  for (int k = 1; k <= 10; ++k) want.push_back(Complex(-k, 0));
  const Roots got = poly_roots(poly_from_roots(want));
  REQUIRE(got.size() == 10);
  for (int k = 0; k < 10; ++k) CHECK(std::abs(got[static_cast<size_t>(k)] - Complex(-10 + k, 0)) < 1e-7 * (10 - k));

  const Roots c = poly_roots({1, 2, 5});
  REQUIRE(c.size() == 2);
  CHECK(c[0] == std::conj(c[1]));
  CHECK(c[0].real() == Approx(-1.0));
  CHECK(std::abs(c[0].imag()) == Approx(2.0));
}

TEST_CASE("make_conjugate_symmetric pairs near conjugates and snaps tiny imaginary parts", "[model][polynomial]") {
  const Roots r = make_conjugate_symmetric({Complex(-1, 1e-14), Complex(-2, 3 + 1e-12), Complex(-2, -3)});
  REQUIRE(r.size() == 3);
  CHECK(r[0] == Complex(-1, 0));
  CHECK(r[1] == std::conj(r[2]));
  CHECK(r[1].imag() > 0);
}

TEST_CASE("poly_roots refuses coefficients whose ratio overflows a double instead of looping", "[model][polynomial]") {
  // Issue 18: balancing looped for ever on the companion entry -1e200/1e-200 = -inf.
  CHECK_THROWS_AS(poly_roots({1e-200, 0, 1e200}), NumericalError);
  CHECK_THROWS_AS(poly_roots({1e-320, 0, -1089}), NumericalError);
  CHECK_THROWS_WITH(poly_roots({1e-300, 1e300}), Catch::Contains("range of a double"));
  CHECK_THROWS_AS(poly_roots({1, std::nan(""), 1}), NumericalError);
  // Wide but representable: s^2 + 1e300 / 1e-150 ... roots +-j 1e150 (closed form).
  const Roots r = poly_roots({1e-150, 0, 1e150});
  REQUIRE(r.size() == 2);
  CHECK(std::abs(r[0]) == Approx(1e150).epsilon(1e-12));
  CHECK(r[0].real() == Approx(0.0).margin(1e138));
}
