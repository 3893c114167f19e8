#include <catch2/catch.hpp>

#include <cmath>

#include "polewright/model/measured_fit.hpp"

#include "support/make_zpk.hpp"
#include "support/measured_fixture.hpp"

using namespace pw;
using pw::test::make;

namespace {

// Exact samples of G(jw) e^(-jwT), 60 points per decade over [lo, hi].
MeasuredResponse sampled(const Zpk& g, double delay, double lo, double hi) {
  MeasuredResponse d;
  d.source = "exact";
  const int n = static_cast<int>(std::round(60 * std::log10(hi / lo)));
  double prev = 0.0;
  for (int i = 0; i <= n; ++i) {
    const double w = lo * std::pow(hi / lo, static_cast<double>(i) / n);
    const Complex v = g.evaluate(Complex(0, w));
    double ph = std::arg(v) - w * delay;
    if (i > 0) {
      while (ph - prev > M_PI) ph -= 2 * M_PI;
      while (ph - prev <= -M_PI) ph += 2 * M_PI;
    }
    prev = ph;
    d.w_rad_s.push_back(w);
    d.log_mag.push_back(std::log(std::abs(v)));
    d.phase_rad.push_back(ph);
  }
  return d;
}

// Largest distance from a true root to the nearest fitted one, relative to |true root| (absolute
// for a root at the origin).
double worst_root_error(const Roots& truth, const Roots& fitted) {
  double worst = 0.0;
  for (const Complex& t : truth) {
    double best = INFINITY;
    for (const Complex& f : fitted) best = std::min(best, std::abs(f - t));
    worst = std::max(worst, std::abs(t) > 0.0 ? best / std::abs(t) : best);
  }
  return worst;
}

}  // namespace

TEST_CASE("fit of noisy resonant-stage data recovers its four poles within 0.5 %", "[model][measured_fit]") {
  // Truth from make_measured_fixture.py: 400 / (s (s + 1) (s^2 + 2 s + 400)), 0.2 % / 0.1 deg noise.
  const auto c = pw::test::measured_case("resonant_stage");
  const RationalFit f = fit_rational(c.data, FitOptions{});
  INFO(zpk_to_string(f.model));
  CHECK(f.model.order() == 4);
  CHECK(f.model.zeros.empty());
  CHECK(worst_root_error(c.plant.poles, f.model.poles) < 0.005);  // measured: 0.04 %
  CHECK(f.model.gain == Approx(c.plant.gain).epsilon(0.01));
  CHECK(f.rms_relative_error < 0.006);  // about the noise level (0.2 % in magnitude, 0.1 deg)
  CHECK(f.reflected_poles <= 1);        // the integrator may land a hair to the right, then reflected
  REQUIRE(f.per_decade.size() == 4);    // 0.01 .. 100 rad/s
  CHECK(f.per_decade[0].w_lo == Approx(0.01));
  for (const auto& e : f.per_decade) {
    CHECK(e.points >= 80);
    CHECK(e.rms_magnitude_db < 0.05);
    CHECK(e.rms_phase_deg < 0.3);
  }
}

TEST_CASE("fit of noisy heater data with dead time: delay within 0.5 %, poles and zero within 1 %", "[model][measured_fit]") {
  // Truth: 0.3 (s + 2) / ((s + 0.2) (s + 1)) e^(-0.5 s).
  const auto c = pw::test::measured_case("delayed_heater");
  FitOptions opt;
  opt.estimate_delay = true;
  const RationalFit f = fit_rational(c.data, opt);
  INFO(zpk_to_string(f.model) << " delay " << f.delay_s);
  CHECK(f.delay_s == Approx(0.5).epsilon(0.005));  // measured: 0.004 %
  CHECK(f.model.order() == 2);
  REQUIRE(f.model.zeros.size() == 1);
  CHECK(worst_root_error(c.plant.poles, f.model.poles) < 0.01);  // measured: 0.24 %
  CHECK(worst_root_error(c.plant.zeros, f.model.zeros) < 0.01);  // measured: 0.20 %
  CHECK(zpk_low_frequency_gain(f.model) == Approx(3.0).epsilon(0.01));  // 0.3 * 2 / 0.2
  CHECK_FALSE(f.notes.empty());
}

TEST_CASE("fit of an unstable plant: the pole reflected unless asked otherwise", "[model][measured_fit]") {
  const Zpk g = make(10.0, {}, {Complex(1, 0), Complex(-5, 0)});
  const MeasuredResponse d = sampled(g, 0.0, 0.01, 100.0);
  FitOptions free;
  free.enforce_stable = false;
  const RationalFit exact = fit_rational(d, free);
  CHECK(worst_root_error(g.poles, exact.model.poles) < 1e-6);
  CHECK(exact.reflected_poles == 0);
  const RationalFit stable = fit_rational_order(d, 2, 0, 0.0, FitOptions{});
  CHECK(stable.reflected_poles == 1);
  for (const Complex& p : stable.model.poles) CHECK(p.real() < 0.0);
  CHECK(stable.notes.front().find("reflected") != std::string::npos);
}

TEST_CASE("fit_rational_order on exact samples of a notch-like biproper plant (2 zeros, 2 poles)", "[model][measured_fit]") {
  const Zpk g = make(1.0, {Complex(-0.5, 10), Complex(-0.5, -10)}, {Complex(-5, 8.66), Complex(-5, -8.66)});
  const RationalFit f = fit_rational_order(sampled(g, 0.0, 0.1, 1000.0), 2, 2, 0.0, FitOptions{});
  CHECK(worst_root_error(g.zeros, f.model.zeros) < 1e-6);
  CHECK(worst_root_error(g.poles, f.model.poles) < 1e-6);
  CHECK(f.model.gain == Approx(1.0).epsilon(1e-6));
  CHECK_THROWS_AS(fit_rational_order(sampled(g, 0.0, 0.1, 1000.0), 2, 3, 0.0, FitOptions{}), std::invalid_argument);
}

TEST_CASE("delay_from_phase_slope: exact for a pure dead time, near it with a lag", "[model][measured_fit]") {
  CHECK(delay_from_phase_slope(sampled(make(1.0, {}, {}), 0.3, 0.1, 10.0)) == Approx(0.3).epsilon(1e-9));
  // 1/(s+1) adds -1/(1+w^2) of slope (analytic): -0.0008 by least squares over 10..100 rad/s (numpy polyfit).
  CHECK(delay_from_phase_slope(sampled(make(1.0, {}, {Complex(-1, 0)}), 0.3, 0.1, 100.0)) == Approx(0.3).epsilon(0.01));
  CHECK(delay_from_phase_slope(sampled(make(1.0, {}, {Complex(-1, 0)}), 0.0, 0.1, 100.0)) < 1e-3);
}

TEST_CASE("fit_error_per_decade: zero for the true model, 6.02 dB everywhere for twice its gain", "[model][measured_fit]") {
  const Zpk g = make(2.0, {}, {Complex(-1, 0)});
  const MeasuredResponse d = sampled(g, 0.1, 0.1, 50.0);
  const auto exact = fit_error_per_decade(d, g, 0.1);
  REQUIRE(exact.size() == 3);  // [0.1, 1), [1, 10), [10, 100)
  for (const auto& e : exact) {
    CHECK(e.rms_magnitude_db < 1e-9);
    CHECK(e.rms_phase_deg < 1e-9);
  }
  const auto twice = fit_error_per_decade(d, make(4.0, {}, {Complex(-1, 0)}), 0.1);
  for (const auto& e : twice) CHECK(e.rms_magnitude_db == Approx(20 * std::log10(2.0)).epsilon(1e-9));
}

TEST_CASE("FitOptions::IsValid rejects out-of-range settings", "[model][measured_fit]") {
  std::string why;
  FitOptions o;
  CHECK(o.IsValid(&why));
  o.max_poles = 0;
  CHECK_FALSE(o.IsValid(&why));
  CHECK(why.find("max_poles") != std::string::npos);
  o = FitOptions{};
  o.delay_s = -1;
  CHECK_FALSE(o.IsValid(&why));
  CHECK_THROWS_AS(fit_rational(sampled(make(1.0, {}, {Complex(-1, 0)}), 0.0, 0.1, 10.0), o), std::invalid_argument);
}

TEST_CASE("low-coherence points barely count: a corrupted band with coherence 0.02 leaves the fit intact", "[model][measured_fit]") {
  // Truth 5 / ((s + 0.5)(s + 4)); between 1 and 2 rad/s the magnitude is off by a factor 1.5
  // (3.5 dB) and the phase by 20 deg, as an excitation dropout would leave it, with coherence 0.02.
  const Zpk g = make(5.0, {}, {Complex(-0.5, 0), Complex(-4, 0)});
  MeasuredResponse d = sampled(g, 0.0, 0.01, 100.0);
  d.coherence.assign(d.size(), 1.0);
  for (size_t k = 0; k < d.size(); ++k)
    if (d.w_rad_s[k] > 1.0 && d.w_rad_s[k] < 2.0) {
      d.log_mag[k] += std::log(1.5);
      d.phase_rad[k] += 20.0 * M_PI / 180.0;
      d.coherence[k] = 0.02;
    }
  const RationalFit weighted = fit_rational_order(d, 2, 0, 0.0, FitOptions{});
  CHECK(worst_root_error(g.poles, weighted.model.poles) < 1e-3);  // measured: 7e-5
  MeasuredResponse trusting = d;
  trusting.coherence.clear();  // every point counts fully: the band pulls the poles away
  const RationalFit plain = fit_rational_order(trusting, 2, 0, 0.0, FitOptions{});
  CHECK(worst_root_error(g.poles, plain.model.poles) > 0.05);  // measured: 0.17
}

TEST_CASE("fit of a flat response (a pure gain of 2): finite figures and the gain kept", "[model][measured_fit]") {
  const MeasuredResponse d = sampled(make(2.0, {}, {}), 0.0, 0.1, 10.0);
  const RationalFit f = fit_rational(d, FitOptions{});
  CHECK(std::isfinite(f.criterion));
  CHECK(std::isfinite(f.rms_relative_error));
  CHECK(f.rms_relative_error < 1e-6);
  CHECK(std::abs(f.model.evaluate(Complex(0, 1.0))) == Approx(2.0).epsilon(1e-6));
  for (const auto& e : f.per_decade) CHECK(e.rms_magnitude_db < 1e-4);
}
