// The requirement and metric names: one table, shared by the parser, the evaluator and the outputs.
#pragma once

#include <array>
#include <string>

namespace pw {

enum class MetricId {
  Overshoot,
  SettlingTime,
  RiseTime,
  SteadyStateError,
  PhaseMargin,
  GainMargin,
  Crossover,
  Bandwidth,
  PeakEffort,
  PeakSensitivity,
  GainTolerance,
  DampingRatio,
  NaturalFrequency,
  DelayMargin,
  LoadPeak,
  LoadRecovery,
  LoadIae,
  OutputPeak,
  OutputRecovery,
  OutputIae,
  NoiseEffortPeak,
  ControllerHighFrequencyGain,
  SaturatedOvershoot,
  SaturatedSettlingTime,
  SaturatedRiseTime,
  SaturatedLoadPeak,
  SaturatedLoadRecovery,
};
constexpr int kMetricCount = 27;

enum class BoundKind { MaxOnly, MinOnly, MinOrMax };

struct MetricInfo {
  MetricId id;
  const char* key;     // spec and JSON name
  const char* label;   // readable name for tables
  const char* unit;    // "" for dimensionless
  BoundKind bounds;
  bool time_domain;    // needs the step simulation
  // Computed only when a requirement names it (the disturbance and noise figures): outputs leave
  // its key out while it has no value, so results of specs that do not ask stay as they were.
  bool on_request = false;
};

// True when outputs show the metric: always, or for an on-request one when it has a value.
inline bool metric_shown(const MetricInfo& info, bool known) { return !info.on_request || known; }

// The saturated_* figures: judged on the simulation with the spec's actuator limits.
inline bool is_actuator_metric(MetricId id) {
  return id == MetricId::SaturatedOvershoot || id == MetricId::SaturatedSettlingTime ||
         id == MetricId::SaturatedRiseTime || id == MetricId::SaturatedLoadPeak || id == MetricId::SaturatedLoadRecovery;
}

const std::array<MetricInfo, kMetricCount>& metric_table();
const MetricInfo& metric_info(MetricId id);

}  // namespace pw
