#include "polewright/requirements/evaluate.hpp"

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

bool needs_any(const RequirementSet& req, std::initializer_list<MetricId> ids) {
  for (MetricId id : ids)
    if (req.has(id)) return true;
  return false;
}

}  // namespace

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
  auto at = [&](MetricId id) -> MetricValue& { return v[static_cast<size_t>(id)]; };
  if (std::isfinite(min_damping)) at(MetricId::DampingRatio).value = min_damping;
  if (e.dominant_pole) at(MetricId::NaturalFrequency).value = std::abs(*e.dominant_pole);

  const bool all = needs.everything;
  if (!all && !e.stable) return e;  // screening: nothing more to learn from an unstable loop
  // Frequency response with the exact delay: robustness figures, computed for unstable loops too.
  const bool freq = all || needs.frequency ||
                    needs_any(req, {MetricId::PhaseMargin, MetricId::GainMargin, MetricId::Crossover,
                                    MetricId::Bandwidth, MetricId::PeakSensitivity});
  if (freq) {
    e.frequency = frequency_metrics(parts.loop_exact, parts.delay_s, opt.frequency);
    const FrequencyMetrics& f = e.frequency;
    at(MetricId::PhaseMargin) = f.gain_crossovers_rad_s.empty() ? infinite() : number(f.phase_margin_deg);
    at(MetricId::GainMargin) = f.critical_gains.empty() ? infinite() : number(f.gain_margin_db);
    at(MetricId::Crossover) = number(f.crossover_rad_s);
    at(MetricId::Bandwidth) = number(f.bandwidth_rad_s);
    at(MetricId::PeakSensitivity) = number(f.peak_sensitivity);
  }
  if (!e.stable) return e;

  e.steady_state = steady_state_error(parts.loop_exact, req.error_signal);
  at(MetricId::SteadyStateError) = e.steady_state.error ? number(e.steady_state.error) : infinite();

  bool step = all || needs.step ||
              needs_any(req, {MetricId::Overshoot, MetricId::SettlingTime, MetricId::RiseTime, MetricId::PeakEffort});
  if (!all && step) {
    double fv = 0.0;
    for (const Requirement& r : req.items)
      if (!metric_info(r.metric).time_domain && r.metric != MetricId::GainTolerance)
        fv += requirement_violation(r, v[static_cast<size_t>(r.metric)]);
    step = fv <= needs.step_gate;
  }
  if (step) {
    StepOptions so = opt.step;
    so.band = req.settling_band;
    const double min_h = req.limit(MetricId::SettlingTime, Sense::AtMost).value_or(0.0);
    e.step = step_response(cl, e.poles, so, min_h);
    at(MetricId::Overshoot) = number(e.step->overshoot_pct);
    at(MetricId::SettlingTime) = number(e.step->settling_time_s);
    at(MetricId::RiseTime) = number(e.step->rise_time_s);
    at(MetricId::PeakEffort) = number(e.step->peak_effort);
  }
  bool tolerance = all || req.has(MetricId::GainTolerance);
  if (!all && tolerance) {
    // Screening: the gain scan only for loops that are near meeting everything else.
    double other = 0.0;
    for (const Requirement& r : req.items)
      if (r.metric != MetricId::GainTolerance) other += requirement_violation(r, v[static_cast<size_t>(r.metric)]);
    tolerance = other <= needs.step_gate;
  }
  if (tolerance) {
    const auto t = req.limit(MetricId::GainTolerance, Sense::AtLeast);
    e.gain = (!all && t) ? gain_tolerance_screen(parts, region, opt.residue_share, *t / 100.0)
                         : gain_tolerance(parts, region, opt.residue_share, 1.01);
    at(MetricId::GainTolerance).value = e.gain.tolerance_pct;
  }
  return e;
}

Evaluation evaluate_all(const Zpk& comp, const std::vector<Plant>& plants, const RequirementSet& req,
                        const Region& region, const AnalysisOptions& opt, const EvaluationNeeds& needs) {
  Evaluation ev;
  ev.all_stable = true;
  for (const Plant& p : plants) {
    ev.plants.push_back(evaluate_loop(comp, p, req, region, opt, needs));
    ev.all_stable = ev.all_stable && ev.plants.back().stable;
  }
  std::vector<double> per_plant(plants.size(), 0.0);
  ev.all_met = ev.all_stable;
  for (const Requirement& r : req.items) {
    RequirementOutcome o;
    o.requirement = r;
    double worst_key = -INFINITY;
    for (size_t i = 0; i < ev.plants.size(); ++i) {
      const LoopEvaluation& le = ev.plants[i];
      const MetricValue& mv = le.values[static_cast<size_t>(r.metric)];
      double viol = requirement_violation(r, mv);
      if (!le.stable) viol = std::max(viol, 1e3);
      per_plant[i] += viol;
      // Rank: larger violation is worse; among met ones, the smaller margin is worse.
      // Capped violations tie: among them the larger real shortfall is worse.
      const double scale = std::abs(r.limit) > 0.0 ? std::abs(r.limit) : 1.0;
      double key = viol;
      if (viol == 0.0) key = mv.infinite ? -1e300 : -requirement_margin(r, *mv.value) / scale * 1e-6;
      else if (mv.value) key = viol + 1e-9 * std::tanh(-requirement_margin(r, *mv.value) / scale);
      if (key > worst_key) {
        worst_key = key;
        o.worst = mv;
        o.worst_plant = static_cast<int>(i);
        o.violation = viol;
      }
    }
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
