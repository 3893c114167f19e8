// The check job: one compensator against every requirement and every plant variant.
#pragma once

#include <string>

#include "polewright/analysis/locus.hpp"
#include "polewright/requirements/evaluate.hpp"
#include "polewright/requirements/spec.hpp"

namespace pw {

struct CheckOptions {
  LocusOptions locus;       // root-locus tracing of the nominal loop
  bool trace_step = false;  // keep the sampled step responses (reports)
  bool IsValid(std::string* error) const { return locus.IsValid(error); }
};

struct CheckReport {
  std::string spec_name;
  nlohmann::json spec_document;  // the spec as given
  Zpk compensator;
  std::vector<Plant> plants;
  Region region;
  RequirementSet requirements;
  AnalysisOptions analysis;
  Evaluation evaluation;
  Locus locus;  // of the nominal loop
};

// Throws SpecError when the loop cancels an unstable plant pole with a compensator zero (the loop
// would look stable while an internal signal grows).
void check_cancellations(const Zpk& compensator, const Plant& plant, const std::string& path);

CheckReport run_check(const Spec& spec, const Zpk& compensator, const CheckOptions& options = {});

}  // namespace pw
