// Margins, crossovers, bandwidth and peak sensitivity of a loop known only by measured points,
// interpolated on a log-frequency axis (log magnitude and unwrapped phase linear in log w).
#pragma once

#include <string>
#include <vector>

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

}  // namespace pw
