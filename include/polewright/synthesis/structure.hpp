// Compensator structures: which stages, in a fixed order, simplest first.
#pragma once

#include <string>
#include <vector>

#include "polewright/requirements/spec.hpp"

namespace pw {

enum class StageKind { Integrator, Lead, Lag, Notch };

const char* stage_name(StageKind k);

// The one table of per-stage facts, shared by the design parametrisation (parameters.cpp, its
// seeds) and the stages a retune adds (retune_space.cpp): its name, how many parameters it has and
// the order it adds to the compensator, and the bounds every parametrisation of it keeps.
struct StageFacts {
  StageKind kind;
  const char* name;
  int parameters;  // integrator: corner; lead, lag: ratio and position (retune: centre and ratio);
                   // notch: centre, depth and width
  int order;
};
const StageFacts& stage_facts(StageKind k);

// Bounds shared by both parametrisations (common practice).
constexpr double kStageRatioMax = 50.0;   // pole / zero of a lead or lag
constexpr double kNotchDepthMin = 0.003;  // zeta_zero / zeta_pole of a notch
constexpr double kNotchWidthMin = 0.08;   // zeta_pole of a notch

struct Structure {
  bool integrator = false;
  int lead = 0;
  int lag = 0;
  int notch = 0;

  // Stages in parameter order: integrator, leads, lags, notches.
  std::vector<StageKind> stages() const;
  std::vector<std::string> names() const;
  int stage_count() const { return (integrator ? 1 : 0) + lead + lag + notch; }
  int order() const { return (integrator ? 1 : 0) + lead + lag + 2 * notch; }
  bool operator==(const Structure& o) const {
    return integrator == o.integrator && lead == o.lead && lag == o.lag && notch == o.notch;
  }
};

// Every combination the stage settings allow (up to the given counts; integrator on, off or both),
// ordered simplest first: fewer stages, then lower order, then integrator off before on, then
// lead before lag before notch. The pure gain comes first. With `pid` only the PID with its filter
// (integrator + one lead), with 0..notch notches.
std::vector<Structure> enumerate_structures(const StageSettings& s);

}  // namespace pw
