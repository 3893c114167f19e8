#include <catch2/catch.hpp>

#include <cmath>

#include "polewright/analysis/frequency.hpp"

#include "support/make_zpk.hpp"

using namespace pw;

using pw::test::make;

TEST_CASE("standard loop: PM 51.8 deg and bandwidth 6.36 rad/s (closed-form second-order results)", "[analysis][frequency]") {
  // PM = atan(2 zeta / sqrt(sqrt(1 + 4 zeta^4) - 2 zeta^2)), wb = wn sqrt(1 - 2 zeta^2 + sqrt(4 zeta^4 - 4 zeta^2 + 2)).
  const Zpk L = make(25, {}, {Complex(0, 0), Complex(-5, 0)});
  const FrequencyMetrics m = frequency_metrics(L, 0.0, FrequencyOptions{});
  const double z = 0.5;
  const double pm = std::atan(2 * z / std::sqrt(std::sqrt(1 + 4 * z * z * z * z) - 2 * z * z)) * 180 / M_PI;
  const double wb = 5 * std::sqrt(1 - 2 * z * z + std::sqrt(4 * z * z * z * z - 4 * z * z + 2));
  REQUIRE(m.phase_margin_deg);
  CHECK(*m.phase_margin_deg == Approx(pm).epsilon(1e-10));
  CHECK(*m.bandwidth_rad_s == Approx(wb).epsilon(1e-10));
  CHECK(pm == Approx(51.83).margin(0.01));
  CHECK(wb == Approx(6.36).margin(0.005));
  CHECK(m.critical_gains.empty());  // no phase crossover: unbounded gain margin
  CHECK_FALSE(m.gain_margin_db);
}

TEST_CASE("K/(s(s+1)(s+2)) with K = 2: phase crossover at sqrt 2, gain margin 20 log10 3", "[analysis][frequency]") {
  // Routh: the limit gain is 6 at w = sqrt(2) (classic textbook example, derivable by hand).
  const Zpk L = make(2, {}, {Complex(0, 0), Complex(-1, 0), Complex(-2, 0)});
  const FrequencyMetrics m = frequency_metrics(L, 0.0, FrequencyOptions{});
  REQUIRE(m.phase_crossovers_rad_s.size() == 1);
  CHECK(m.phase_crossovers_rad_s[0] == Approx(std::sqrt(2.0)).epsilon(1e-10));
  CHECK(*m.gain_increase_db == Approx(20 * std::log10(3.0)).epsilon(1e-10));
  CHECK_FALSE(m.gain_reduction_db);
  CHECK(*m.gain_margin_db == *m.gain_increase_db);
}

TEST_CASE("open-loop unstable K/(s - 1): a gain-reduction limit at DC", "[analysis][frequency]") {
  // Closed-loop pole at 1 - K: stable only for K > 1, so with K = 2 the gain may drop by 2 (6.02 dB).
  const Zpk L = make(2, {}, {Complex(1, 0)});
  const FrequencyMetrics m = frequency_metrics(L, 0.0, FrequencyOptions{});
  REQUIRE(m.gain_reduction_db);
  CHECK(*m.gain_reduction_db == Approx(20 * std::log10(2.0)).epsilon(1e-12));
  CHECK_FALSE(m.gain_increase_db);
  CHECK(*m.gain_margin_db == *m.gain_reduction_db);
}

TEST_CASE("dead time uses the exact e^-jwT: integrator with delay", "[analysis][frequency]") {
  // L = e^-sT / s: |L| = 1 at w = 1, PM = 90 - T (rad -> deg); phase crossover at w = pi/(2T),
  // gain margin 20 log10(pi / (2T)) (closed form).
  const double T = 0.1;
  const Zpk L = make(1, {}, {Complex(0, 0)});
  const FrequencyMetrics m = frequency_metrics(L, T, FrequencyOptions{});
  CHECK(*m.crossover_rad_s == Approx(1.0).epsilon(1e-10));
  CHECK(*m.phase_margin_deg == Approx(90.0 - T * 180 / M_PI).epsilon(1e-10));
  CHECK(m.phase_crossovers_rad_s.front() == Approx(M_PI / (2 * T)).epsilon(1e-10));
  CHECK(*m.gain_margin_db == Approx(20 * std::log10(M_PI / (2 * T))).epsilon(1e-10));
  CHECK(std::abs(loop_response(L, T, 3.0) - std::polar(1.0 / 3.0, -M_PI / 2 - 0.3)) < 1e-14);
}

TEST_CASE("first-order loop bandwidth and sensitivity peak", "[analysis][frequency]") {
  // L = a/s: T = a/(s + a) has its 3 dB point at w = a; |S| = w/sqrt(w^2 + a^2) < 1, peak -> 1.
  const Zpk L = make(7, {}, {Complex(0, 0)});
  const FrequencyMetrics m = frequency_metrics(L, 0.0, FrequencyOptions{});
  CHECK(*m.bandwidth_rad_s == Approx(7.0).epsilon(1e-10));
  CHECK(*m.peak_sensitivity <= 1.0);
  CHECK(*m.peak_sensitivity > 0.999);
}

TEST_CASE("grid includes points around lightly damped roots; wrap_degrees", "[analysis][frequency]") {
  const Zpk L = make(1, {}, {Complex(-0.06, 60), Complex(-0.06, -60)});
  const std::vector<double> w = frequency_grid(L, 0.0, FrequencyOptions{});
  CHECK(std::is_sorted(w.begin(), w.end()));
  CHECK(std::find_if(w.begin(), w.end(), [](double x) { return std::abs(x - std::abs(Complex(-0.06, 60))) < 1e-9; }) != w.end());
  CHECK(wrap_degrees(190) == Approx(-170));
  CHECK(wrap_degrees(-180) == Approx(180));
  CHECK(wrap_degrees(540) == Approx(180));
  std::string err;
  FrequencyOptions bad;
  bad.points_per_decade = 1;
  CHECK_FALSE(bad.IsValid(&err));
}

TEST_CASE("frequency_metrics_of: any response function on a given grid", "[analysis][frequency][export]") {
  // The same K/(s(s+1)(s+2)), K = 2, handed over as a function: the Routh limit gain 6 -> gain
  // margin 20 log10 3 at w = sqrt 2 (derivable by hand), as frequency_metrics finds it.
  const Zpk L = make(2, {}, {Complex(0, 0), Complex(-1, 0), Complex(-2, 0)});
  const LoopResponse Lw(L, 0.0);
  ResponseLimits lim;
  lim.type = 1;
  const FrequencyMetrics m =
      frequency_metrics_of([&](double w) { return Lw(w); }, frequency_grid(L, 0.0, FrequencyOptions{}), lim, FrequencyOptions{});
  REQUIRE(m.gain_margin_db);
  CHECK(*m.gain_margin_db == Approx(20 * std::log10(3.0)).epsilon(1e-10));
  CHECK(*m.gain_margin_at_rad_s == Approx(std::sqrt(2.0)).epsilon(1e-10));
  const FrequencyMetrics ref = frequency_metrics(L, 0.0, FrequencyOptions{});
  CHECK(*m.phase_margin_deg == Approx(*ref.phase_margin_deg).epsilon(1e-14));
  // An upper-end crossing supplied by the caller counts like any other phase crossover.
  lim.upper_crossing = std::make_pair(10.0, 1.5);
  const FrequencyMetrics u =
      frequency_metrics_of([&](double w) { return Lw(w); }, frequency_grid(L, 0.0, FrequencyOptions{}), lim, FrequencyOptions{});
  CHECK(*u.gain_margin_db == Approx(20 * std::log10(1.5)).epsilon(1e-12));
  CHECK_THROWS(frequency_metrics_of([&](double w) { return Lw(w); }, {1.0}, lim, FrequencyOptions{}));
}

TEST_CASE("the frequency grid covers a crossover far above every root (asymptote bound)", "[analysis][frequency]") {
  // Issue 18: L = 1e6 / (s (s + 1e-6)). |L(jw)| = 1e6 / (w sqrt(w^2 + 1e-12)) = 1 at w = 1000 rad/s
  // (closed form); the phase there is -90 - atan(1e9) deg, so PM = atan(1e-9) = 5.7e-8 deg and
  // |S| = 1 / |1 + L| = 1 / (2 sin(PM / 2)) ~ 1e9. The old grid stopped at 100 rad/s.
  const Zpk L = make(1e6, {}, {Complex(0, 0), Complex(-1e-6, 0)});
  const std::vector<double> w = frequency_grid(L, 0.0, FrequencyOptions{});
  CHECK(w.back() > 1000.0);
  const FrequencyMetrics m = frequency_metrics(L, 0.0, FrequencyOptions{});
  REQUIRE(m.crossover_rad_s);
  CHECK(*m.crossover_rad_s == Approx(1000.0).epsilon(1e-9));
  REQUIRE(m.phase_margin_deg);
  CHECK(*m.phase_margin_deg < 1e-3);
  REQUIRE(m.peak_sensitivity);
  CHECK(*m.peak_sensitivity > 1e4);
  // The low end: L = 1e-8 / s^2 (s + 1) crosses at w = 1e-4 (closed form, |L| ~ 1e-8 / w^2 there).
  const Zpk slow = make(1e-8, {}, {Complex(0, 0), Complex(0, 0), Complex(-1, 0)});
  const FrequencyMetrics ms = frequency_metrics(slow, 0.0, FrequencyOptions{});
  REQUIRE(ms.crossover_rad_s);
  CHECK(*ms.crossover_rad_s == Approx(1e-4).epsilon(1e-6));
  CHECK(*ms.peak_sensitivity >= 1.0);
}

TEST_CASE("a strictly proper loop never reports a peak sensitivity below 1", "[analysis][frequency]") {
  // S(j inf) = 1 for a strictly proper loop, so sup |S| >= 1 (Bode); a spread of loop gains over
  // twelve decades, each with its grid chosen automatically.
  for (double k : {1e-6, 1e-3, 1.0, 1e3, 1e6, 1e9}) {
    INFO("gain " << k);
    const Zpk L = make(k, {Complex(-3, 0)}, {Complex(0, 0), Complex(-1e-3, 0), Complex(-50, 0)});
    const FrequencyMetrics m = frequency_metrics(L, 0.0, FrequencyOptions{});
    REQUIRE(m.peak_sensitivity);
    CHECK(*m.peak_sensitivity >= 1.0 - 1e-9);
  }
}
