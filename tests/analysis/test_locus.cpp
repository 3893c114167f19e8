#include <catch2/catch.hpp>

#include <cmath>

#include "polewright/analysis/locus.hpp"

using namespace pw;

namespace {
LoopParts parts_of(double k, Roots plant_poles, Roots plant_zeros = {}) {
  Zpk c, g;
  c.gain = k;
  g.poles = std::move(plant_poles);
  g.zeros = std::move(plant_zeros);
  Plant p;
  p.tf = g;
  return make_loop_parts(c, p, 6);
}
}  // namespace

TEST_CASE("K/(s(s+1)(s+2)): breakaway -0.4226, axis crossing j sqrt 2 at K = 6, asymptotes", "[analysis][locus]") {
  // Classic textbook example (from memory; by hand: dK/ds = 0 gives 3s^2 + 6s + 2 = 0,
  // s = -1 + 1/sqrt(3) = -0.4226 with K = 0.3849; Routh gives K = 6 at w = sqrt(2)).
  const Locus l = root_locus(parts_of(1, {Complex(0, 0), Complex(-1, 0), Complex(-2, 0)}), LocusOptions{});
  REQUIRE(l.breakaways.size() == 1);
  CHECK(l.breakaways[0].s.real() == Approx(-1 + 1 / std::sqrt(3.0)).epsilon(1e-10));
  CHECK(l.breakaways[0].gain == Approx(0.3849).epsilon(1e-3));
  REQUIRE(l.axis_crossings.size() == 1);
  CHECK(l.axis_crossings[0].s.imag() == Approx(std::sqrt(2.0)).epsilon(1e-10));
  CHECK(l.axis_crossings[0].gain == Approx(6.0).epsilon(1e-10));
  REQUIRE(l.asymptote_centroid);
  CHECK(*l.asymptote_centroid == Approx(-1.0));
  REQUIRE(l.asymptote_angles_deg.size() == 3);
  CHECK(l.asymptote_angles_deg[0] == Approx(60));
  CHECK(l.asymptote_angles_deg[1] == Approx(180));
  CHECK(l.asymptote_angles_deg[2] == Approx(-60));
  REQUIRE(l.stable_intervals.size() == 1);
  CHECK(l.stable_intervals[0].lo == 0.0);
  CHECK(*l.stable_intervals[0].hi == Approx(6.0).epsilon(1e-10));
  // Branches start at the open-loop poles and each traced point satisfies 1 + k L = 0.
  REQUIRE(l.branches.size() == 3);
  const Zpk L = parts_of(1, {Complex(0, 0), Complex(-1, 0), Complex(-2, 0)}).loop_rational;
  for (size_t j = 1; j < l.gains.size(); j += 37)
    for (const auto& b : l.branches) {
      const Complex v = 1.0 + l.gains[j] * L.evaluate(b[j]);
      CHECK(std::abs(v) < 1e-6 * (1.0 + std::abs(l.gains[j] * L.evaluate(b[j]))));
    }
}

TEST_CASE("proportional gain on a damped mass-spring keeps Re p = -zeta wn while Im p grows", "[analysis][locus]") {
  // 1/(s^2 + 2 zeta wn s + wn^2) with gain k: s^2 + 2 zeta wn s + wn^2 + k -> Re = -zeta wn (standard result).
  const double wn = 3.0, zeta = 0.2;
  const Complex p(-zeta * wn, wn * std::sqrt(1 - zeta * zeta));
  const Locus l = root_locus(parts_of(1, {p, std::conj(p)}), LocusOptions{});
  REQUIRE(l.branches.size() == 2);
  double last_im = 0;
  for (size_t j = 0; j < l.gains.size(); ++j) {
    for (const auto& b : l.branches) CHECK(b[j].real() == Approx(-zeta * wn).epsilon(1e-9));
    const double im = std::max(std::abs(l.branches[0][j].imag()), std::abs(l.branches[1][j].imag()));
    CHECK(im >= last_im - 1e-9);
    last_im = im;
  }
  CHECK(last_im > 100.0);  // grows without bound (sqrt of k up to 1e5)
  REQUIRE(l.stable_intervals.size() == 1);
  CHECK_FALSE(l.stable_intervals[0].hi);
}

TEST_CASE("unstable plant needs a minimum gain: stable interval starts above zero", "[analysis][locus]") {
  // k (s + 1) / (s (s - 1))... here the simpler k/(s - 1): pole at 1 - k, stable for k > 1.
  const std::vector<GainInterval> g = stable_gain_intervals(parts_of(1, {Complex(1, 0)}));
  REQUIRE(g.size() == 1);
  CHECK(g[0].lo == Approx(1.0).epsilon(1e-10));
  CHECK_FALSE(g[0].hi);
  std::string err;
  LocusOptions bad;
  bad.gain_max = 0;
  CHECK_FALSE(bad.IsValid(&err));
}
