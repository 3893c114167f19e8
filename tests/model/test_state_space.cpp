#include <catch2/catch.hpp>

#include "polewright/model/state_space.hpp"

using namespace pw;

namespace {
void same_response(const Zpk& z) {
  const StateSpace ss = realize(z);
  CHECK(ss.states() == z.order());
  for (const Complex s : {Complex(0.1, 0.3), Complex(-0.7, 2.0), Complex(3.0, -5.0), Complex(0, 40)}) {
    const Complex want = z.evaluate(s), got = ss_evaluate(ss, s);
    CHECK(std::abs(got - want) <= 1e-10 * std::max(1.0, std::abs(want)));
  }
}
}  // namespace

TEST_CASE("cascade realisation reproduces the transfer function", "[model][state_space]") {
  Zpk a;  // notch times lead: complex zero pair on a complex pole pair, real zero on real pole
  a.gain = 12;
  a.zeros = {Complex(-4, 0), Complex(-3, 59.925), Complex(-3, -59.925)};
  a.poles = {Complex(-40, 0), Complex(-42, 42.85), Complex(-42, -42.85)};
  same_response(a);

  Zpk b;  // complex zero pair with only real poles: two real poles form the section
  b.gain = 2;
  b.zeros = {Complex(-1, 3), Complex(-1, -3)};
  b.poles = {Complex(-2, 0), Complex(-5, 0), Complex(0, 0)};
  same_response(b);

  Zpk c;  // real zeros on a complex pole pair, biproper
  c.gain = -0.5;
  c.zeros = {Complex(2, 0), Complex(-7, 0)};
  c.poles = {Complex(-1, 1), Complex(-1, -1)};
  same_response(c);

  Zpk k;  // pure gain
  k.gain = 3;
  CHECK(realize(k).states() == 0);
  CHECK(realize(k).D == 3);

  Zpk bad;
  bad.zeros = {Complex(-1, 0)};
  CHECK_THROWS(realize(bad));
}

TEST_CASE("series connection multiplies transfer functions", "[model][state_space]") {
  Zpk a, b;
  a.gain = 2;
  a.poles = {Complex(-1, 0)};
  b.gain = 3;
  b.zeros = {Complex(-2, 0)};
  b.poles = {Complex(-5, 0)};
  const StateSpace s = series(realize(a), realize(b));
  const Complex x(0.2, 1.1);
  CHECK(std::abs(ss_evaluate(s, x) - a.evaluate(x) * b.evaluate(x)) < 1e-12);
}
