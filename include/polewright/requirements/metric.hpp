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
};
constexpr int kMetricCount = 14;

enum class BoundKind { MaxOnly, MinOnly, MinOrMax };

struct MetricInfo {
  MetricId id;
  const char* key;     // spec and JSON name
  const char* label;   // readable name for tables
  const char* unit;    // "" for dimensionless
  BoundKind bounds;
  bool time_domain;    // needs the step simulation
};

const std::array<MetricInfo, kMetricCount>& metric_table();
const MetricInfo& metric_info(MetricId id);

}  // namespace pw
