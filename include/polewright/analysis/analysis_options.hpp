// Every numerical setting of one loop evaluation, with documented defaults.
#pragma once

#include <string>

#include "polewright/analysis/frequency.hpp"
#include "polewright/analysis/step.hpp"

namespace pw {

struct AnalysisOptions {
  // Order n of the Pade (n, n) approximant of the dead time (poles, locus, step). Good up to
  // w T ~ n; frequency-domain figures always use the exact e^(-jwT).
  int pade_order = 6;
  // A closed-loop pole "matters" when its share of the step response is at least this fraction.
  double residue_share = 0.02;
  StepOptions step;
  FrequencyOptions frequency;

  bool IsValid(std::string* error) const;

  // The cheap screening settings the design search uses: fixed sample count, no adaptive samples,
  // no exact refinement of event times.
  static AnalysisOptions Screening(const AnalysisOptions& base);
};

}  // namespace pw
