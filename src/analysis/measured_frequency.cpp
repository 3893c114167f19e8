#include "polewright/analysis/measured_frequency.hpp"

#include "../model/format_text.hpp"

#include <cmath>
#include <cstdio>

namespace pw {

namespace {

using detail::fmt;

}  // namespace

MeasuredMetrics measured_loop_metrics(const MeasuredResponse& loop, const FrequencyOptions& options) {
  if (loop.size() < 2) throw MeasuredDataError(loop.source + ": a loop needs two measured points or more");
  MeasuredMetrics out;
  ResponseLimits lim;
  lim.type = 0;
  const double lo_mag = std::exp(loop.log_mag.front()), hi_mag = std::exp(loop.log_mag.back());
  const double lo_phase = wrap_degrees(180.0 + loop.phase_rad.front() * 180.0 / M_PI);  // distance from -180
  const bool inverted = std::abs(lo_phase) < 30.0;
  // Not inverted: a positive L0 with L0 / (1 + L0) = |T| at the lowest point, so the bandwidth
  // level is 3 dB below the measured |T| there (for a loop with integrators |T| is close to 1 while
  // |L| / (1 + |L|) would not be).
  const Complex l_lo = loop.point(0);
  const double t_lo = std::abs(l_lo / (1.0 + l_lo));
  lim.low_frequency_gain = inverted ? -lo_mag : (t_lo < 1.0 - 1e-12 ? t_lo / (1.0 - t_lo) : 1e12);
  if (inverted)
    out.notes.push_back(fmt("the phase at the lowest measured frequency (%.4g rad/s) is within 30 deg of -180: counted as a phase crossover there",
                            loop.w_min()));
  out.figures = frequency_metrics_of([&loop](double w) { return loop.at(w); }, loop.w_rad_s, lim, options);
  FrequencyMetrics& m = out.figures;
  if (inverted && !m.phase_crossovers_rad_s.empty() && m.phase_crossovers_rad_s.front() == 0.0)
    m.phase_crossovers_rad_s.front() = loop.w_min();
  if (m.gain_margin_at_rad_s && *m.gain_margin_at_rad_s == 0.0) m.gain_margin_at_rad_s = loop.w_min();
  if (hi_mag > 1.0)
    out.notes.push_back(fmt("|L| is still %+.3g dB at the highest measured frequency (%.4g rad/s): a gain crossover above the data is not seen",
                            20.0 * std::log10(hi_mag), loop.w_max()));
  else if (hi_mag >= 0.1)
    out.notes.push_back(fmt("|L| is %+.3g dB at the highest measured frequency (%.4g rad/s): a phase crossover above the data (a gain margin "
                            "below 20 dB) is not seen",
                            20.0 * std::log10(hi_mag), loop.w_max()));
  if (lo_mag < 1.0)
    out.notes.push_back(fmt("|L| is %+.3g dB at the lowest measured frequency (%.4g rad/s): a gain crossover below the data is not seen",
                            20.0 * std::log10(lo_mag), loop.w_min()));
  if (m.peak_sensitivity_at_rad_s && (*m.peak_sensitivity_at_rad_s <= loop.w_min() || *m.peak_sensitivity_at_rad_s >= loop.w_max()))
    out.notes.push_back(fmt("the largest |S| lies at the edge of the measured range (%.4g rad/s): the true peak may lie beyond it",
                            *m.peak_sensitivity_at_rad_s));
  return out;
}

NoiseMetrics measured_noise_metrics(const Zpk& comp, const MeasuredResponse& loop, const FrequencyOptions& options,
                                    std::optional<double> gain_at_rad_s, std::vector<std::string>* notes) {
  if (loop.size() < 2) throw MeasuredDataError(loop.source + ": a loop needs two measured points or more");
  NoiseMetrics n;
  const double hf = comp.relative_degree() == 0 ? std::abs(comp.gain) : 0.0;
  n.high_frequency_gain = gain_at_rad_s ? std::abs(comp.evaluate(Complex(0.0, *gain_at_rad_s))) : hf;
  auto cs = [&](double w) {
    const Complex l = loop.at(w);
    return std::abs(comp.evaluate(Complex(0.0, w))) / std::abs(1.0 + l);
  };
  const auto pk = refined_grid_peak(cs, loop.w_rad_s, options.dense_peak_scan);
  if (std::isfinite(pk.second)) {
    n.effort_peak = pk.second;
    n.effort_peak_at_rad_s = pk.first;
  }
  if (hf > 0.0 && (!n.effort_peak || hf > *n.effort_peak)) {
    n.effort_peak = hf;
    n.effort_peak_at_rad_s.reset();
  }
  if (notes && n.effort_peak_at_rad_s && *n.effort_peak_at_rad_s >= loop.w_max() * (1.0 - 1e-12))
    notes->push_back(fmt("the largest |C S| lies at the top of the measured range (%.4g rad/s): the true peak may lie beyond it",
                         loop.w_max()));
  return n;
}

}  // namespace pw
