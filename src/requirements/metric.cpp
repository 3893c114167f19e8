#include "polewright/requirements/metric.hpp"

namespace pw {

const std::array<MetricInfo, kMetricCount>& metric_table() {
  static const std::array<MetricInfo, kMetricCount> table = {{
      {MetricId::Overshoot, "overshoot_pct", "overshoot", "%", BoundKind::MaxOnly, true},
      {MetricId::SettlingTime, "settling_time_s", "settling time", "s", BoundKind::MaxOnly, true},
      {MetricId::RiseTime, "rise_time_s", "rise time 10-90 %", "s", BoundKind::MaxOnly, true},
      {MetricId::SteadyStateError, "steady_state_error", "steady-state error", "", BoundKind::MaxOnly, false},
      {MetricId::PhaseMargin, "phase_margin_deg", "phase margin", "deg", BoundKind::MinOnly, false},
      {MetricId::GainMargin, "gain_margin_db", "gain margin", "dB", BoundKind::MinOnly, false},
      {MetricId::Crossover, "crossover_rad_s", "gain crossover", "rad/s", BoundKind::MinOrMax, false},
      {MetricId::Bandwidth, "bandwidth_rad_s", "closed-loop bandwidth", "rad/s", BoundKind::MinOrMax, false},
      {MetricId::PeakEffort, "peak_effort", "peak control effort", "", BoundKind::MaxOnly, true},
      {MetricId::PeakSensitivity, "peak_sensitivity", "peak |S|", "", BoundKind::MaxOnly, false},
      {MetricId::GainTolerance, "gain_tolerance_pct", "gain tolerance", "%", BoundKind::MinOnly, false},
      {MetricId::DampingRatio, "damping_ratio", "damping ratio", "", BoundKind::MinOnly, false},
      {MetricId::NaturalFrequency, "natural_frequency_rad_s", "dominant natural frequency", "rad/s",
       BoundKind::MinOrMax, false},
      {MetricId::DelayMargin, "delay_margin_s", "delay margin", "s", BoundKind::MinOnly, false},
      {MetricId::LoadPeak, "load_peak", "load-step peak |y|", "", BoundKind::MaxOnly, true, true},
      {MetricId::LoadRecovery, "load_recovery_s", "load-step recovery", "s", BoundKind::MaxOnly, true, true},
      {MetricId::LoadIae, "load_iae", "load-step IAE", "", BoundKind::MaxOnly, true, true},
      {MetricId::OutputPeak, "output_peak", "output-step peak |y|", "", BoundKind::MaxOnly, true, true},
      {MetricId::OutputRecovery, "output_recovery_s", "output-step recovery", "s", BoundKind::MaxOnly, true, true},
      {MetricId::OutputIae, "output_iae", "output-step IAE", "", BoundKind::MaxOnly, true, true},
      {MetricId::NoiseEffortPeak, "noise_effort_peak", "peak |C S|", "", BoundKind::MaxOnly, false, true},
      {MetricId::ControllerHighFrequencyGain, "controller_hf_gain", "|C(j inf)|", "", BoundKind::MaxOnly, false, true},
      {MetricId::SaturatedOvershoot, "saturated_overshoot_pct", "overshoot, actuator limited", "%", BoundKind::MaxOnly,
       true, true},
      {MetricId::SaturatedSettlingTime, "saturated_settling_time_s", "settling time, actuator limited", "s",
       BoundKind::MaxOnly, true, true},
      {MetricId::SaturatedRiseTime, "saturated_rise_time_s", "rise time 10-90 %, actuator limited", "s",
       BoundKind::MaxOnly, true, true},
      {MetricId::SaturatedLoadPeak, "saturated_load_peak", "load-step peak |y - y0|, actuator limited", "",
       BoundKind::MaxOnly, true, true},
      {MetricId::SaturatedLoadRecovery, "saturated_load_recovery_s", "load-step recovery, actuator limited", "s",
       BoundKind::MaxOnly, true, true},
  }};
  return table;
}

const MetricInfo& metric_info(MetricId id) { return metric_table()[static_cast<size_t>(id)]; }

}  // namespace pw
