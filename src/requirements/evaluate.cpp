#include "polewright/requirements/evaluate.hpp"

#include "polewright/analysis/measured_frequency.hpp"
#include "polewright/model/measured_plant.hpp"

#include <algorithm>
#include <cmath>

namespace pw {

namespace {

MetricValue number(const std::optional<double>& v) {
  MetricValue m;
  if (v && std::isfinite(*v)) m.value = *v;
  return m;
}

MetricValue infinite() {
  MetricValue m;
  m.infinite = true;
  return m;
}

// A time that may never come (y outside the band at the horizon, or unable to get there): unbounded.
MetricValue time_or_unbounded(const std::optional<double>& t) { return t ? number(t) : infinite(); }

double limit_scale(const Requirement& r) { return std::abs(r.limit) > 0.0 ? std::abs(r.limit) : 1.0; }

bool needs_any(const RequirementSet& req, std::initializer_list<MetricId> ids) {
  for (MetricId id : ids)
    if (req.has(id)) return true;
  return false;
}

}  // namespace

bool needs_frequency_response(const RequirementSet& req) {
  return needs_any(req, {MetricId::PhaseMargin, MetricId::GainMargin, MetricId::Crossover, MetricId::Bandwidth,
                         MetricId::PeakSensitivity, MetricId::DelayMargin});
}

bool needs_step_response(const RequirementSet& req) {
  return needs_any(req, {MetricId::Overshoot, MetricId::SettlingTime, MetricId::RiseTime, MetricId::PeakEffort});
}

bool time_domain_gate(const RequirementSet& req, const MetricValues& v, double gate) {
  return violation_except(req, v, [](MetricId id) {
           return metric_info(id).time_domain || id == MetricId::GainTolerance;
         }) <= gate;
}

MetricValue delay_margin_value(const FrequencyMetrics& f) {
  if (f.gain_crossovers_rad_s.empty()) return infinite();
  std::optional<double> dm;
  for (size_t i = 0; i < f.gain_crossovers_rad_s.size() && i < f.phase_margins_deg.size(); ++i) {
    const double w = f.gain_crossovers_rad_s[i];
    if (!(w > 0.0) || !std::isfinite(f.phase_margins_deg[i])) continue;
    // The extra lag w tau that takes this crossover's phase to -180 deg: its margin in [0, 360).
    double pm = std::fmod(f.phase_margins_deg[i], 360.0);
    if (pm < 0.0) pm += 360.0;
    const double tau = pm * M_PI / 180.0 / w;
    if (!dm || tau < *dm) dm = tau;
  }
  return number(dm);
}

void set_pole_metrics(MetricValues& v, double min_damping, std::optional<double> natural_frequency) {
  if (std::isfinite(min_damping)) v[static_cast<size_t>(MetricId::DampingRatio)].value = min_damping;
  if (natural_frequency) v[static_cast<size_t>(MetricId::NaturalFrequency)] = number(natural_frequency);
}

void set_frequency_metrics(MetricValues& v, const FrequencyMetrics& f) {
  auto at = [&](MetricId id) -> MetricValue& { return v[static_cast<size_t>(id)]; };
  at(MetricId::PhaseMargin) = f.gain_crossovers_rad_s.empty() ? infinite() : number(f.phase_margin_deg);
  at(MetricId::GainMargin) = f.critical_gains.empty() ? infinite() : number(f.gain_margin_db);
  at(MetricId::Crossover) = number(f.crossover_rad_s);
  at(MetricId::Bandwidth) = number(f.bandwidth_rad_s);
  at(MetricId::PeakSensitivity) = number(f.peak_sensitivity);
  at(MetricId::DelayMargin) = delay_margin_value(f);
}

void set_steady_state_metrics(MetricValues& v, const SteadyState& s) {
  v[static_cast<size_t>(MetricId::SteadyStateError)] = s.error ? number(s.error) : infinite();
}

void set_step_metrics(MetricValues& v, const StepMetrics& s) {
  auto at = [&](MetricId id) -> MetricValue& { return v[static_cast<size_t>(id)]; };
  at(MetricId::Overshoot) = number(s.overshoot_pct);
  at(MetricId::SettlingTime) = number(s.settling_time_s);
  at(MetricId::RiseTime) = number(s.rise_time_s);
  at(MetricId::PeakEffort) = number(s.peak_effort);
}

void set_gain_tolerance_metric(MetricValues& v, double tolerance_pct) {
  v[static_cast<size_t>(MetricId::GainTolerance)].value = tolerance_pct;
}

void set_disturbance_metrics(MetricValues& v, DisturbanceInput where, const DisturbanceMetrics& d, double step) {
  step = std::abs(step);  // the linear figures are sizes: |y| scales with |step|
  auto at = [&](MetricId id) -> MetricValue& { return v[static_cast<size_t>(id)]; };
  const bool load = where == DisturbanceInput::Load;
  at(load ? MetricId::LoadPeak : MetricId::OutputPeak) = number(step * d.peak);
  MetricValue& rec = at(load ? MetricId::LoadRecovery : MetricId::OutputRecovery);
  MetricValue& iae = at(load ? MetricId::LoadIae : MetricId::OutputIae);
  if (!d.rejected) {
    rec = infinite();
    iae = infinite();
  } else {
    rec = number(d.recovery_time_s);
    iae = d.iae ? number(step * *d.iae) : MetricValue{};
  }
}

void set_noise_metrics(MetricValues& v, const NoiseMetrics& n) {
  v[static_cast<size_t>(MetricId::NoiseEffortPeak)] = number(n.effort_peak);
  v[static_cast<size_t>(MetricId::ControllerHighFrequencyGain)] = number(n.high_frequency_gain);
}

void set_saturated_metrics(MetricValues& v, const SaturatedStepFigures& s) {
  auto at = [&](MetricId id) -> MetricValue& { return v[static_cast<size_t>(id)]; };
  at(MetricId::SaturatedOvershoot) = number(s.overshoot_pct);
  at(MetricId::SaturatedSettlingTime) = time_or_unbounded(s.settling_time_s);
  at(MetricId::SaturatedRiseTime) = number(s.rise_time_s);
}

namespace {

// The spec's limits as this compensator can have them: no anti-windup without an integrator
// (nothing winds up); nullopt with more than one and anti-windup asked for.
std::optional<ActuatorLimits> limits_for(const Zpk& compensator, const ActuatorLimits& spec) {
  ActuatorLimits lim = spec;
  const int integrators = zpk_integrators(compensator);
  if (integrators == 0) lim.anti_windup = AntiWindup::None;
  if (integrators > 1 && lim.anti_windup != AntiWindup::None) return std::nullopt;
  return lim;
}

// Three times the linear response's horizon, at least 1.5 times the limit, at its sample interval.
SaturatedOptions limited_horizon(double linear_horizon_s, int linear_samples, double limit_s) {
  SaturatedOptions so;
  so.horizon_s = std::max(3.0 * linear_horizon_s, 1.5 * limit_s);
  const double dt = linear_horizon_s / std::max(1, linear_samples - 1);
  so.samples = static_cast<int>(std::clamp(std::ceil(so.horizon_s / dt) + 1.0, 1000.0, 30000.0));
  return so;
}

}  // namespace

void set_saturated_load_metrics(MetricValues& v, const SaturatedDisturbanceFigures& d) {
  v[static_cast<size_t>(MetricId::SaturatedLoadPeak)] = number(d.peak);
  v[static_cast<size_t>(MetricId::SaturatedLoadRecovery)] = time_or_unbounded(d.recovery_time_s);
}

std::optional<SaturatedDisturbanceFigures> saturated_load(const LoopParts& parts, const DisturbanceMetrics& linear,
                                                          const RequirementSet& req) {
  if (!req.actuator) return std::nullopt;
  const std::optional<ActuatorLimits> lim = limits_for(parts.compensator_tf, *req.actuator);
  if (!lim) return std::nullopt;
  const SaturatedOptions so = limited_horizon(linear.horizon_s, linear.samples,
                                              req.limit(MetricId::SaturatedLoadRecovery, Sense::AtMost).value_or(0.0));
  SaturatedInputs in;
  in.initial_reference = in.reference = req.held_reference();
  in.load = req.disturbance_step;
  try {
    return saturated_disturbance_figures(parts.compensator_tf, parts.plant, *lim, in, so, linear.rejected,
                                         req.recovery_band);
  } catch (const std::invalid_argument&) {
    return std::nullopt;
  }
}

std::optional<SaturatedStepFigures> saturated_step(const LoopParts& parts, const PoleAnalysis& poles,
                                                   const StepMetrics& linear, const RequirementSet& req) {
  if (!req.actuator) return std::nullopt;
  const std::optional<ActuatorLimits> limits = limits_for(parts.compensator_tf, *req.actuator);
  if (!limits) return std::nullopt;
  const ActuatorLimits& lim = *limits;
  const SaturatedOptions so = limited_horizon(linear.horizon_s, linear.samples,
                                              req.limit(MetricId::SaturatedSettlingTime, Sense::AtMost).value_or(0.0));
  SaturatedInputs in;
  in.reference = req.reference_step;
  try {
    return saturated_step_figures(parts.compensator_tf, parts.plant, lim, in, so, linear.final_value * in.reference,
                                  poles.modal.u_final * in.reference, req.settling_band);
  } catch (const std::invalid_argument&) {
    return std::nullopt;
  }
}

double plant_violation(const Requirement& r, const PlantValue& p) {
  const double viol = requirement_violation(r, p.value);
  return p.stable ? viol : std::max(viol, kUnstableViolation);
}

// The shortfall tie-break separates violations that tie at the unstable floor (or the cap) by how
// far the figure misses; tanh saturates for shortfalls of many limits, where the first of the tied
// plants stays the worst.
double worst_case_key(const Requirement& r, const MetricValue& v, double violation) {
  if (violation == 0.0) return v.infinite ? kUnboundedMetKey : -requirement_margin(r, *v.value) / limit_scale(r) * kMetMarginWeight;
  if (v.value) return violation + kShortfallTieBreak * std::tanh(-requirement_margin(r, *v.value) / limit_scale(r));
  return violation;
}

LoopEvaluation evaluate_loop(const Zpk& comp, const Plant& plant, const RequirementSet& req, const Region& region,
                             const AnalysisOptions& opt, const EvaluationNeeds& needs) {
  LoopEvaluation e;
  e.plant_name = plant.name;
  const LoopParts parts = make_loop_parts(comp, plant, opt.pade_order);
  const ClosedLoop cl = close_loop(parts.compensator, parts.plant);
  e.well_posed = cl.well_posed;
  if (!cl.well_posed) return e;
  e.poles = analyze_poles(cl, parts, 1.0, opt.residue_share);
  e.stable = e.poles.stable;

  // Region and the dominant pole (the slowest-decaying pole that matters).
  e.region_ok = e.stable && region_holds(region, e.poles.poles);
  double min_damping = INFINITY;
  for (const PoleInfo& p : e.poles.poles) {
    if (!p.matters) continue;
    min_damping = std::min(min_damping, p.damping);
    if (!e.dominant_pole || p.pole.real() > e.dominant_pole->real()) e.dominant_pole = p.pole;
  }
  auto& v = e.values;
  set_pole_metrics(v, min_damping,
                   e.dominant_pole ? std::optional<double>(std::abs(*e.dominant_pole)) : std::nullopt);

  const bool all = needs.everything;
  if (!all && !e.stable) return e;  // screening: nothing more to learn from an unstable loop
  // Frequency response with the exact delay: robustness figures, computed for unstable loops too.
  const bool freq = all || needs.frequency || needs_frequency_response(req);
  const bool noise = needs_any(req, {MetricId::NoiseEffortPeak, MetricId::ControllerHighFrequencyGain});
  std::optional<MeasuredResponse> loop;
  if (plant.measured && (freq || noise)) {
    try {
      loop = measured_multiply(plant.measured->data, comp);
    } catch (const MeasuredDataError&) {
      e.data_notes.push_back("the compensator has a zero or a pole on the measured grid: the frequency figures come from the fitted model");
    }
  }
  if (loop) {
    // The frequency figures from the measured points themselves, not from the fit.
    e.frequency_from_data = true;
    if (freq) {
      MeasuredMetrics mm = measured_loop_metrics(*loop, opt.frequency);
      e.frequency = std::move(mm.figures);
      e.data_notes = std::move(mm.notes);
      set_frequency_metrics(v, e.frequency);
    }
    if (noise) {
      e.noise = measured_noise_metrics(comp, *loop, opt.frequency, req.controller_gain_at_rad_s, &e.data_notes);
      set_noise_metrics(v, *e.noise);
    }
  } else {
    if (freq) {
      e.frequency = frequency_metrics(parts.loop_exact, parts.delay_s, opt.frequency);
      set_frequency_metrics(v, e.frequency);
    }
    if (noise) {
      e.noise = noise_metrics(parts.compensator_tf, parts.loop_exact, parts.delay_s, opt.frequency, req.controller_gain_at_rad_s);
      set_noise_metrics(v, *e.noise);
    }
  }
  if (!e.stable) return e;

  e.steady_state = steady_state_error(parts.loop_exact, req.error_signal);
  set_steady_state_metrics(v, e.steady_state);

  const bool saturated =
      req.actuator &&
      needs_any(req, {MetricId::SaturatedOvershoot, MetricId::SaturatedSettlingTime, MetricId::SaturatedRiseTime});
  const bool saturated_load_asked =
      req.actuator && needs_any(req, {MetricId::SaturatedLoadPeak, MetricId::SaturatedLoadRecovery});
  bool step = all || needs.step || needs_step_response(req) || saturated;
  if (!all && step) step = time_domain_gate(req, v, needs.step_gate);
  if (step) {
    StepOptions so = opt.step;
    so.band = req.settling_band;
    const double min_h = req.limit(MetricId::SettlingTime, Sense::AtMost).value_or(0.0);
    e.step = step_response(cl, e.poles, so, min_h);
    set_step_metrics(v, *e.step);
  }
  // Disturbance steps: only when a requirement names them, behind the same gate as the step.
  // (The limited load step needs the linear one: its horizon and whether the loop rejects a load.)
  const bool load =
      saturated_load_asked || needs_any(req, {MetricId::LoadPeak, MetricId::LoadRecovery, MetricId::LoadIae});
  const bool output = needs_any(req, {MetricId::OutputPeak, MetricId::OutputRecovery, MetricId::OutputIae});
  if ((load || output) && (all || step || time_domain_gate(req, v, needs.step_gate))) {
    StepOptions so = opt.step;  // keep_trace as the step's: the report draws the responses
    for (const DisturbanceInput where : {DisturbanceInput::Load, DisturbanceInput::Output}) {
      if (!(where == DisturbanceInput::Load ? load : output)) continue;
      std::optional<DisturbanceMetrics>& d = where == DisturbanceInput::Load ? e.load : e.output;
      d = disturbance_response(disturbance_loop(parts, where), so, req.recovery_band, opt.residue_share);
      set_disturbance_metrics(v, where, *d, req.disturbance_step);
    }
  }
  // The step with the actuator limits: after the linear one (its horizon and final value), only
  // when a requirement names it; screening runs it only for loops whose other figures (the linear
  // step's included) nearly meet their requirements, as the step itself is gated.
  // The same holds for the limited load step, after the linear one.
  const bool near = req.actuator && req.needs_actuator() &&
                    (all || violation_except(req, v, [](MetricId id) {
                       return is_actuator_metric(id) || id == MetricId::GainTolerance;
                     }) <= needs.step_gate);
  if (near && saturated && e.step) {
    e.saturated = saturated_step(parts, e.poles, *e.step, req);
    if (e.saturated) set_saturated_metrics(v, *e.saturated);
  }
  if (near && saturated_load_asked && e.load) {
    e.saturated_load = saturated_load(parts, *e.load, req);
    if (e.saturated_load) set_saturated_load_metrics(v, *e.saturated_load);
  }
  bool tolerance = all || req.has(MetricId::GainTolerance);
  // Screening: the gain scan only for loops that are near meeting everything else.
  if (!all && tolerance)
    tolerance = violation_except(req, v, [](MetricId id) { return id == MetricId::GainTolerance; }) <= needs.step_gate;
  if (tolerance) {
    const auto t = req.limit(MetricId::GainTolerance, Sense::AtLeast);
    e.gain = (!all && t) ? gain_tolerance_screen(parts, region, opt.residue_share, *t / 100.0)
                         : gain_tolerance(parts, region, opt.residue_share, 1.01);
    set_gain_tolerance_metric(v, e.gain.tolerance_pct);
  }
  return e;
}

Evaluation evaluate_all(const Zpk& comp, const std::vector<Plant>& plants, const RequirementSet& req,
                        const Region& region, const AnalysisOptions& opt, const EvaluationNeeds& needs) {
  std::vector<LoopEvaluation> loops;
  for (const Plant& p : plants) loops.push_back(evaluate_loop(comp, p, req, region, opt, needs));
  return evaluation_of(std::move(loops), req);
}

Evaluation evaluation_of(std::vector<LoopEvaluation> loops, const RequirementSet& req) {
  Evaluation ev;
  ev.plants = std::move(loops);
  ev.all_stable = true;
  for (const LoopEvaluation& e : ev.plants) ev.all_stable = ev.all_stable && e.stable;
  std::vector<double> per_plant(ev.plants.size(), 0.0);
  ev.all_met = ev.all_stable;
  std::vector<double> viols;
  for (const Requirement& r : req.items) {
    const size_t m = static_cast<size_t>(r.metric);
    const WorstCase w = worst_over_plants(
        r, ev.plants.size(), [&](size_t i) { return PlantValue{ev.plants[i].values[m], ev.plants[i].stable}; }, &viols);
    for (size_t i = 0; i < viols.size(); ++i) per_plant[i] += viols[i];
    RequirementOutcome o;
    o.requirement = r;
    o.worst = w.worst;
    o.worst_plant = w.plant;
    o.violation = w.violation;
    o.met = o.violation == 0.0 && ev.all_stable;
    ev.all_met = ev.all_met && o.met;
    ev.total_violation += o.violation;
    ev.outcomes.push_back(o);
  }
  for (size_t i = 0; i < per_plant.size(); ++i)
    if (per_plant[i] > per_plant[static_cast<size_t>(ev.worst_plant)]) ev.worst_plant = static_cast<int>(i);
  return ev;
}

}  // namespace pw
