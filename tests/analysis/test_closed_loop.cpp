#include <catch2/catch.hpp>

#include <cmath>

#include "polewright/analysis/closed_loop.hpp"

#include "support/make_zpk.hpp"

using namespace pw;

using pw::test::make;

TEST_CASE("standard second-order loop: closed-loop poles -zeta wn +- j wn sqrt(1 - zeta^2)", "[analysis][closed_loop]") {
  // wn^2 / (s (s + 2 zeta wn)), wn = 5, zeta = 0.5 -> -2.5 +- j4.330 (closed form, any control text).
  Plant g;
  g.tf = make(25, {}, {Complex(0, 0), Complex(-5, 0)});
  const LoopParts parts = make_loop_parts(make(1, {}, {}), g, 6);
  const ClosedLoop cl = close_loop(parts.compensator, parts.plant);
  const PoleAnalysis pa = analyze_poles(cl, 0.02);
  REQUIRE(pa.poles.size() == 2);
  CHECK(pa.stable);
  CHECK(pa.poles[0].pole.real() == Approx(-2.5));
  CHECK(std::abs(pa.poles[0].pole.imag()) == Approx(2.5 * std::sqrt(3.0)));
  CHECK(pa.poles[0].damping == Approx(0.5));
  CHECK(pa.poles[0].natural_frequency == Approx(5.0));
  CHECK(closed_loop_dc_gain(cl) == Approx(1.0));
  CHECK(closed_loop_eigenvalues(cl).size() == 2);
}

TEST_CASE("Routh-Hurwitz limit of K/(s(s+1)(s+2)) is K = 6", "[analysis][closed_loop]") {
  // Characteristic s^3 + 3 s^2 + 2 s + K: stable for 0 < K < 6 (Routh array by hand).
  Plant g;
  g.tf = make(1, {}, {Complex(0, 0), Complex(-1, 0), Complex(-2, 0)});
  for (double K : {0.5, 5.9, 6.1, 9.0}) {
    const LoopParts parts = make_loop_parts(make(K, {}, {}), g, 6);
    const PoleAnalysis pa = analyze_poles(close_loop(parts.compensator, parts.plant), 0.02);
    CHECK(pa.stable == (K < 6.0));
  }
}

TEST_CASE("biproper compensator on a biproper plant: the algebraic loop is solved", "[analysis][closed_loop]") {
  // C = 2 (s + 1)/(s + 3), G = (s + 2)/(s + 5): T = CG / (1 + CG); T(0) = (2/3 * 2/5) / (1 + 4/15) = 4/19.
  Plant g;
  g.tf = make(1, {Complex(-2, 0)}, {Complex(-5, 0)});
  const LoopParts parts = make_loop_parts(make(2, {Complex(-1, 0)}, {Complex(-3, 0)}), g, 6);
  const ClosedLoop cl = close_loop(parts.compensator, parts.plant);
  CHECK(cl.well_posed);
  CHECK(closed_loop_dc_gain(cl) == Approx(4.0 / 19.0));
  // u(0+) = C(inf) / (1 + C(inf) G(inf)) = 2 / 3.
  CHECK(cl.Du == Approx(2.0 / 3.0));
  // Ill-posed: C(inf) G(inf) = -1.
  const LoopParts bad = make_loop_parts(make(-1, {Complex(-1, 0)}, {Complex(-3, 0)}), g, 6);
  CHECK_FALSE(close_loop(bad.compensator, bad.plant).well_posed);
}

TEST_CASE("lag dipole: the slow pole near the lag zero has a tiny step share", "[analysis][closed_loop]") {
  // Field notes: a lag stage leaves a slow closed-loop pole almost on its zero with a tiny residue.
  Plant g;
  g.tf = make(10, {}, {Complex(0, 0), Complex(-4, 0)});
  const LoopParts parts = make_loop_parts(make(4, {Complex(-0.2, 0)}, {Complex(-0.02, 0)}), g, 6);
  const PoleAnalysis pa = analyze_poles(close_loop(parts.compensator, parts.plant), 0.02);
  REQUIRE(pa.residues_reliable);
  const PoleInfo& slow = pa.poles.front();  // slowest first
  CHECK(slow.pole.real() == Approx(-0.2035).epsilon(1e-3));  // numpy/scipy fixture: -0.2035
  CHECK(slow.share < 0.02);
  CHECK_FALSE(slow.matters);
  double total = 0;
  for (const PoleInfo& p : pa.poles) total += p.share;
  CHECK(total == Approx(1.0));
}

TEST_CASE("damping_of", "[analysis][closed_loop]") {
  CHECK(damping_of(Complex(-1, 0)) == 1.0);
  CHECK(damping_of(Complex(0, 0)) == 1.0);
  CHECK(damping_of(Complex(-1, 1)) == Approx(std::sqrt(0.5)));
  CHECK(damping_of(Complex(1, 1)) < 0.0);
}

TEST_CASE("factored-residue analysis agrees with the eigenvector analysis", "[analysis][closed_loop]") {
  // Two independent computations of the same modal step expansion: eigenvectors of the closed-loop
  // state matrix, and N(l_i) / (d l_i prod (l_i - l_j)) from the factored loop.
  Plant g;
  g.tf = make(180000, {}, {Complex(0, 0), Complex(-8, 0), Complex(-1.2, 59.988), Complex(-1.2, -59.988)});
  g.delay_s = 0.002;
  const Zpk c = make(0.8, {Complex(-3, 0), Complex(-3, 59.92), Complex(-3, -59.92)},
                     {Complex(-60, 0), Complex(-42, 42.8), Complex(-42, -42.8)});
  const LoopParts parts = make_loop_parts(c, g, 6);
  for (double k : {1.0, 0.5}) {
    const ClosedLoop cl = close_loop(parts.compensator, parts.plant, k);
    const PoleAnalysis a = analyze_poles(cl, 0.02), b = analyze_poles(cl, parts, k, 0.02);
    REQUIRE(a.residues_reliable);
    REQUIRE(b.residues_reliable);
    CHECK(a.modal.y_final == Approx(b.modal.y_final).epsilon(1e-9));
    CHECK(a.modal.u_final == Approx(b.modal.u_final).epsilon(1e-9).margin(1e-9));
    REQUIRE(a.poles.size() == b.poles.size());
    for (size_t i = 0; i < a.poles.size(); ++i) {
      CHECK(std::abs(a.poles[i].pole - b.poles[i].pole) < 1e-9 * std::abs(a.poles[i].pole));
      CHECK(a.poles[i].residue == Approx(b.poles[i].residue).epsilon(1e-6).margin(1e-12));
    }
  }
}

TEST_CASE("order-30 plant with roots over five decades: closed-loop poles to 1e-9 relative",
          "[analysis][closed_loop][stress]") {
  // The order30_decades case of tests/reference/make_stress_fixture.py. Reference poles from that
  // script (numpy/scipy: eigenvalues of a balanced state space built in Python, polished by
  // Ehrlich-Aberth iteration on the factored characteristic equation). Before the realisation
  // spread its gain (about 1e58) over the sections and the poles were polished on the factored
  // characteristic equation, the slow pole came out 2e-6 relative off.
  Roots p = {0.0, -0.2, -4.0, -15.0, -60.0, -250.0, -1000.0, -4000.0, -1e4, -2e4};
  const double wn[] = {12, 25, 45, 90, 180, 400, 900, 2000, 5000, 9000};
  const double zeta[] = {0.01, 0.02, 0.05, 0.1, 0.02, 0.03, 0.05, 0.08, 0.1, 0.2};
  double gain = 0.2 / (2.0 * 20.0);
  for (size_t i = 1; i < 10; ++i) gain *= -p[i].real();
  for (int i = 0; i < 10; ++i) {
    const Complex r(-zeta[i] * wn[i], wn[i] * std::sqrt(1.0 - zeta[i] * zeta[i]));
    p.push_back(r);
    p.push_back(std::conj(r));
    gain *= wn[i] * wn[i];
  }
  Plant g;
  g.tf = make(gain, {-2.0, -20.0}, p);
  const LoopParts parts = make_loop_parts(make(8.0, {-0.05}, {-0.5}), g, 6);
  const PoleAnalysis pa = analyze_poles(close_loop(parts.compensator, parts.plant), parts, 1.0, 0.02);
  CVec ev(static_cast<int>(pa.poles.size()));
  for (size_t i = 0; i < pa.poles.size(); ++i) ev(static_cast<int>(i)) = pa.poles[i].pole;
  REQUIRE(ev.size() == 31);
  auto nearest = [&](Complex want) {
    double best = INFINITY;
    for (int i = 0; i < ev.size(); ++i) best = std::min(best, std::abs(ev(i) - want) / std::abs(want));
    return best;
  };
  CHECK(nearest(Complex(-0.040626615283314134, 0.0)) < 1e-9);
  CHECK(nearest(Complex(-0.3719196289661064, 0.5174350623283022)) < 1e-9);
  CHECK(nearest(Complex(-0.4967341288800517, 24.998314592964597)) < 1e-9);
  CHECK(nearest(Complex(-20000.0, 0.0)) < 1e-12);
}

TEST_CASE("polish_closed_loop_poles refines isolated poles and leaves exact ones", "[analysis][closed_loop][stress]") {
  // L = 2/((s+1)(s+2)): 1 + L = 0 gives s^2 + 3 s + 4 = 0, s = -1.5 +- j sqrt(7)/2 (by hand).
  const Zpk L = make(2.0, {}, {Complex(-1, 0), Complex(-2, 0)});
  const Complex exact(-1.5, std::sqrt(7.0) / 2.0);
  CVec v(2);
  v << exact + Complex(1e-5, -2e-5), std::conj(exact + Complex(1e-5, -2e-5));
  const CVec p = polish_closed_loop_poles(v, L, 1.0);
  CHECK(std::abs(p(0) - exact) < 1e-14);
  CHECK(std::abs(p(1) - std::conj(exact)) < 1e-14);
  // Gain scale 0.125: s^2 + 3 s + 2.25 = (s + 1.5)^2, a double pole: not isolated, left alone.
  CVec d(2);
  d << Complex(-1.5 + 1e-8, 0.0), Complex(-1.5 - 1e-8, 0.0);
  const CVec q = polish_closed_loop_poles(d, L, 0.125);
  CHECK(q(0) == d(0));
  CHECK(q(1) == d(1));
}

TEST_CASE("a pole within numerical noise of the imaginary axis is marginal, not stable", "[analysis][closed_loop]") {
  // 1/(s + 1)^3 with K: the characteristic equation (s + 1)^3 + K = 0 has roots -1 + K^(1/3)
  // e^(+-j pi/3), on the axis (+-j sqrt 3) at K = 8 (Routh-Hurwitz); computed Re is ~1e-16.
  for (double K : {7.9, 8.0, 8.1}) {
    INFO("K = " << K);
    Plant g;
    g.tf = make(1, {}, {Complex(-1, 0), Complex(-1, 0), Complex(-1, 0)});
    const LoopParts parts = make_loop_parts(make(K, {}, {}), g, 6);
    const ClosedLoop cl = close_loop(parts.compensator, parts.plant);
    for (const PoleAnalysis& pa : {analyze_poles(cl, 0.02), analyze_poles(cl, parts, 1.0, 0.02)}) {
      CHECK(pa.stable == (K < 8.0));
      CHECK(pa.marginal == (K == 8.0));
      if (K == 8.0) CHECK(std::abs(pa.marginal_pole.imag()) == Approx(std::sqrt(3.0)).epsilon(1e-9));
    }
  }
}
