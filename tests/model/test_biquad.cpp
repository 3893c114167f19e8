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
  // The integrator alone in the last section (the order of the others: see "section order keeps the
  // running peak smallest" below).
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

namespace {
// The shape of the case in issue 17: lag + lead + notch, Tustin at 1 kHz. The lag's slow real pole
// (z ~ 0.9999) lies nearer the unit circle than the notch poles (z ~ 0.86), so a rule that lets
// each section choose its zeros in turn of radius gave the notch zeros to the real poles.
Zpk notch_case() {
  const double wn = 300.0;
  const Zpk c = make(20.0, {-1.0, -10.0, std::polar(wn, M_PI - std::acos(0.05)), std::polar(wn, -(M_PI - std::acos(0.05)))},
                     {-0.1, -100.0, std::polar(wn, M_PI - std::acos(0.5)), std::polar(wn, -(M_PI - std::acos(0.5)))});
  DiscretizeOptions o;
  o.sample_time_s = 1e-3;
  return discretize(c, o);
}
double max_abs_on_circle(const Biquad& s, int n) {
  double m = 0.0;
  for (int k = 0; k <= n; ++k) m = std::max(m, std::abs(section_value(s, std::polar(1.0, M_PI * k / n))));
  return m;
}
}  // namespace

TEST_CASE("a notch's zeros go with the notch's poles; each section reports its peak", "[export][biquad]") {
  const Zpk d = notch_case();
  const BiquadCascade c = biquad_cascade(d);
  REQUIRE(c.sections.size() == 2);
  // Reproduces H(z) (reference: the factored form evaluated directly).
  for (int i = 1; i < 100; ++i) {
    const Complex z = std::polar(1.0, M_PI * i / 100.0);
    CHECK(std::abs(cascade_evaluate(c, z) - d.evaluate(z)) <= 1e-10 * std::abs(d.evaluate(z)));
  }
  for (const Biquad& s : c.sections) {
    const bool complex_poles = s.poles[0].imag() != 0.0;
    REQUIRE(s.zeros.size() == 2);
    CHECK((s.zeros[0].imag() != 0.0) == complex_poles);  // notch zeros with notch poles, real with real
    // Issue 17 saw 631 at Nyquist in one section and 0.0009 in the next; with unit DC gain a notch
    // section is ~1 at both ends and a lag+lead section is at most the lead ratio times the lag
    // ratio's inverse (10 / 10 = 1 here: closed form of the continuous factors at high frequency).
    const double nyq = std::abs(section_value(s, Complex(-1.0, 0.0)));
    CHECK(nyq > 0.5);
    CHECK(nyq < 2.0);
    // The reported peak: at least the value on a 20000-point grid, and not above it by more than the
    // grid can miss (reference: brute-force evaluation; the notch's pole peak is smooth at zeta 0.5).
    const double grid = max_abs_on_circle(s, 20000);
    CHECK(s.peak_gain >= grid * (1.0 - 1e-12));
    CHECK(s.peak_gain <= grid * (1.0 + 1e-6));
    CHECK(std::abs(section_value(s, std::polar(1.0, s.peak_at))) == Approx(s.peak_gain).epsilon(1e-12));
  }
  CHECK(c.sections[0].running_peak == Approx(c.sections[0].peak_gain).epsilon(1e-12));
  // The running peak of the last section is the peak of the whole cascade without g.
  double whole = 0.0;
  for (int k = 0; k <= 20000; ++k) {
    const Complex z = std::polar(1.0, M_PI * k / 20000);
    whole = std::max(whole, std::abs(cascade_evaluate(c, z) / c.gain));
  }
  CHECK(c.sections.back().running_peak == Approx(whole).epsilon(1e-6));
}

TEST_CASE("section order keeps the running peak smallest; integrators last and unbounded", "[export][biquad]") {
  const BiquadCascade c = biquad_cascade(multi_stage());
  REQUIRE(c.sections.back().integrator);
  CHECK(std::isinf(c.sections.back().peak_gain));
  CHECK(std::isinf(c.sections.back().running_peak));
  // Brute force over every order of the other sections (reference: the running products on a
  // 4000-point grid): no order has a smaller largest running peak (before the last) by more than 2 %.
  std::vector<Biquad> others(c.sections.begin(), c.sections.end() - 1);
  auto cost = [](const std::vector<Biquad>& o) {
    double worst = 0.0;
    for (size_t n = 1; n < o.size(); ++n) {
      double pk = 0.0;
      for (int k = 0; k <= 4000; ++k) {
        Complex v(1.0, 0.0);
        for (size_t i = 0; i < n; ++i) v *= section_value(o[i], std::polar(1.0, M_PI * k / 4000));
        pk = std::max(pk, std::abs(v));
      }
      worst = std::max(worst, pk);
    }
    return worst;
  };
  const double chosen = cost(others);
  std::vector<size_t> perm(others.size());
  for (size_t i = 0; i < perm.size(); ++i) perm[i] = i;
  do {
    std::vector<Biquad> o;
    for (size_t i : perm) o.push_back(others[i]);
    CHECK(chosen <= cost(o) * 1.02);
  } while (std::next_permutation(perm.begin(), perm.end()));
}
