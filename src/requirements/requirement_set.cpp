#include "polewright/requirements/requirement_set.hpp"

#include <cstdio>

#include <algorithm>
#include <cmath>
#include <limits>

namespace pw {

bool RequirementSet::has(MetricId id) const {
  for (const Requirement& r : items)
    if (r.metric == id) return true;
  return false;
}

std::string RequirementSet::label(MetricId id) const {
  if (id == MetricId::ControllerHighFrequencyGain && controller_gain_at_rad_s) {
    char b[80];
    std::snprintf(b, sizeof b, "|C(jw)| at w = %.6g rad/s", *controller_gain_at_rad_s);
    return b;
  }
  return metric_info(id).label;
}

bool RequirementSet::needs_actuator() const {
  for (const Requirement& r : items)
    if (is_actuator_metric(r.metric)) return true;
  return false;
}

std::string RequirementSet::actuator_label() const {
  if (!actuator) return "";
  char b[256];
  std::snprintf(b, sizeof b, "%.6g <= u <= %.6g", actuator->minimum, actuator->maximum);
  std::string s = b;
  if (actuator->rate_limit) {
    std::snprintf(b, sizeof b, ", |du/dt| <= %.6g /s", *actuator->rate_limit);
    s += b;
  }
  if (actuator->anti_windup == AntiWindup::None) s += ", no anti-windup";
  else if (actuator->anti_windup == AntiWindup::Conditional) s += ", anti-windup conditional (integration stops at the limit)";
  else {
    std::snprintf(b, sizeof b, ", anti-windup back_calculation (Tt %.6g s)", actuator->tracking_time_s);
    s += b;
  }
  std::snprintf(b, sizeof b, ", reference step %.6g", reference_step);
  s += b;
  if (has(MetricId::SaturatedLoadPeak) || has(MetricId::SaturatedLoadRecovery)) {
    std::snprintf(b, sizeof b, ", load step %.6g held at reference %.6g", disturbance_step, held_reference());
    s += b;
  }
  return s;
}

std::optional<double> RequirementSet::limit(MetricId id, Sense sense) const {
  for (const Requirement& r : items)
    if (r.metric == id && r.sense == sense) return r.limit;
  return std::nullopt;
}

double requirement_margin(const Requirement& r, double value) {
  return r.sense == Sense::AtMost ? r.limit - value : value - r.limit;
}

double requirement_tolerance(const Requirement& r, double value) {
  return 4.0 * std::numeric_limits<double>::epsilon() * std::max(std::abs(r.limit), std::abs(value));
}

bool requirement_met(const Requirement& r, const MetricValue& v) {
  if (v.infinite) return r.sense == Sense::AtLeast;
  return v.value && std::isfinite(*v.value) && requirement_margin(r, *v.value) >= -requirement_tolerance(r, *v.value);
}

double requirement_violation(const Requirement& r, const MetricValue& v) {
  constexpr double kCap = 1e3;
  if (v.infinite) return r.sense == Sense::AtLeast ? 0.0 : kCap;
  if (!v.value || !std::isfinite(*v.value)) return kCap;
  const double m = requirement_margin(r, *v.value);
  if (m >= -requirement_tolerance(r, *v.value)) return 0.0;
  const double scale = std::abs(r.limit) > 0.0 ? std::abs(r.limit) : 1.0;
  return std::min(-m / scale, kCap);
}

}  // namespace pw
