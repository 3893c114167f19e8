// The biquad cascade: it reproduces the discrete transfer function, and follows its stated
// pairing, ordering and gain rules.
#include <catch2/catch.hpp>

#include <cmath>

#include "polewright/model/biquad.hpp"
#include "polewright/model/discretize.hpp"
#include "support/make_zpk.hpp"

using namespace pw;
using pw::test::make;

namespace {
Zpk multi_stage() {
  // Lead + lead + notch + PI, Tustin at 1 kHz.
  const double wn = 60.0;
  const Zpk c = make(50.0, {-7.7, -360.0, std::polar(wn, M_PI - std::acos(0.003)), std::polar(wn, -(M_PI - std::acos(0.003))), -2.0},
                     {-600.0, -150.0, std::polar(wn, M_PI - std::acos(0.5)), std::polar(wn, -(M_PI - std::acos(0.5))), 0.0});
  DiscretizeOptions o;
  o.sample_time_s = 1e-3;
  return discretize(c, o);
}
}  // namespace

TEST_CASE("the cascade reproduces the discrete frequency response", "[export][biquad]") {
  // Reference: the factored transfer function evaluated directly (Zpk::evaluate).
  const Zpk d = multi_stage();
  const BiquadCascade c = biquad_cascade(d);
  CHECK(c.sections.size() == 3);
  for (int i = 1; i < 200; ++i) {
    const Complex z = std::polar(1.0, M_PI * i / 200.0);
    const Complex want = d.evaluate(z);
    CHECK(std::abs(cascade_evaluate(c, z) - want) <= 1e-10 * std::abs(want));
  }
}

TEST_CASE("the cascade's impulse response matches the state-space realisation", "[export][biquad]") {
  // Reference: realize() of the same z-domain transfer function simulated as x+ = A x + B u.
  const Zpk d = multi_stage();
  const BiquadCascade c = biquad_cascade(d);
  const StateSpace s = realize(d);
  std::vector<double> in(300, 0.0);
  in[0] = 1.0;
  const std::vector<double> y = cascade_filter(c, in);
  Eigen::VectorXd x = Eigen::VectorXd::Zero(s.states());
  double scale = 0.0;
  for (double v : y) scale = std::max(scale, std::abs(v));
  for (size_t k = 0; k < in.size(); ++k) {
    const double want = Eigen::RowVectorXd(s.C).dot(x) + s.D * in[k];
    x = Eigen::MatrixXd(s.A) * x + Eigen::VectorXd(s.B) * in[k];
    CHECK(std::abs(y[k] - want) <= 1e-10 * scale);
  }
}

TEST_CASE("pairing, ordering and gain rules", "[export][biquad]") {
  const BiquadCascade c = biquad_cascade(multi_stage());
  // Ordered by increasing pole radius; the integrator (radius 1) alone in the last section.
  for (size_t i = 1; i < c.sections.size(); ++i)
    CHECK(section_pole_radius(c.sections[i - 1]).double_radius <= section_pole_radius(c.sections[i]).double_radius);
  const Biquad& last = c.sections.back();
  CHECK(last.integrator);
  CHECK(last.poles.size() == 1);
  CHECK(last.a[1] == -1.0);
  CHECK(last.a[2] == 0.0);
  // The notch zeros sit with the notch poles.
  bool notch_found = false;
  for (const Biquad& s : c.sections)
    if (s.poles.size() == 2 && s.poles[0].imag() != 0.0) {
      REQUIRE(s.zeros.size() == 2);
      CHECK(s.zeros[0].imag() != 0.0);
      notch_found = true;
    }
  CHECK(notch_found);
  // Unit DC gain for sections without a root at z = 1; the integrator section has unit gain at z = -1.
  for (const Biquad& s : c.sections) {
    if (s.integrator) {
      CHECK((s.b[0] - s.b[1] + s.b[2]) / (s.a[0] - s.a[1] + s.a[2]) == Approx(1.0).epsilon(1e-12));
    } else {
      CHECK((s.b[0] + s.b[1] + s.b[2]) / (s.a[0] + s.a[1] + s.a[2]) == Approx(1.0).epsilon(1e-9));
    }
  }
  // A strictly proper transfer function: the missing zero is a delay (b0 = 0).
  const BiquadCascade lp = biquad_cascade(make(2.0, {}, {0.5, 0.25}));
  REQUIRE(lp.sections.size() == 1);
  CHECK(lp.sections[0].b[0] == 0.0);
  CHECK(std::abs(cascade_evaluate(lp, Complex(0.3, 0.7)) - make(2.0, {}, {0.5, 0.25}).evaluate(Complex(0.3, 0.7))) < 1e-14);
  CHECK_THROWS(biquad_cascade(make(1.0, {0.5, 0.2}, {0.1})));
}

TEST_CASE("float rounding of a1, a2 near the unit circle", "[export][biquad]") {
  // A double real pole p near 1 (a slow lag sampled fast): rounding a1 = -2p and a2 = p^2 to float
  // perturbs the discriminant by about -4 (p e1 + e2); where that is positive the roots split along
  // the real axis by about sqrt(disc) / 2, i.e. ~1e-4 for float errors ~1e-8 (perturbation of a
  // double root, closed form), which is more than the distance 1e-5..5e-4 to the circle.
  int found = 0;
  for (int k = 1; k <= 50 && found < 3; ++k) {
    const double p = 1.0 - k * 1e-5;
    const BiquadCascade c = biquad_cascade(make(1.0, {0.5, 0.5}, {p, p}));
    const double a1 = static_cast<float>(c.sections[0].a[1]), a2 = static_cast<float>(c.sections[0].a[2]);
    const double disc = a1 * a1 - 4.0 * a2;
    if (disc <= 0.0) continue;
    ++found;
    const SectionRadius r = section_pole_radius(c.sections[0]);
    CHECK(r.double_radius == Approx(p).epsilon(1e-7));
    CHECK(r.float_radius == Approx(0.5 * (-a1 + std::sqrt(disc))).epsilon(1e-12));
    CHECK(std::abs(r.float_radius - r.double_radius) > 0.5 * (1.0 - r.double_radius));
  }
  CHECK(found == 3);
  // A well-damped section barely moves.
  const SectionRadius q = section_pole_radius(biquad_cascade(make(1.0, {}, {0.5, 0.3})).sections[0]);
  CHECK(std::abs(q.float_radius - q.double_radius) < 1e-7);
}
