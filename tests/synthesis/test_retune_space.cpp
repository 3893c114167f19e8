#include <catch2/catch.hpp>

#include <cmath>

#include "polewright/synthesis/retune_space.hpp"
#include "support/make_zpk.hpp"

using namespace pw;
using pw::test::make;

namespace {
const Zpk kCurrent = make(12.0, {Complex(-4, 0), Complex(-3, 59.92), Complex(-3, -59.92)},
                          {Complex(-40, 0), Complex(-42, 42.85), Complex(-42, -42.85), Complex(0, 0)});
}  // namespace

TEST_CASE("Bode-form gain of a compensator (by hand)", "[synthesis][retune_space]") {
  // 5 (s + 2) / (s + 10) = 5 * 2/10 (1 + s/2)/(1 + s/10): low-frequency gain 1.
  CHECK(bode_gain(make(5.0, {Complex(-2, 0)}, {Complex(-10, 0)})) == Approx(1.0));
  // Poles at the origin do not count: 3 (s + 4) / s -> 12 (1 + s/4) / s.
  CHECK(bode_gain(make(3.0, {Complex(-4, 0)}, {Complex(0, 0)})) == Approx(12.0));
  // A right-half-plane zero flips the sign: 2 (s - 1) / (s + 1) -> -2 (1 - s)/(1 + s).
  CHECK(bode_gain(make(2.0, {Complex(1, 0)}, {Complex(-1, 0)})) == Approx(-2.0));
}

TEST_CASE("the current design maps to itself at distance zero", "[synthesis][retune_space]") {
  const RetuneSpace rs = make_retune_space(kCurrent, {0.5, 600.0});
  // gain, one real zero, one zero pair (2), one real pole, one pole pair (2); the origin pole is fixed.
  CHECK(rs.dim() == 7);
  CHECK(rs.base_dim == 7);
  const Zpk back = retune_to_zpk(rs, rs.current);
  CHECK(back.gain == Approx(kCurrent.gain).epsilon(1e-12));
  REQUIRE(back.zeros.size() == 3);
  REQUIRE(back.poles.size() == 4);
  for (double w : {0.3, 7.0, 60.0, 900.0}) {
    const Complex a = back.evaluate(Complex(0, w)), b = kCurrent.evaluate(Complex(0, w));
    CHECK(std::abs(a - b) <= 1e-9 * std::abs(b));
  }
  CHECK(change_distance(rs, rs.current) == 0.0);
  for (size_t i = 0; i < rs.current.size(); ++i) {
    CHECK(rs.lower[i] <= rs.current[i]);
    CHECK(rs.current[i] <= rs.upper[i]);
  }
}

TEST_CASE("moving one corner by a decade is a distance of one decade", "[synthesis][retune_space]") {
  const Zpk lead = make(10.0, {Complex(-5, 0)}, {Complex(-50, 0)});
  const RetuneSpace rs = make_retune_space(lead, {0.1, 1000.0});
  std::vector<double> x = rs.current;
  x[1] += 1.0;  // the zero from 5 to 50 rad/s
  CHECK(change_distance(rs, x) == Approx(1.0));
  const Zpk moved = retune_to_zpk(rs, x);
  CHECK(moved.zeros[0].real() == Approx(-50.0));
  // The low-frequency gain is kept while the corner moves.
  CHECK(bode_gain(moved) == Approx(bode_gain(lead)));
  x[0] += 0.5;
  CHECK(change_distance(rs, x) == Approx(std::sqrt(1.25)));
}

TEST_CASE("a complex pair keeps its sign of damping and stays a pair", "[synthesis][retune_space]") {
  const Zpk z = make(1.0, {Complex(-0.3, 10), Complex(-0.3, -10)}, {Complex(-5, 8), Complex(-5, -8)});
  const RetuneSpace rs = make_retune_space(z, {1.0, 100.0});
  std::vector<double> x = rs.upper;  // everything at its upper bound
  const Zpk m = retune_to_zpk(rs, x);
  for (const Complex& r : m.poles) {
    CHECK(r.real() < 0.0);
    CHECK(std::abs(r.imag()) > 0.0);
  }
}

TEST_CASE("added stages start at the identity and cost their magnitude change", "[synthesis][retune_space]") {
  const Zpk p = make(2.0, {}, {Complex(-3, 0)});
  const RetuneSpace rs = make_retune_space(p, {0.1, 100.0}, {AddedStage::FirstOrder, AddedStage::Notch});
  CHECK(rs.dim() == rs.base_dim + 2 + 3);
  // At the identity the added stages change nothing.
  const Zpk same = retune_to_zpk(rs, rs.current);
  for (double w : {0.2, 3.0, 40.0}) CHECK(std::abs(same.evaluate(Complex(0, w)) - p.evaluate(Complex(0, w))) < 1e-9);
  CHECK(change_distance(rs, rs.current) == Approx(0.0).margin(1e-12));
  // A lead of ratio 10 costs between 0 and 1 decade (its gain rises from 1 to 10 across the range).
  std::vector<double> x = rs.current;
  x[static_cast<size_t>(rs.base_dim) + 1] = 1.0;
  const double d = change_distance(rs, x);
  CHECK(d > 0.2);
  CHECK(d < 1.0);
  CHECK(added_stage_order(AddedStage::Notch) == 2);
  CHECK(std::string(added_stage_name(AddedStage::FirstOrder)) == "lead/lag");
}

TEST_CASE("response distance: a gain of ten is one decade; identical is zero", "[synthesis][retune_space]") {
  const Zpk a = make(3.0, {Complex(-1, 0)}, {Complex(-20, 0)});
  Zpk b = a;
  CHECK(response_distance(a, b, {0.1, 100.0}) == Approx(0.0).margin(1e-12));
  b.gain *= 10.0;  // |a/b| = 1/10 everywhere, no phase: log10 = -1 at every frequency
  CHECK(response_distance(a, b, {0.1, 100.0}) == Approx(1.0));
  b.gain = -a.gain;  // a phase of pi everywhere: pi / ln 10 decades
  CHECK(response_distance(a, b, {0.1, 100.0}) == Approx(M_PI / std::log(10.0)));
}

TEST_CASE("a zero gain has no factorisation", "[synthesis][retune_space]") {
  CHECK_THROWS_AS(make_retune_space(make(0.0, {}, {Complex(-1, 0)}), {0.1, 10.0}), std::invalid_argument);
}

TEST_CASE("retune_params_of maps a compensator of the same structure into the retune space", "[synthesis][retune_space]") {
  Zpk cur;  // 2 (s + 1)(s^2 + 0.6 s + 9) / ((s + 10)(s^2 + 6 s + 25))
  cur.gain = 2.0;
  cur.zeros = {Complex(-1, 0), Complex(-0.3, std::sqrt(9 - 0.09)), Complex(-0.3, -std::sqrt(9 - 0.09))};
  cur.poles = {Complex(-10, 0), Complex(-3, 4), Complex(-3, -4)};
  RetuneSpace rs = make_retune_space(cur, {0.1, 100.0});
  std::vector<double> x;
  REQUIRE(retune_params_of(rs, cur, &x));
  for (size_t i = 0; i < x.size(); ++i) CHECK(x[i] == Approx(rs.current[i]).margin(1e-12));
  // Another of the same kinds, outside the corner bounds: the bounds widen and the map is exact.
  Zpk other = cur;
  other.zeros[0] = Complex(-0.001, 0);
  other.poles[1] = Complex(-30, 40);
  other.poles[2] = Complex(-30, -40);
  REQUIRE(retune_params_of(rs, other, &x));
  const Zpk back = retune_to_zpk(rs, x);
  for (double w : {0.01, 1.0, 50.0}) {
    const Complex a = back.evaluate(Complex(0, w)), b = other.evaluate(Complex(0, w));
    CHECK(std::abs(a - b) <= 1e-9 * std::abs(b));  // the same frequency response
  }
  // A different structure (a real pole pair instead of the complex one) does not map.
  Zpk real_poles = cur;
  real_poles.poles = {Complex(-10, 0), Complex(-2, 0), Complex(-12, 0)};
  CHECK_FALSE(retune_params_of(rs, real_poles, &x));
}

TEST_CASE("a corner cap keeps retuned corners below it, or where they are when above already",
          "[synthesis][retune_space][implementation]") {
  // Corners of kCurrent: 4 and |-3+j59.92| = 60 (zeros), 40 and |-42+j42.85| = 60 (poles). With a cap
  // at 50 rad/s the zero at 4 may rise to 50 (not 4 * 10^1.5 = 126), the pole at 40 to 50, and the
  // pairs at 60 stay at most where they are (by hand).
  const RetuneSpace free = make_retune_space(kCurrent, {0.5, 600.0});
  const RetuneSpace capped = make_retune_space(kCurrent, {0.5, 600.0}, {}, 1.5, 2.0, 50.0);
  REQUIRE(capped.dim() == free.dim());
  for (int i = 0; i < capped.dim(); ++i) {
    const std::string& n = capped.names[static_cast<size_t>(i)];
    INFO(n);
    CHECK(capped.lower[static_cast<size_t>(i)] == free.lower[static_cast<size_t>(i)]);
    if (n.find("corner") != std::string::npos || n.find("natural frequency") != std::string::npos) {
      const double c = capped.current[static_cast<size_t>(i)];
      CHECK(capped.upper[static_cast<size_t>(i)] == Approx(std::max(c, std::log10(50.0))).epsilon(1e-12));
    } else {
      CHECK(capped.upper[static_cast<size_t>(i)] == free.upper[static_cast<size_t>(i)]);
    }
  }
}
