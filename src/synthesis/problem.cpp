#include "polewright/synthesis/problem.hpp"

#include <cmath>

#include "polewright/requirements/sampled_evaluate.hpp"

namespace pw {

double objective_value(Objective o, const std::vector<MetricValue>& w, double hf_gain) {
  auto get = [&](MetricId id, double missing) {
    const MetricValue& v = w[static_cast<size_t>(id)];
    return v.value ? *v.value : missing;
  };
  switch (o) {
    case Objective::Fastest: return get(MetricId::SettlingTime, kMissingObjective);
    case Objective::MostRobust: return get(MetricId::PeakSensitivity, kMissingObjective);
    case Objective::LeastEffort:
    case Objective::Simplest:
    default: {
      const double effort = get(MetricId::PeakEffort, 1e300);
      return std::log10(std::max(effort, 1e-300)) + 0.25 * std::log10(std::max(std::abs(hf_gain), 1e-300));
    }
  }
}

namespace {
// The one tightening rule: the limit moves inwards by margin |L|.
Requirement tightened(Requirement r, double margin) {
  const double m = margin * std::abs(r.limit);
  r.limit += r.sense == Sense::AtMost ? -m : m;
  return r;
}
}  // namespace

RequirementSet with_design_margin(const RequirementSet& req, double margin) {
  RequirementSet t = req;
  for (Requirement& r : t.items) r = tightened(r, margin);
  t.settling_band = req.settling_band * (1.0 - (margin > 0.0 ? std::max(margin, kSearchBandNarrowing) : 0.0));
  return t;
}

bool meets_with_margin(const Evaluation& e, double margin) {
  if (!e.all_met) return false;
  for (const RequirementOutcome& o : e.outcomes)
    if (requirement_violation(tightened(o.requirement, margin), o.worst) > 0.0) return false;
  return true;
}

std::vector<MetricValue> worst_metrics(const std::vector<LoopEvaluation>& plants, const RequirementSet& req) {
  std::vector<MetricValue> out(kMetricCount);
  for (const MetricInfo& info : metric_table()) {
    const size_t id = static_cast<size_t>(info.id);
    bool higher_is_worse = info.bounds == BoundKind::MaxOnly;
    if (info.bounds == BoundKind::MinOrMax) {
      const bool has_min = req.limit(info.id, Sense::AtLeast).has_value();
      higher_is_worse = !has_min;  // a lower bound makes low values the worry
    }
    bool first = true;
    for (const LoopEvaluation& e : plants) {
      const MetricValue& v = e.values[id];
      if (first) { out[id] = v; first = false; continue; }
      MetricValue& cur = out[id];
      if (!v.known()) { cur = v; continue; }          // a missing value is the worst
      if (!cur.known()) continue;
      if (v.infinite || cur.infinite) {
        const bool v_worse = higher_is_worse ? v.infinite : (cur.infinite && !v.infinite);
        if (v_worse) cur = v;
        continue;
      }
      if (higher_is_worse ? *v.value > *cur.value : *v.value < *cur.value) cur = v;
    }
  }
  return out;
}

CompensatorScorer::CompensatorScorer(std::vector<Plant> plants, RequirementSet req, Region region,
                                     AnalysisOptions screening, Objective objective, double frequency_ref,
                                     std::optional<Implementation> implementation)
    : plants_(std::move(plants)), req_(std::move(req)), region_(region), opt_(screening), objective_(objective),
      frequency_ref_(frequency_ref), implementation_(std::move(implementation)) {}

DesignProblem::DesignProblem(std::vector<Plant> plants, RequirementSet req, Region region, AnalysisOptions screening,
                             Objective objective, ParamSpace space, std::optional<Implementation> implementation)
    : space_(std::move(space)),
      scorer_(std::move(plants), std::move(req), region, screening, objective,
              std::sqrt(space_.freq_lo * space_.freq_hi), std::move(implementation)) {}

DesignScore DesignProblem::score(const std::vector<double>& x) const {
  const Zpk c = params_to_zpk(space_, x);
  DesignScore s = scorer_.score(c);
  // stages.pid: a shape that reads as no PID is infeasible, graded so the search can leave it.
  if (const double v = pid_shape_violation(space_, c); v > 0.0) {
    s.violation += v;
    s.feasible = false;
  }
  return s;
}

std::vector<LoopEvaluation> CompensatorScorer::loops(const Zpk& c, const EvaluationNeeds& needs) const {
  std::vector<LoopEvaluation> evals;
  evals.reserve(plants_.size());
  if (!implementation_) {
    for (const Plant& p : plants_) evals.push_back(evaluate_loop(c, p, req_, region_, opt_, needs));
    return evals;
  }
  const Implementation& im = *implementation_;
  try {
    // The prewarp method without its own warp point warps at the nominal continuous crossover.
    std::optional<double> wc;
    if (im.method == DiscreteMethod::Prewarp && !im.prewarp_rad_s) {
      EvaluationNeeds f;
      f.everything = false;
      f.frequency = true;
      wc = evaluate_loop(c, plants_.front(), req_, region_, opt_, f).frequency.crossover_rad_s;
    }
    const Zpk cd = implement_compensator(c, im, wc).discrete;
    // The sampled screening: step figures at the instants only, from a window of four times the
    // longest time limit (the verification looks between the samples over the whole horizon, and
    // the design margin keeps the search inside the limits).
    for (const Plant& p : plants_) evals.push_back(evaluate_sampled_loop(cd, p, im, req_, region_, opt_, 0, true, needs).loop);
  } catch (const SpecError&) {
    evals.clear();
  }
  return evals;
}

DesignScore CompensatorScorer::score(const Zpk& c) const {
  EvaluationNeeds needs;
  needs.everything = false;
  needs.step = objective_ == Objective::LeastEffort || objective_ == Objective::Simplest || objective_ == Objective::Fastest ||
               (metric_objective_ && metric_info(metric_objective_->metric).time_domain);
  needs.frequency = objective_ == Objective::MostRobust;
  const std::vector<LoopEvaluation> evals = loops(c, needs);
  DesignScore s;
  if (evals.empty()) {
    s.violation = kUnstableViolation + kIllPosedPenalty * static_cast<double>(plants_.size());
    s.objective = 1e300;
    return s;
  }
  double unstable = 0.0;
  for (const LoopEvaluation& e : evals) {
    if (!e.well_posed) {
      unstable += kIllPosedPenalty;
    } else if (!e.stable) {
      // Graded: how far the rightmost pole sits in the right half plane, so the search can climb out.
      const double re = e.poles.poles.empty() ? 0.0 : e.poles.poles.front().pole.real();
      unstable += kUnstablePenalty + kUnstablePenalty * std::tanh(std::max(re, 0.0) / frequency_ref_);
    }
  }
  const std::vector<MetricValue> worst = worst_metrics(evals, req_);
  if (unstable > 0.0) {
    s.violation = kUnstableViolation + unstable;
    return s;
  }
  for (const Requirement& r : req_.items) {
    double v = 0.0;
    for (const LoopEvaluation& e : evals) {
      const MetricValue& mv = e.values[static_cast<size_t>(r.metric)];
      // A step skipped by the screening gate counts as a unit violation per time-domain bound.
      v = std::max(v, (!mv.known() && metric_info(r.metric).time_domain && !e.step) ? 1.0 : requirement_violation(r, mv));
    }
    s.violation += v;
  }
  s.feasible = s.violation == 0.0;
  // |C(inf)| for a biproper compensator is its zpk gain.
  s.objective = objective_value(objective_, worst, c.gain);
  if (metric_objective_) {
    const MetricValue& mv = worst[static_cast<size_t>(metric_objective_->metric)];
    const double v = mv.value ? *mv.value : (mv.infinite ? INFINITY : NAN);
    s.objective = metric_objective_->sense == Sense::AtMost ? v : -v;
  }
  if (!std::isfinite(s.objective)) s.objective = 1e300;
  return s;
}

}  // namespace pw
