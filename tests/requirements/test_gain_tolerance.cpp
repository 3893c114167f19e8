#include <catch2/catch.hpp>

#include "polewright/requirements/evaluate.hpp"

using namespace pw;

TEST_CASE("gain tolerance of the standard loop against a damping bound", "[requirements][gain_tolerance]") {
  // 25 k / (s (s + 5)): s^2 + 5 s + 25 k, zeta = 0.5 / sqrt(k). zeta >= 0.4 holds for k <= 1.5625
  // (closed form); below k = 0.25 the poles are real (zeta 1), so the low edge is the scan limit.
  Zpk c;
  Plant g;
  g.tf.gain = 25;
  g.tf.poles = {Complex(0, 0), Complex(-5, 0)};
  const LoopParts parts = make_loop_parts(c, g, 6);
  Region r;
  r.min_damping = 0.4;
  const GainToleranceResult t = gain_tolerance(parts, r, 0.02);
  REQUIRE(t.hi);
  CHECK(*t.hi == Approx(1.5625).epsilon(1e-9));
  CHECK_FALSE(t.hi_at_limit);
  CHECK(*t.lo == kGainScanMin);
  CHECK(t.lo_at_limit);
  CHECK(t.tolerance_pct == Approx(56.25).epsilon(1e-8));
  // A decay-rate bound of 3 cannot hold (Re p = -2.5 for every k >= 0.25): empty interval.
  Region slow;
  slow.min_decay = 3.0;
  const GainToleranceResult e = gain_tolerance(parts, slow, 0.02);
  CHECK_FALSE(e.lo);
  CHECK(e.tolerance_pct == 0.0);
}

TEST_CASE("gain_tolerance_scan finds the edges of any predicate", "[requirements][gain_tolerance][export]") {
  // ok(k) holds exactly on [0.5, 1.8]: the scan must find both edges (to its 40 bisections) and
  // report 100 min(0.8, 0.5) = 50 %.
  const GainToleranceResult g = gain_tolerance_scan([](double k) { return k >= 0.5 && k <= 1.8; });
  REQUIRE(g.hi);
  REQUIRE(g.lo);
  CHECK(*g.hi == Approx(1.8).epsilon(1e-9));
  CHECK(*g.lo == Approx(0.5).epsilon(1e-9));
  CHECK(g.tolerance_pct == Approx(50.0).epsilon(1e-8));
  CHECK(!gain_tolerance_scan([](double k) { return k > 2.0; }).hi);  // the nominal loop fails
  const GainToleranceResult all = gain_tolerance_scan([](double) { return true; });
  CHECK(all.hi_at_limit);
  CHECK(all.lo_at_limit);
}
