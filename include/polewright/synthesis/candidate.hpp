// A verified compensator, and the verifier that makes one: the shared loop context (plants,
// requirements, region, analysis options, frequency range) and a compensator in, the full-accuracy
// check over every plant out. Design, retune and sweep verify through it.
#pragma once

#include <optional>
#include <string>
#include <utility>
#include <vector>

#include "polewright/requirements/evaluate.hpp"
#include "polewright/requirements/sampled_evaluate.hpp"
#include "polewright/requirements/spec.hpp"
#include "polewright/synthesis/structure.hpp"

namespace pw {

struct Candidate {
  int rank = 0;
  Structure structure;
  Zpk compensator;
  std::vector<double> parameters;
  std::string origin;                  // which start led here
  Evaluation verification;             // full-accuracy check over every plant (of the sampled loop
                                       // when the spec has an implementation)
  std::optional<Evaluation> continuous;  // with an implementation: the continuous loop's check beside it
  std::vector<MetricValue> worst;      // worst case over the plants, per MetricId
  bool meets = false;
  double objective = 0.0;
  double violation = 0.0;
  // The settling time jumps by more than kFragileJumpShare in a small neighbourhood of the loop
  // (synthesis/fragility.hpp); `fragility_assessed` is false when some plant's loop does not settle.
  bool fragile = false;
  bool fragility_assessed = false;
  bool fragility_checked = false;  // the check ran (Verifier::add_fragility), whatever its outcome
  double settling_jump_share = 0.0;
  // A margin within numerical noise of zero on some plant: treated as violating (not stable).
  bool margins_at_noise = false;
};

// With an implementation, compensator corners (searched zeros and poles) stay below this share of
// the Nyquist frequency pi / T: the frequency range the search draws corners from is cut there.
constexpr double kCornerNyquistShare = 0.5;

// What every search of one spec shares: the loop and how it is judged.
struct LoopContext {
  std::vector<Plant> plants;
  RequirementSet requirements;
  Region region;
  AnalysisOptions analysis;              // full accuracy (the screening options derive from it)
  std::pair<double, double> frequency_range;  // rad/s: where compensator corners go
  // How the compensator runs: then every candidate is verified (and screened) on the sampled loop.
  std::optional<Implementation> implementation;
  // Set when the implementation cut the frequency range at kCornerNyquistShare * pi / T (rad/s).
  std::optional<double> corner_cap_rad_s;
  std::pair<double, double> uncut_frequency_range;  // the range before that cut

  // "corners above 785.4 rad/s (0.5 of the Nyquist frequency pi / T) are left out of the search: ..."
  // when the cut applies, else "".
  std::string corner_note() const;

  // The context of a spec: region from its requirements, the spec's frequency range or the default.
  static LoopContext FromSpec(const Spec& spec);
};

class Verifier {
 public:
  explicit Verifier(LoopContext context) : context_(std::move(context)) {}
  // The full-accuracy check of `compensator` over every plant; the objective as the search ranks it.
  // With `fragility` false the settling-cliff check (four more step responses per plant) is left
  // for add_fragility, so a search can run it only on the candidates it lists.
  Candidate verify(const Zpk& compensator, Objective objective = Objective::LeastEffort, bool fragility = true) const;
  // The settling-cliff check of a verified candidate (synthesis/fragility.hpp); a no-op for an
  // unstable loop or a candidate already assessed.
  void add_fragility(Candidate& c) const;
  const LoopContext& context() const { return context_; }

 private:
  LoopContext context_;
};

}  // namespace pw
