// Candidates that are not usable as they are: a settling time on a cliff (fragile), stages that do
// nothing over the design frequency range (folded into the gain), and loops whose margins are
// within numerical noise of zero (marginally stable, not a valid design).
#pragma once

#include <optional>
#include <utility>
#include <vector>

#include "polewright/requirements/evaluate.hpp"
#include "polewright/requirements/implementation.hpp"
#include "polewright/synthesis/structure.hpp"

namespace pw {

// Fragile settling: the settling time is recomputed at full accuracy in a small neighbourhood of
// the loop, with the settling band scaled by 1 -+ kFragileBandShare and with the loop gain scaled
// by 1 -+ kFragileGainShare. A loop is fragile when, on any plant, one of these changes its
// settling time by more than kFragileJumpShare of the shorter of the two times (either way: a
// time that drops is as much a cliff as one that grows), or it no longer settles within the
// horizon. A smooth exponential tail moves by ln(1.1)/ln(50) = 2.4 % for a 10 % band change at a
// 2 % band, far below the jump; overshoot parked at the band's edge moves by a whole part of an
// oscillation period.
constexpr double kFragileJumpShare = 0.25;
constexpr double kFragileBandShare = 0.10;
constexpr double kFragileGainShare = 0.01;

struct Fragility {
  bool assessed = false;   // every plant's loop is stable and settles
  bool fragile = false;
  double jump_share = 0.0; // largest |t - t0| / min(t, t0) over the neighbours (1e9 when one does not settle)
};

// With `implementation`, the settling times are of the sampled loop as it runs (evaluate_sampled:
// the output between the samples too); a compensator the implementation cannot map is not assessed.
Fragility settling_fragility(const Zpk& compensator, const std::vector<Plant>& plants, const RequirementSet& req,
                             const Region& region, const AnalysisOptions& options,
                             const std::optional<Implementation>& implementation = std::nullopt);

// Margins within numerical noise of zero: |phase margin| below kNoisePhaseMarginDeg or |gain
// margin| below kNoiseGainMarginDb on any plant. Such a loop sits on the stability boundary and
// is treated as violating (not a stable design), whatever its poles say.
constexpr double kNoisePhaseMarginDeg = 1e-3;
constexpr double kNoiseGainMarginDb = 1e-3;
constexpr double kNoiseMarginViolation = 1.0;  // added to the violation of such a loop
bool margins_at_noise(const LoopEvaluation& e);

// A stage is negligible over [lo, hi] when its frequency response stays within
// kNegligibleStageShare (relative, complex: magnitude and phase) of one of its asymptotes, the
// low-frequency value f(0) or the high-frequency value 1, at kNegligibleStageSamples log-spaced
// frequencies. An integrator acts at DC (the steady-state error) and is never negligible by that
// test; it is dropped instead when its zero is parked in the lowest kParkedIntegratorDecades of the
// range (the search made its integral action as slow as it may go: over the range the stage is
// close to 1 but for a creep slower than anything else in the loop). Dropping it can change the
// steady-state verdict, so the caller verifies the simpler loop again (design.cpp keeps the fold
// only when the verdict is no worse).
constexpr double kNegligibleStageShare = 0.01;
constexpr int kNegligibleStageSamples = 201;
constexpr double kParkedIntegratorDecades = 0.5;

struct PrunedCompensator {
  Zpk compensator;
  Structure structure;
  std::vector<double> parameters;  // the design parameters without the dropped stages' entries
  int dropped = 0;                 // stages folded into the gain (the dropped integrator included)
  bool integrator_dropped = false; // a parked integrator was dropped
};

// Folds every negligible stage of `c` (stage order of `s`: integrator, leads, lags, notches, as
// params_to_zpk builds them) into the gain: the factor the stage is close to multiplies the gain.
// `parameters` (when not empty) follow the parametrisation of parameters.hpp: x[0] is log10 of the
// DC-normalised gain, a lead or lag has two entries, a notch three, an integrator one.
PrunedCompensator prune_negligible_stages(const Zpk& c, const Structure& s, const std::vector<double>& parameters,
                                          std::pair<double, double> range);

}  // namespace pw
