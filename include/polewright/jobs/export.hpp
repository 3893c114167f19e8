// The export job: a continuous compensator to a discrete one at a sample time, realised as
// biquads, and the sampled loop re-verified against the spec's requirements.
#pragma once

#include <optional>
#include <string>
#include <utility>
#include <vector>

#include "polewright/analysis/discrete_loop.hpp"
#include "polewright/model/biquad.hpp"
#include "polewright/model/discretize.hpp"
#include "polewright/requirements/evaluate.hpp"
#include "polewright/requirements/job_kind.hpp"
#include "polewright/requirements/result_parse.hpp"
#include "polewright/requirements/sampled_evaluate.hpp"

namespace pw {

enum class Precision { Double, Float };

// What is wrong with an export setting: `field` names the ExportOptions member ("sample_time_s",
// "prewarp_rad_s", ...) or "rank"; `message` reads after it ("must be a number > 0").
struct ExportProblem {
  std::string field;
  std::string message;
};

struct ExportOptions {
  double sample_time_s = 0.0;                       // T > 0, required
  DiscreteMethod method = DiscreteMethod::Tustin;   // default Tustin
  // Prewarp: the warp point; default the highest gain crossover of the nominal continuous loop
  // (needs a spec). Notches are always warped at their own centre.
  std::optional<double> prewarp_rad_s;
  // Samples between sampling y and applying u, 0..50; a fraction is exact (it adds to the plant's
  // dead time before sampling, as check does with the spec's implementation block).
  double compute_delay_samples = 0.0;
  // Of the generated C code and of the coefficients the sampled loop is re-verified with (float:
  // every section coefficient rounded to single precision, as the implementation's word length).
  Precision precision = Precision::Double;
  std::optional<std::pair<double, double>> clamp;   // output limits lo < hi (C code)
  // Warnings (common practice thresholds).
  double max_phase_margin_drop_deg = 5.0;           // discrete phase margin below the continuous one by more
  double max_gain_margin_drop_db = 2.0;             // discrete gain margin below the continuous one by more
  // An unbounded continuous gain margin always becomes finite once sampled: warn when it ends below this.
  double unbounded_gain_margin_floor_db = 10.0;
  double min_rate_ratio = 10.0;                     // sample rate 2 pi / T under this times the crossover
  // A section is close to instability in float when rounding a1, a2 to float moves its pole radius
  // by more than this fraction of its distance to the unit circle (or onto or past the circle).
  double float_radius_fraction = 0.5;

  // The defaults a spec's implementation block gives: its sample time, method, warp point,
  // computation delay and word length (the rest as above). A result designed or checked at T
  // re-exports at T with the same sampled loop, hence the same verdict.
  static ExportOptions FromImplementation(const Implementation& im);
  // The implementation these options describe (the sampled loop export re-verifies).
  Implementation implementation() const;

  // The first bad setting, if any.
  std::optional<ExportProblem> Problem() const;
  // As every options struct: false with "<field> <message>" in *error for a bad setting.
  bool IsValid(std::string* error) const;
};

// Per plant (nominal first): the continuous and the discrete figures of the loop.
struct ExportLoop {
  std::string plant_name;
  MetricValues continuous{};
  MetricValues discrete{};
  bool continuous_stable = false;
  LoopEvaluation continuous_eval;
  DiscreteLoopAnalysis discrete_eval;
};

struct ExportOutcome {
  Requirement requirement;
  MetricValue continuous;  // worst over the plants
  MetricValue discrete;    // worst over the plants
  int worst_plant = 0;
  bool met = false;
  // False for the figures computed on request (disturbance, noise, actuator-limited step), which
  // have no sampled-loop evaluation yet: they are shown with their continuous value, and the
  // verdict says they were not judged on the sampled loop (it does not count them either way).
  bool judged = true;
};

struct ExportReport {
  std::string design_name;   // spec name, or "compensator"
  JobKind source_job = JobKind::Compensator;  // Check, Design, Retune or Compensator
  int rank = 1;
  ExportOptions options;
  std::optional<double> warp_rad_s;  // the warp point used (prewarp)
  Zpk continuous;
  Zpk discrete;
  BiquadCascade cascade;
  std::vector<SectionRadius> radii;  // per section
  bool verified = false;             // a spec was available and the loop was re-checked
  RequirementSet requirements;
  std::vector<Plant> plants;
  std::vector<ExportLoop> loops;
  std::vector<ExportOutcome> outcomes;
  bool discrete_stable = false;
  bool all_met = false;
  std::optional<double> crossover_rad_s;  // highest continuous crossover over the plants
  std::vector<std::string> warnings;
  std::vector<std::string> notes;
  std::vector<std::string> not_judged;  // requirement keys judged on the continuous loop only
};

// discrete_gain_tolerance and discrete_metric_values (the sampled loop's metric path, shared with
// check) are in requirements/sampled_evaluate.hpp.

// Throws SpecError for bad options, a rank outside the result or a compensator the method cannot
// map; its path is then the ExportProblem field to blame ("sample_time_s", "prewarp_rad_s",
// "precision", "rank", ...), which a command line maps to its own option names. Errors in the
// spec or the result name their JSON path.
ExportReport run_export(const ResultInput& input, int rank, const ExportOptions& options);

}  // namespace pw
