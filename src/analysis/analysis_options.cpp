#include "polewright/analysis/analysis_options.hpp"

#include <algorithm>

#include "polewright/model/types.hpp"

namespace pw {

bool AnalysisOptions::IsValid(std::string* error) const {
  if (pade_order < 1 || pade_order > kMaxPadeOrder) {
    if (error) *error = "pade_order must be within 1..12";
    return false;
  }
  if (!(residue_share > 0.0 && residue_share < 1.0)) {
    if (error) *error = "residue_share must be within (0, 1)";
    return false;
  }
  return step.IsValid(error) && frequency.IsValid(error);
}

AnalysisOptions AnalysisOptions::Screening(const AnalysisOptions& base) {
  AnalysisOptions o = base;
  o.step.adaptive_samples = false;
  o.step.exact_refinement = false;
  o.step.keep_trace = false;
  o.step.samples = std::min(o.step.samples, 1000);
  o.frequency.points_per_decade = 20;
  o.frequency.delay_grid_floor = 0.05;
  o.frequency.dense_peak_scan = false;
  return o;
}

}  // namespace pw
