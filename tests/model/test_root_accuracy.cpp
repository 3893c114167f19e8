#include <catch2/catch.hpp>

#include <cmath>
#include <limits>

#include "polewright/model/root_accuracy.hpp"

using namespace pw;

namespace {
// (s + 2)^8 expanded: binomial coefficients times powers of 2, exact integers in double.
Poly eightfold() {
  Poly p{1.0};
  for (int i = 0; i < 8; ++i) p = poly_multiply(p, {1.0, 2.0});
  return p;
}
}  // namespace

TEST_CASE("poly_roots keeps an 8-fold root right as a set (no polishing inside a cluster)",
          "[model][root_accuracy][stress]") {
  const Poly p = eightfold();
  const Roots r = poly_roots(p);
  REQUIRE(r.size() == 8);
  // The centroid of the roots is -2 (sum of roots = -a_1/a_0 = -16, by hand), to working precision,
  // although each root is only fixed to about eps^(1/8) = 1.1e-2 relative.
  Complex c(0.0, 0.0);
  for (const Complex& x : r) c += x;
  c /= 8.0;
  CHECK(std::abs(c + 2.0) < 1e-12);
  // Backward stable: the roots expand to the given coefficients (relative 1e-12 of the largest).
  const Poly back = poly_from_roots(r);
  REQUIRE(back.size() == p.size());
  for (size_t i = 0; i < p.size(); ++i) CHECK(std::abs(back[i] - p[i]) <= 1e-12 * 1120.0 * 16.0);
  const RootAccuracy a = root_accuracy(p, r);
  CHECK(a.cluster_size == 8);
  CHECK(std::abs(a.near + 2.0) < 1e-12);
  // eps^(1/8) = 0.0111 (closed form): the estimate is at least that and within a factor of 10.
  CHECK(a.worst_relative >= std::pow(std::numeric_limits<double>::epsilon(), 0.125));
  CHECK(a.worst_relative < 0.11);
}

TEST_CASE("root_accuracy of well separated roots is near machine precision", "[model][root_accuracy]") {
  // (s + 1)(s + 2)(s + 3) = s^3 + 6 s^2 + 11 s + 6 (by hand).
  const Poly p{1, 6, 11, 6};
  const Roots r = poly_roots(p);
  const std::vector<bool> iso = isolated_roots(p, r);
  REQUIRE(iso.size() == 3);
  CHECK((iso[0] && iso[1] && iso[2]));
  const RootAccuracy a = root_accuracy(p, r);
  CHECK(a.cluster_size == 1);
  CHECK(a.worst_relative < 1e-12);
  // Exact roots at the origin (s^3) are split off and count as exact.
  const Poly s3{1, 0, 0, 0};
  CHECK(root_accuracy(s3, poly_roots(s3)).worst_relative == 0.0);
}
