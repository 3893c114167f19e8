// The retune job: the compensator in service (`current`) meets new requirements with the least
// change. The search starts from the current design and moves its corners and gain (in decades,
// see synthesis/retune_space.hpp); with allow_new_stages it adds stages, the least added order
// first, only when moving the existing ones cannot meet the requirements.
#pragma once

#include <atomic>
#include <optional>
#include <string>
#include <vector>

#include "polewright/jobs/design.hpp"
#include "polewright/synthesis/retune_space.hpp"

namespace pw {

struct RetuneOptions {
  int keep = 3;                      // candidates returned
  bool allow_new_stages = false;     // add a lead/lag or integrator (order 1), then a notch (order 2)
  unsigned long long seed = 1;       // shifts the perturbed starts
  int threads = 0;                   // 0 = all cores; results do not depend on it
  int starts = 6;                    // local runs per structure: the current design and perturbed copies
  double start_spread_decades = 0.25;  // half-width of the perturbation of the starts
  int evaluations = 400;             // per local run and phase
  double corner_decades = 1.5;       // how far a corner may move either way
  double gain_decades = 2.0;         // how far the gain may move either way
  double penalty = 30.0;             // weight of the violation against the squared distance (phase 1)
  double distinct_decades = 0.02;    // least parameter distance (max norm) between two candidates
  // Escalation when no retune of the current structure meets (see run_retune): design's verified
  // candidates of the current structure pulled back towards the current design, then wider starts
  // with larger budgets; counted in evaluations like design's (0 = none).
  double budget_s = 10.0;
  // When given and set, the search stops at its next check (inside every local search).
  const std::atomic<bool>* cancel = nullptr;
  bool IsValid(std::string* error) const;
  static RetuneOptions FromSpec(const Spec& spec);
};

// What one line of a candidate's change list moves.
enum class ChangeItem { Gain, Zero, Pole };
const char* change_item_name(ChangeItem item);  // "gain", "zero", "pole" (the JSON "item" and the text)

// One line of a candidate's change list.
struct ParameterChange {
  ChangeItem item = ChangeItem::Gain;
  int index = 0;                  // 1-based among the zeros (poles) of the new compensator's list
  std::optional<Complex> old_value, new_value;  // roots (a pair: the upper one); gain as real
  std::optional<double> old_damping, new_damping;  // complex pairs
  double percent_change = 0.0;    // of the gain, of |root| (the corner or natural frequency)
  std::string driven_by;          // the requirement that fails when this change alone is undone
};

struct RetuneCandidate {
  Candidate candidate;
  std::vector<AddedStage> added;
  std::vector<ParameterChange> changes;
  double change_decades = 0.0;    // change_distance (synthesis/retune_space.hpp)
  double response_change = 0.0;   // response_distance to the current compensator
};

struct RetuneReport {
  std::string spec_name;
  nlohmann::json spec_document;
  LoopContext context;  // plants, requirements, analysis, region, frequency range (the Verifier's)
  Candidate current;              // the compensator in service, verified at full accuracy
  bool already_met = false;       // the current design meets: nothing changed
  std::vector<RetuneCandidate> candidates;
  DesignSummary summary;
  bool met() const { return already_met || (!candidates.empty() && candidates.front().candidate.meets); }
};

// Throws SpecError("$.current") when the spec has no current compensator.
RetuneReport run_retune(const Spec& spec, const RetuneOptions& options);

}  // namespace pw
