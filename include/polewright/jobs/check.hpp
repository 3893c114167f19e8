// The check job: one compensator against every requirement and every plant variant.
#pragma once

#include <string>

#include "polewright/analysis/locus.hpp"
#include "polewright/jobs/sample_time.hpp"
#include "polewright/requirements/evaluate.hpp"
#include "polewright/requirements/sampled_evaluate.hpp"
#include "polewright/requirements/spec.hpp"

namespace pw {

struct CheckOptions {
  LocusOptions locus;       // root-locus tracing of the nominal loop
  bool trace_step = false;  // keep the sampled step responses (reports)
  // Where the compensator came from, as the JSON path its errors name (a compensator zero that
  // cancels an unstable plant pole, ...): the spec's current by default; "$" for a compensator
  // file of its own, "$.candidates[2].compensator" for one read from a result.
  std::string compensator_path = "$.current";
  // Also search the slowest sample time that meets (sample_time.hpp), with the spec's
  // implementation (method, delay in samples, word length) or, without one, Tustin, no delay, double.
  bool find_sample_time = false;
  SampleTimeOptions sample_time;
  bool IsValid(std::string* error) const { return locus.IsValid(error) && sample_time.IsValid(error); }
};

struct CheckReport {
  std::string spec_name;
  nlohmann::json spec_document;  // the spec as given
  Zpk compensator;
  std::vector<Plant> plants;
  Region region;
  RequirementSet requirements;
  AnalysisOptions analysis;
  // The verdict. With an implementation block in the spec: the sampled loop's (every figure of
  // the sampled loop, step figures between the samples too), and the continuous loop's figures
  // are in `continuous`; without one, the continuous loop's.
  Evaluation evaluation;
  std::optional<SampledEvaluation> sampled;   // with an implementation: the sampled-loop details
  std::optional<Evaluation> continuous;       // with an implementation: the continuous loop
  std::optional<RateGuidance> rate;           // with an implementation: the rate against the crossover
  std::optional<SampleTimeSearch> sample_time_search;  // with CheckOptions::find_sample_time
  Locus locus;  // of the nominal loop (continuous)
  // Problems the numbers cannot hide, e.g. polynomial roots the coefficients fix only loosely.
  std::vector<std::string> warnings;
};

// Throws SpecError when the loop cancels an unstable plant pole with a compensator zero (the loop
// would look stable while an internal signal grows), or an unstable compensator pole with a plant
// zero. A root p with Re p >= 0 counts as cancelled by a root q of the other block when
// |q - p| <= 1e-6 |p|, or, for p at the origin, 1e-6 times the frequency scale of p's block (the
// geometric mean of its non-zero root magnitudes; the other block's when it has none): the test
// does not depend on the time unit.
void check_cancellations(const Zpk& compensator, const Plant& plant, const std::string& path);

// Conditioning warnings for the transfer functions of a spec document given as coefficients
// (`$.plant`, its variants, `$.current`): a root the coefficients determine to worse than 1e-6
// relative (root_accuracy), with the JSON path of the coefficient array.
std::vector<std::string> conditioning_warnings(const nlohmann::json& spec_document);

CheckReport run_check(const Spec& spec, const Zpk& compensator, const CheckOptions& options = {});

}  // namespace pw
