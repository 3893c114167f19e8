#include <catch2/catch.hpp>

#include <cmath>

#include "polewright/analysis/disturbance.hpp"
#include "support/make_zpk.hpp"

using namespace pw;
using pw::test::make;
using pw::test::plant_of;

namespace {
const Complex kOrigin(0.0, 0.0);

DisturbanceMetrics response(const Zpk& c, const Zpk& g, DisturbanceInput where, double band, bool exact) {
  const LoopParts parts = make_loop_parts(c, plant_of(g), 6);
  StepOptions o;
  o.exact_refinement = exact;
  return disturbance_response(disturbance_loop(parts, where), o, band, 0.02);
}
}  // namespace

TEST_CASE("load step of a first-order plant with a PI cancelling its pole: closed form", "[analysis][disturbance]") {
  // Worked by hand: G = 1/(s + 1), C = 2 (s + 1)/s, so L = 2/s and
  //   y/d = G S = s / ((s + 1)(s + 2)),  y(t) = e^-t - e^-2t  (partial fractions of 1/((s+1)(s+2))).
  //   Peak: y' = 0 at e^-t = 1/2 -> t = ln 2, y = 1/2 - 1/4 = 0.25.
  //   IAE: y >= 0, so the integral is 1 - 1/2 = 0.5.
  //   Recovery into 2 % of the peak (0.005): with x = e^-t on the tail, x - x^2 = 0.005, the small
  //   root x = (1 - sqrt(1 - 0.02)) / 2, t = -ln x = 5.29330...
  const Zpk g = make(1, {}, {Complex(-1, 0)});
  const Zpk c = make(2, {Complex(-1, 0)}, {kOrigin});
  for (const bool exact : {true, false}) {
    const DisturbanceMetrics m = response(c, g, DisturbanceInput::Load, 0.02, exact);
    CHECK(m.rejected);
    CHECK(std::abs(m.final_value) < 1e-12);
    CHECK(m.peak == Approx(0.25).epsilon(1e-9));
    REQUIRE(m.recovery_time_s);
    CHECK(*m.recovery_time_s == Approx(-std::log((1.0 - std::sqrt(0.98)) / 2.0)).epsilon(exact ? 1e-9 : 1e-6));
    REQUIRE(m.iae);
    CHECK(*m.iae == Approx(0.5).epsilon(1e-9));  // exact from the modal antiderivative
  }
}

TEST_CASE("output step through S = s/(s + 2): peak 1 at t = 0, IAE 1/2, recovery ln 50 / 2", "[analysis][disturbance]") {
  // Same loop as above: S = s/(s + 2), y(t) = e^-2t (by hand): |y| <= 0.02 from t = ln(50)/2.
  const Zpk g = make(1, {}, {Complex(-1, 0)});
  const Zpk c = make(2, {Complex(-1, 0)}, {kOrigin});
  const DisturbanceMetrics m = response(c, g, DisturbanceInput::Output, 0.02, true);
  CHECK(m.rejected);
  CHECK(m.peak == Approx(1.0).epsilon(1e-12));
  REQUIRE(m.recovery_time_s);
  CHECK(*m.recovery_time_s == Approx(std::log(50.0) / 2.0).epsilon(1e-9));
  CHECK(*m.iae == Approx(0.5).epsilon(1e-9));
}

TEST_CASE("proportional control leaves an offset: load and output steps not rejected", "[analysis][disturbance]") {
  // By hand: G = 1/(s + 1), C = 3: G S = 1/(s + 4) (final 1/4, monotone, so the peak is 1/4);
  // S = (s + 1)/(s + 4) (1 at t = 0, final 1/(1 + K) = 1/4).
  const Zpk g = make(1, {}, {Complex(-1, 0)});
  const Zpk c = make(3, {}, {});
  const DisturbanceMetrics load = response(c, g, DisturbanceInput::Load, 0.02, true);
  CHECK_FALSE(load.rejected);
  CHECK(load.final_value == Approx(0.25).epsilon(1e-12));
  CHECK(load.peak == Approx(0.25).epsilon(1e-6));
  CHECK_FALSE(load.recovery_time_s);
  CHECK_FALSE(load.iae);
  const DisturbanceMetrics out = response(c, g, DisturbanceInput::Output, 0.02, true);
  CHECK_FALSE(out.rejected);
  CHECK(out.final_value == Approx(0.25).epsilon(1e-12));
  CHECK(out.peak == Approx(1.0).epsilon(1e-12));
}

TEST_CASE("an integrator in the plant rejects an output step but not a load step", "[analysis][disturbance]") {
  // By hand: G = 1/s, C = 2: G S = 1/(s + 2) -> final 1/2 = 1/C(0); S = s/(s + 2) -> final 0.
  const Zpk g = make(1, {}, {kOrigin});
  const Zpk c = make(2, {}, {});
  const DisturbanceMetrics load = response(c, g, DisturbanceInput::Load, 0.02, true);
  CHECK_FALSE(load.rejected);
  CHECK(load.final_value == Approx(0.5).epsilon(1e-12));
  const DisturbanceMetrics out = response(c, g, DisturbanceInput::Output, 0.02, true);
  CHECK(out.rejected);
  CHECK(*out.iae == Approx(0.5).epsilon(1e-5));  // integral of e^-2t
}

TEST_CASE("disturbance_loop keeps the closed-loop poles of the reference loop", "[analysis][disturbance]") {
  const Zpk g = make(4, {}, {kOrigin, Complex(-2, 0)});
  const Zpk c = make(4.68, {Complex(-2.9, 0)}, {Complex(-5.4, 0)});
  const LoopParts parts = make_loop_parts(c, plant_of(g), 6);
  auto sorted = [](CVec v) {
    std::vector<Complex> out(v.data(), v.data() + v.size());
    std::sort(out.begin(), out.end(), [](Complex a, Complex b) { return a.real() != b.real() ? a.real() < b.real() : a.imag() < b.imag(); });
    return out;
  };
  const auto ref = sorted(closed_loop_eigenvalues(close_loop(parts.compensator, parts.plant)));
  for (const DisturbanceInput where : {DisturbanceInput::Load, DisturbanceInput::Output}) {
    const auto got = sorted(closed_loop_eigenvalues(disturbance_loop(parts, where)));
    REQUIRE(got.size() == ref.size());
    for (size_t i = 0; i < got.size(); ++i) CHECK(std::abs(got[i] - ref[i]) < 1e-9 * std::abs(ref[i]));
  }
}

TEST_CASE("noise gain |C S| of a PI with its zero on the plant pole rises to |C(j inf)|", "[analysis][disturbance][noise]") {
  // By hand: G = 1/(s + 1), C = 2 (s + 1)/s: C S = 2 (s + 1)/(s + 2), |C S(jw)| = 2 sqrt((w^2 + 1)/(w^2 + 4))
  // increases with w towards 2 = |C(j inf)|.
  const Zpk g = make(1, {}, {Complex(-1, 0)});
  const Zpk c = make(2, {Complex(-1, 0)}, {kOrigin});
  const NoiseMetrics n = noise_metrics(c, zpk_series(c, g), 0.0, FrequencyOptions{});
  CHECK(n.high_frequency_gain == Approx(2.0).epsilon(1e-15));
  REQUIRE(n.effort_peak);
  CHECK(*n.effort_peak == Approx(2.0).epsilon(1e-12));
  CHECK_FALSE(n.effort_peak_at_rad_s);  // the supremum is the limit w -> inf
}

TEST_CASE("noise gain peak of a lightly damped loop sits at the resonance", "[analysis][disturbance][noise]") {
  // By hand: G = 1/(s (s + 0.2)), C = 1 (strictly proper C = 1 has C(inf) = 1):
  // C S = s (s + 0.2) / (s^2 + 0.2 s + 1), at w = 1: |j (j + 0.2)| / |0.2 j| = sqrt(1.04) / 0.2 = 5.0990;
  // near that, |C S|^2 = w^2 (w^2 + 0.04) / ((1 - w^2)^2 + 0.04 w^2), whose maximum is checked by the
  // refined value being at least the value at w = 1 and |C S(1.0005)| (a finite difference check).
  const Zpk g = make(1, {}, {kOrigin, Complex(-0.2, 0)});
  const Zpk c = make(1, {}, {});
  const NoiseMetrics n = noise_metrics(c, zpk_series(c, g), 0.0, FrequencyOptions{});
  auto mag = [](double w) { return std::sqrt(w * w * (w * w + 0.04) / ((1 - w * w) * (1 - w * w) + 0.04 * w * w)); };
  REQUIRE(n.effort_peak);
  REQUIRE(n.effort_peak_at_rad_s);
  CHECK(*n.effort_peak == Approx(mag(*n.effort_peak_at_rad_s)).epsilon(1e-12));
  CHECK(*n.effort_peak >= mag(1.0));
  CHECK(*n.effort_peak >= mag(0.999));
  CHECK(*n.effort_peak >= mag(1.001));
  CHECK(*n.effort_peak == Approx(std::sqrt(1.04) / 0.2).epsilon(1e-2));  // the peak is a little off w = 1
}

TEST_CASE("controller gain at a stated frequency: |C(jw)| of a lead by hand", "[analysis][disturbance][noise]") {
  // By hand: C = 10 (s + 2)/(s + 20) has |C(j20)| = 10 sqrt(404) / sqrt(800) = 7.1063 and
  // |C(j inf)| = 10; the noise peak |C S| is unchanged by the stated frequency.
  const Zpk g = make(1, {}, {kOrigin, Complex(-1, 0)});
  const Zpk c = make(10, {Complex(-2, 0)}, {Complex(-20, 0)});
  const NoiseMetrics inf = noise_metrics(c, zpk_series(c, g), 0.0, FrequencyOptions{});
  const NoiseMetrics at = noise_metrics(c, zpk_series(c, g), 0.0, FrequencyOptions{}, 20.0);
  CHECK(inf.high_frequency_gain == Approx(10.0).epsilon(1e-15));
  CHECK(at.high_frequency_gain == Approx(10.0 * std::sqrt(404.0 / 800.0)).epsilon(1e-14));
  REQUIRE(inf.effort_peak);
  REQUIRE(at.effort_peak);
  CHECK(*at.effort_peak == *inf.effort_peak);
}
