// Margins, crossovers, bandwidth and peak sensitivity of a loop known only by measured points,
// interpolated on a log-frequency axis (log magnitude and unwrapped phase linear in log w).
#pragma once

#include <string>
#include <vector>

#include "polewright/analysis/disturbance.hpp"
#include "polewright/analysis/frequency.hpp"
#include "polewright/model/measured.hpp"

namespace pw {

struct MeasuredMetrics {
  FrequencyMetrics figures;        // the same figures as for a model, from the data alone
  std::vector<std::string> notes;  // what the measured range cannot show (a crossing beyond it)
};

// Figures of the loop L(jw) given as data (see measured_multiply for C times a measured plant).
// The data show no integrators: the low-frequency limits come from the lowest measured point (the
// bandwidth level is 3 dB below |T| there; a phase within 30 deg of -180 there counts as a phase
// crossover at the bottom of the range). The grid is the measured
// points; of `options` only dense_peak_scan applies.
MeasuredMetrics measured_loop_metrics(const MeasuredResponse& loop, const FrequencyOptions& options);

// The noise figures of compensator C with the measured loop L = C G: the peak of |C S| over the
// measured points (refined between them), and above the data the limit |C(j inf)| of a biproper C
// (the plant is taken to roll off beyond the measurement; a note says when the peak sits at the
// top of the range). |C(jw)| at `gain_at_rad_s` (or at infinity) as for a model.
NoiseMetrics measured_noise_metrics(const Zpk& compensator, const MeasuredResponse& loop, const FrequencyOptions& options,
                                    std::optional<double> gain_at_rad_s, std::vector<std::string>* notes = nullptr);

}  // namespace pw
