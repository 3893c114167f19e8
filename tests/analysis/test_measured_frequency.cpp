#include <catch2/catch.hpp>

#include <cmath>

#include "polewright/analysis/measured_frequency.hpp"

#include "support/make_zpk.hpp"
#include "support/measured_fixture.hpp"

using namespace pw;
using pw::test::make;

namespace {

bool has_note(const MeasuredMetrics& m, const std::string& part) {
  for (const auto& n : m.notes)
    if (n.find(part) != std::string::npos) return true;
  return false;
}

// The points of `d` with w_lo <= w <= w_hi.
MeasuredResponse slice(const MeasuredResponse& d, double w_lo, double w_hi) {
  MeasuredResponse r;
  r.source = d.source;
  for (size_t i = 0; i < d.size(); ++i)
    if (d.w_rad_s[i] >= w_lo && d.w_rad_s[i] <= w_hi) {
      r.w_rad_s.push_back(d.w_rad_s[i]);
      r.log_mag.push_back(d.log_mag[i]);
      r.phase_rad.push_back(d.phase_rad[i]);
    }
  return r;
}

}  // namespace

TEST_CASE("margins from noisy data of a resonant stage within 0.3 deg / 0.2 dB of scipy's exact ones", "[analysis][measured]") {
  // Reference: make_measured_fixture.py, scipy.signal.freqresp of the true plant, crossings by brentq.
  const auto c = pw::test::measured_case("resonant_stage");
  const MeasuredMetrics m = measured_loop_metrics(measured_multiply(c.data, c.compensator), FrequencyOptions{});
  const auto& ref = c.loop;
  REQUIRE(m.figures.gain_crossovers_rad_s.size() == ref["gain_crossovers"].size());
  REQUIRE(m.figures.phase_margin_deg);
  CHECK(*m.figures.phase_margin_deg == Approx(ref["phase_margins_deg"][0].get<double>()).margin(0.3));
  CHECK(*m.figures.crossover_rad_s == Approx(ref["gain_crossovers"][0].get<double>()).epsilon(0.005));
  REQUIRE(m.figures.phase_crossovers_rad_s.size() == ref["phase_crossovers"].size());
  REQUIRE(m.figures.gain_margin_db);
  CHECK(*m.figures.gain_margin_db == Approx(ref["gain_margins_db"][0].get<double>()).margin(0.2));
  // The phase falls by about 15 deg per unit of ln w there, so 0.1 deg of phase noise moves the
  // crossing by about 0.7 %: 2 % on its frequency, while the margin itself holds 0.2 dB.
  CHECK(*m.figures.gain_margin_at_rad_s == Approx(ref["phase_crossovers"][0].get<double>()).epsilon(0.02));
  REQUIRE(m.figures.peak_sensitivity);
  CHECK(*m.figures.peak_sensitivity == Approx(ref["peak_sensitivity"].get<double>()).epsilon(0.005));
  // |T(0)| is read off the lowest point (0.99992 here, where T(0) = 1 with the integrator).
  REQUIRE(m.figures.bandwidth_rad_s);
  CHECK(*m.figures.bandwidth_rad_s == Approx(ref["bandwidth"].get<double>()).epsilon(0.01));
  CHECK(m.notes.empty());  // |L| falls far below -20 dB at the top, far above 0 dB at the bottom
}

TEST_CASE("margins from noisy data of a plant with dead time: every phase crossover, within 0.2 dB", "[analysis][measured]") {
  const auto c = pw::test::measured_case("delayed_heater");
  const MeasuredMetrics m = measured_loop_metrics(measured_multiply(c.data, c.compensator), FrequencyOptions{});
  const auto& ref = c.loop;
  REQUIRE(m.figures.phase_margin_deg);
  CHECK(*m.figures.phase_margin_deg == Approx(ref["phase_margins_deg"][0].get<double>()).margin(0.3));
  REQUIRE(m.figures.phase_crossovers_rad_s.size() == ref["phase_crossovers"].size());
  for (size_t i = 0; i < m.figures.critical_gains.size(); ++i) {
    CHECK(m.figures.phase_crossovers_rad_s[i] == Approx(ref["phase_crossovers"][i].get<double>()).epsilon(0.005));
    CHECK(20 * std::log10(m.figures.critical_gains[i]) == Approx(ref["gain_margins_db"][i].get<double>()).margin(0.2));
  }
  CHECK(*m.figures.gain_margin_db == Approx(ref["gain_margins_db"][0].get<double>()).margin(0.2));
  CHECK(*m.figures.peak_sensitivity == Approx(ref["peak_sensitivity"].get<double>()).epsilon(0.005));
  REQUIRE(m.figures.bandwidth_rad_s);
  CHECK(*m.figures.bandwidth_rad_s == Approx(ref["bandwidth"].get<double>()).epsilon(0.01));
}

TEST_CASE("measured metrics note crossings that the measured range cannot show", "[analysis][measured]") {
  const auto c = pw::test::measured_case("resonant_stage");
  const MeasuredResponse loop = measured_multiply(c.data, c.compensator);
  // Cut below the crossover (0.67 rad/s): |L| is still above 0 dB at the top.
  const MeasuredMetrics low = measured_loop_metrics(slice(loop, 0.01, 0.4), FrequencyOptions{});
  CHECK_FALSE(low.figures.phase_margin_deg);
  CHECK(has_note(low, "a gain crossover above the data is not seen"));
  // Cut above the crossover: |L| is below 0 dB at the bottom.
  const MeasuredMetrics high = measured_loop_metrics(slice(loop, 1.0, 100.0), FrequencyOptions{});
  CHECK(has_note(high, "a gain crossover below the data is not seen"));
  // Cut below the phase crossover (11.5 rad/s) where |L| is about -30 dB: no note (a margin beyond
  // would exceed 20 dB); cut at 2 rad/s, where |L| is about -14 dB: the note.
  CHECK_FALSE(has_note(measured_loop_metrics(slice(loop, 0.01, 8.0), FrequencyOptions{}), "phase crossover above"));
  CHECK(has_note(measured_loop_metrics(slice(loop, 0.01, 2.0), FrequencyOptions{}), "phase crossover above"));
}

TEST_CASE("measured metrics of exact samples of -2/(s+1)^2: inverted loop, phase crossover at the bottom", "[analysis][measured]") {
  // L(0) = -2: a gain reduction by 2 (6.02 dB) reaches -1 (analytic); the phase starts at -180.
  MeasuredResponse d;
  d.source = "exact";
  for (int i = 0; i <= 120; ++i) {
    const double w = std::pow(10.0, -2.0 + 4.0 * i / 120);
    const Complex v = -2.0 / std::pow(Complex(1, w), 2);
    d.w_rad_s.push_back(w);
    d.log_mag.push_back(std::log(std::abs(v)));
    d.phase_rad.push_back(-M_PI - 2 * std::atan(w));
  }
  const MeasuredMetrics m = measured_loop_metrics(d, FrequencyOptions{});
  REQUIRE(m.figures.gain_reduction_db);
  CHECK(*m.figures.gain_reduction_db == Approx(20 * std::log10(2.0)).margin(1e-3));
  CHECK(m.figures.phase_crossovers_rad_s.front() == d.w_min());
  CHECK(has_note(m, "within 30 deg of -180"));
  // |L| = 1 at w = 1 (2 / (1 + w^2) = 1), angle -180 - 90: phase margin -90 deg (analytic).
  REQUIRE(m.figures.phase_margin_deg);
  CHECK(*m.figures.phase_margin_deg == Approx(-90.0).margin(0.05));
  CHECK(*m.figures.crossover_rad_s == Approx(1.0).epsilon(1e-3));
}
