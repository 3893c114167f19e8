// Loop frequency response L(jw) = C(jw) G(jw) e^(-jwT) with the exact delay, and the margins.
#pragma once

#include <functional>
#include <optional>
#include <utility>
#include <string>
#include <vector>

#include "polewright/model/zpk.hpp"

namespace pw {

struct FrequencyOptions {
  // Logarithmic grid density; extra points are always added around lightly damped roots and, with
  // a dead time, at a linear spacing of 0.5 / T up to 200 / T.
  int points_per_decade = 60;
  // Grid limits; 0 picks them from the roots (two decades beyond the outermost, widened until the
  // crossovers are bracketed).
  double w_min = 0.0;
  double w_max = 0.0;
  // With a dead time, the linear grid stops where |L| has fallen below this floor on the
  // logarithmic grid (phase crossovers there give gain margins above -20 log10(floor) dB).
  // 0 keeps the whole linear grid; the search's screening uses 0.05 (26 dB).
  double delay_grid_floor = 0.0;
  // Rescan the neighbourhood of the largest |S| grid value with 64 points before refining it (a
  // sharp peak can sit between grid points); the screening path skips it.
  bool dense_peak_scan = true;

  bool IsValid(std::string* error) const;
};

// L(jw) for the rational part `loop` and dead time `delay_s`.
Complex loop_response(const Zpk& loop, double delay_s, double w);

// The same, prepared once for many frequencies: conjugate pairs become real quadratics in w
// (one complex multiply per pair), numerator and denominator are multiplied separately with
// power-of-two rescaling so no order overflows, and one division ends each evaluation.
class LoopResponse {
 public:
  LoopResponse(const Zpk& loop, double delay_s);
  Complex operator()(double w) const;

 private:
  struct Factor { double c0, c1; bool quadratic; };  // (c0 - w^2) + j c1 w, or c0 + j w
  std::vector<Factor> num_, den_;
  double gain_;
  double delay_;
};

std::vector<double> frequency_grid(const Zpk& loop, double delay_s, const FrequencyOptions& options);

struct FrequencyMetrics {
  std::vector<double> gain_crossovers_rad_s;   // |L| = 1, ascending
  std::vector<double> phase_margins_deg;       // one per gain crossover
  std::vector<double> phase_crossovers_rad_s;  // angle L = -180 mod 360, ascending (0 = the DC limit)
  std::vector<double> critical_gains;          // 1 / |L| at each phase crossover
  std::optional<double> phase_margin_deg;      // smallest over gain crossovers
  std::optional<double> phase_margin_at_rad_s;
  std::optional<double> crossover_rad_s;       // highest gain crossover
  std::optional<double> gain_increase_db;      // nearest critical gain above 1
  std::optional<double> gain_reduction_db;     // nearest critical gain below 1 (positive dB)
  std::optional<double> gain_margin_db;        // smaller of the two
  std::optional<double> gain_margin_at_rad_s;
  std::optional<double> bandwidth_rad_s;       // |T| 3 dB below |T(0)|
  std::optional<double> peak_sensitivity;      // max |S|
  std::optional<double> peak_sensitivity_at_rad_s;
  std::optional<double> peak_complementary;    // max |T|
  double grid_min_rad_s = 0.0;
  double grid_max_rad_s = 0.0;
};

FrequencyMetrics frequency_metrics(const Zpk& loop, double delay_s, const FrequencyOptions& options);

// What the margin code needs to know about a loop beyond its values on the grid.
struct ResponseLimits {
  int type = 0;                   // integrators in the loop
  double low_frequency_gain = 0;  // L(0) when type == 0 (a negative L(0) is a phase crossover at 0)
  // A phase crossover at the upper end of the grid: (frequency, critical gain 1 / |L|), e.g. the
  // high-frequency limit of a biproper loop or the Nyquist frequency of a sampled loop.
  std::optional<std::pair<double, double>> upper_crossing;
};

// The same figures for any loop response (for example a sampled loop L(e^{jwT})) on a given
// ascending grid of positive frequencies; the crossings and peaks are refined exactly as above.
FrequencyMetrics frequency_metrics_of(const std::function<Complex(double)>& response, const std::vector<double>& grid,
                                      const ResponseLimits& limits, const FrequencyOptions& options);

// The largest value of f over an ascending grid, refined like the |S| peak of frequency_metrics: the
// best grid point's two neighbouring intervals rescanned with 64 points (dense_scan) and a golden
// section in log w. Returns (w, f(w)).
std::pair<double, double> refined_grid_peak(const std::function<double(double)>& f, const std::vector<double>& grid,
                                            bool dense_scan);

// 180 + angle wrapped into (-180, 180].
double wrap_degrees(double deg);

}  // namespace pw
