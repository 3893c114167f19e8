// Parsed requirements: a flat list of bounds on named metrics plus their side settings.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "polewright/analysis/saturated.hpp"
#include "polewright/analysis/steady_state.hpp"
#include "polewright/requirements/metric.hpp"

namespace pw {

enum class Sense { AtMost, AtLeast };

struct Requirement {
  MetricId metric;
  Sense sense;
  double limit;
};

struct RequirementSet {
  std::vector<Requirement> items;     // in table order, min before max
  double settling_band = 0.02;        // fraction of the final value
  TestSignal error_signal = TestSignal::Step;
  // Size of the load and output disturbance steps (in the units of u and y), and the recovery band
  // as a fraction of the peak deviation |y| of the disturbance response.
  double disturbance_step = 1.0;
  double recovery_band = 0.02;
  // controller_hf_gain's "frequency_rad_s": the compensator's gain |C(jw)| at this frequency
  // stands for its high-frequency gain (unset: |C(j inf)|).
  std::optional<double> controller_gain_at_rad_s;
  // The spec's "actuator": its limits and anti-windup, and the size of the reference step the
  // saturated_* figures are judged on (the limits make the response depend on it).
  std::optional<ActuatorLimits> actuator;
  double reference_step = 1.0;
  // The reference the loop holds when the saturated_load_* step (of disturbance_step) arrives:
  // the load is met from that operating point's u, with the headroom the limits leave there.
  // Unset: reference_step.
  std::optional<double> operating_reference;
  double held_reference() const { return operating_reference.value_or(reference_step); }
  // True when a requirement names a figure judged with the actuator limits (saturated_*).
  bool needs_actuator() const;

  bool has(MetricId id) const;
  std::optional<double> limit(MetricId id, Sense sense) const;
  // The metric's readable name as this set judges it: the table's label, except "|C(jw)| at
  // w = ... rad/s" for controller_hf_gain with a stated frequency.
  std::string label(MetricId id) const;
  // One line on the actuator the saturated_* figures are judged with ("" without one):
  // "0 <= u <= 1, |du/dt| <= 20 /s, anti-windup back_calculation (Tt 0.05 s), reference step 1.5".
  std::string actuator_label() const;
};

// A metric's value: a number, +infinity (an unbounded margin, an unbounded error) or missing (the
// figure does not exist, for example the overshoot of an unstable loop).
struct MetricValue {
  std::optional<double> value;
  bool infinite = false;
  bool known() const { return value.has_value() || infinite; }
};

// Signed margin to the limit in the metric's unit: positive when met.
double requirement_margin(const Requirement& r, double value);

// Comparison tolerance: 4 ulps of the larger of |limit| and |value|. A value whose margin is at
// least -tolerance meets the limit (Kv = 5 computed as 4.999999999999999 meets a ramp error of
// 0.2), so rounding in the last bits never decides a verdict.
double requirement_tolerance(const Requirement& r, double value);

// Met: margin >= -requirement_tolerance (an infinity only on the AtLeast side).
bool requirement_met(const Requirement& r, const MetricValue& v);

// Normalised violation: 0 when met, else shortfall / |limit|, capped at 1000; 1000 for a missing
// value or an infinity on the wrong side.
double requirement_violation(const Requirement& r, const MetricValue& v);

}  // namespace pw
