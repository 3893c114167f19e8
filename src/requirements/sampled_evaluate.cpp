#include "polewright/requirements/sampled_evaluate.hpp"

#include "../model/format_text.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <stdexcept>
#include <utility>

#include "polewright/model/biquad.hpp"
#include "polewright/model/polynomial.hpp"
#include "polewright/requirements/spec.hpp"

namespace pw {

namespace {

using detail::fmt;

std::vector<PoleInfo> s_equivalents(const std::vector<DiscretePole>& poles) {
  // Poles at z = 0 are infinitely fast: always inside any region, left out of the s-plane list.
  std::vector<PoleInfo> out;
  for (const DiscretePole& p : poles) {
    if (std::abs(p.z) == 0.0) continue;
    PoleInfo q;
    q.pole = p.s;
    q.damping = p.damping;
    q.natural_frequency = p.natural_frequency;
    q.share = p.share;
    q.residue = std::max(p.residue, 0.0);
    q.matters = p.matters;
    out.push_back(q);
  }
  return out;
}

}  // namespace

GainToleranceResult discrete_gain_tolerance(const Zpk& cd, const SampledPlant& sp, const Region& region, double share) {
  // The continuous definition on the sampled loop: stable, and the poles that matter (mapped to
  // s = ln(z) / T) inside the region. Poles at z = 0 are infinitely fast and always inside.
  return gain_tolerance_scan([&](double k) {
    const DiscretePoles dp = discrete_closed_loop_poles(cd, sp, k, share);
    if (!dp.well_posed || !dp.stable) return false;
    return region_holds(region, s_equivalents(dp.poles));
  });
}

MetricValues discrete_metric_values(const DiscreteLoopAnalysis& a) {
  // The same assignment as the continuous loop's (requirements/evaluate.hpp), from the sampled
  // loop's figures: poles mapped by s = ln(z) / T, L(e^{jwT}), the discrete error constants, the
  // step (at the sample instants, and between them when the analysis looked there).
  MetricValues v{};
  double min_damping = INFINITY;
  for (const DiscretePole& p : a.poles)
    if (p.matters) min_damping = std::min(min_damping, p.damping);
  set_pole_metrics(v, min_damping, a.dominant ? std::optional<double>(a.dominant->natural_frequency) : std::nullopt);
  if (a.well_posed) set_frequency_metrics(v, a.frequency);
  if (!a.stable) return v;
  set_steady_state_metrics(v, a.steady_state);
  if (a.step) set_step_metrics(v, *a.step);
  return v;
}

Zpk float_rounded_compensator(const Zpk& discrete) {
  const BiquadCascade c = biquad_cascade(discrete);
  auto f = [](double x) { return static_cast<double>(static_cast<float>(x)); };
  Zpk out;
  out.gain = f(c.gain);
  for (const Biquad& s : c.sections) {
    // Section (b0 z^2 + b1 z + b2) / (z^2 + a1 z + a2); a first-order one has b2 = a2 = 0, whose
    // common root at z = 0 is dropped.
    Poly b = {f(s.b[0]), f(s.b[1]), f(s.b[2])}, a = {1.0, f(s.a[1]), f(s.a[2])};
    while (b.size() > 1 && a.size() > 1 && b.back() == 0.0 && a.back() == 0.0) {
      b.pop_back();
      a.pop_back();
    }
    while (b.size() > 1 && b.front() == 0.0) b.erase(b.begin());
    out.gain *= b.front();
    for (const Complex& z : poly_roots(b)) out.zeros.push_back(z);
    for (const Complex& p : poly_roots(a)) out.poles.push_back(p);
  }
  return out;
}

ImplementedCompensator implement_compensator(const Zpk& continuous, const Implementation& im,
                                             std::optional<double> crossover_rad_s) {
  const std::string base = "$.implementation";
  ImplementedCompensator r;
  DiscretizeOptions d;
  d.sample_time_s = im.sample_time_s;
  d.method = im.method;
  if (im.method == DiscreteMethod::Prewarp) {
    if (im.prewarp_rad_s) r.warp_rad_s = *im.prewarp_rad_s;
    else if (crossover_rad_s) r.warp_rad_s = *crossover_rad_s;
    else throw SpecError(base + ".prewarp_rad_s", "is needed: the continuous loop has no gain crossover to warp at");
    if (!(*r.warp_rad_s * im.sample_time_s < M_PI))
      throw SpecError(base + ".sample_time_s",
                      fmt("is too long: the warp point %.6g rad/s is at or above the Nyquist frequency %.6g rad/s",
                          *r.warp_rad_s, M_PI / im.sample_time_s));
    d.prewarp_rad_s = *r.warp_rad_s;
  }
  try {
    r.discrete = discretize(continuous, d);
  } catch (const std::invalid_argument& e) {
    throw SpecError(base + ".sample_time_s", e.what());
  }
  bool finite = std::isfinite(r.discrete.gain);
  for (const Roots* set : {&r.discrete.zeros, &r.discrete.poles})
    for (const Complex& c : *set) finite = finite && std::isfinite(c.real()) && std::isfinite(c.imag());
  if (!finite)
    throw SpecError(base + ".sample_time_s",
                    "the discrete compensator overflows at this sample time (a root or the gain is beyond double range)");
  if (im.word_length == WordLength::Float) {
    const Zpk q = float_rounded_compensator(r.discrete);
    bool ok = std::isfinite(q.gain);
    for (const Roots* set : {&q.zeros, &q.poles})
      for (const Complex& c : *set) ok = ok && std::isfinite(c.real()) && std::isfinite(c.imag());
    if (!ok) throw SpecError(base + ".word_length", "a section coefficient or the gain is beyond the range of float");
    r.discrete = q;
  }
  return r;
}

Plant plant_with_compute_delay(const Plant& plant, const Implementation& im) {
  Plant p = plant;
  p.delay_s += im.compute_delay_samples * im.sample_time_s;
  return p;
}

SampledLoopEvaluation evaluate_sampled_loop(const Zpk& cd, const Plant& plant, const Implementation& im,
                                            const RequirementSet& req, const Region& region,
                                            const AnalysisOptions& options, int min_samples, bool screening,
                                            const EvaluationNeeds& needs) {
  DiscreteLoopOptions lo;
  lo.sample_time_s = im.sample_time_s;
  lo.compute_delay = 0;  // folded into the plant's dead time (exact for a fraction too)
  lo.band = req.settling_band;
  lo.residue_share = options.residue_share;
  lo.error_signal = req.error_signal;
  lo.frequency = options.frequency;
  lo.keep_trace = options.step.keep_trace;
  lo.between_samples = !screening;
  if (screening) lo.window_samples = screening_window_samples(req, im.sample_time_s);
  lo.modal_step = screening;  // the instants from the modal expansion when it is reliable
  lo.min_samples = std::min(std::max(min_samples, 0), lo.max_samples);
  const bool all = needs.everything;
  if (!all) {
    // The continuous screening's economy (evaluate_loop), on the sampled loop.
    lo.stop_if_unstable = true;
    lo.frequency_response = needs.frequency || needs_frequency_response(req);
    const bool step = needs.step || needs_step_response(req);
    lo.step_gate = [&req, &needs, step](const DiscreteLoopAnalysis& a) {
      return step && time_domain_gate(req, discrete_metric_values(a), needs.step_gate);
    };
  }
  const Plant p = plant_with_compute_delay(plant, im);
  SampledLoopEvaluation s;
  try {
    s.analysis = analyze_discrete_loop(cd, p, lo);
  } catch (const std::invalid_argument& e) {
    throw SpecError("$.implementation.sample_time_s", e.what());
  }
  const DiscreteLoopAnalysis& a = s.analysis;
  LoopEvaluation& e = s.loop;
  e.plant_name = plant.name;
  e.well_posed = a.well_posed;
  e.stable = a.well_posed && a.stable;
  e.poles.poles = s_equivalents(a.poles);
  e.poles.stable = e.stable;
  e.poles.residues_reliable = true;
  for (const DiscretePole& q : a.poles) e.poles.residues_reliable = e.poles.residues_reliable && q.residue >= 0.0;
  e.step = a.step;
  e.frequency = a.frequency;
  e.steady_state = a.steady_state;
  if (a.dominant && std::abs(a.dominant->z) > 0.0) e.dominant_pole = a.dominant->s;
  e.region_ok = e.stable && region_holds(region, e.poles.poles);
  e.values = discrete_metric_values(a);
  if (a.step_truncated) {
    // A cut step gives no figure at all (an overshoot read before the peak would pass).
    for (const MetricInfo& info : metric_table())
      if (info.time_domain) e.values[static_cast<size_t>(info.id)] = MetricValue{};
    e.step.reset();
  }
  bool tolerance = req.has(MetricId::GainTolerance) && e.stable;
  if (tolerance && !all) {
    // Screening: the gain scan only for loops that are near meeting everything else.
    double other = 0.0;
    for (const Requirement& r : req.items)
      if (r.metric != MetricId::GainTolerance) other += requirement_violation(r, e.values[static_cast<size_t>(r.metric)]);
    tolerance = other <= needs.step_gate;
  }
  if (tolerance) {
    const SampledPlant sp = sample_plant(p, im.sample_time_s, 0);
    e.gain = discrete_gain_tolerance(cd, sp, region, options.residue_share);
    set_gain_tolerance_metric(e.values, e.gain.tolerance_pct);
  }
  return s;
}

int screening_window_samples(const RequirementSet& req, double T) {
  double longest = 0.0;
  for (const Requirement& r : req.items)
    if (r.sense == Sense::AtMost &&
        (r.metric == MetricId::SettlingTime || r.metric == MetricId::RiseTime))
      longest = std::max(longest, r.limit);
  if (!(longest > 0.0) || !(T > 0.0)) return 0;
  const double cap = DiscreteLoopOptions{}.max_samples;
  return static_cast<int>(std::min(cap, std::max(200.0, std::ceil(4.0 * longest / T))));
}

SampledEvaluation evaluate_sampled(const Zpk& c, const std::vector<Plant>& plants, const RequirementSet& req,
                                   const Region& region, const AnalysisOptions& options, const Implementation& im,
                                   const Evaluation& continuous) {
  SampledEvaluation r;
  r.implementation = im;
  std::optional<double> wc;
  if (!continuous.plants.empty()) wc = continuous.plants.front().frequency.crossover_rad_s;
  r.compensator = implement_compensator(c, im, wc);
  const double T = im.sample_time_s;
  const int cap = DiscreteLoopOptions{}.max_samples;
  std::vector<LoopEvaluation> loops;
  for (size_t i = 0; i < plants.size(); ++i) {
    int min_samples = 0;
    if (i < continuous.plants.size() && continuous.plants[i].step)
      min_samples = static_cast<int>(std::min<double>(cap, std::ceil(continuous.plants[i].step->horizon_s / T) + 1.0));
    r.loops.push_back(evaluate_sampled_loop(r.compensator.discrete, plants[i], im, req, region, options, min_samples));
    if (r.loops.back().analysis.step_truncated) r.warnings.push_back(sampled_step_truncated_warning(plants[i].name, cap, T));
    loops.push_back(r.loops.back().loop);
  }
  r.evaluation = evaluation_of(std::move(loops), req);
  if (wc && *wc > 0.0) {
    const double ratio = (2.0 * M_PI / T) / *wc;
    if (ratio < 10.0)
      r.warnings.push_back(fmt("the sample rate 2 pi / T = %.4g rad/s is only %.3g times the crossover %.4g rad/s "
                               "(common practice is 10 to 20 times or more)",
                               2.0 * M_PI / T, ratio, *wc));
  }
  return r;
}

std::string sampled_step_truncated_warning(const std::string& plant_name, int max_samples, double sample_time_s) {
  return plant_name + ": " +
         fmt("the sampled step stops at %.0f samples (%.4g s) before its slowest pole has decayed: no step figure is "
             "given (use a longer sample time)",
             static_cast<double>(max_samples), (max_samples - 1) * sample_time_s);
}

std::string implementation_words(const Implementation& im) {
  char buf[160];
  std::snprintf(buf, sizeof buf, "%s, delay %.6g %s%s", discrete_method_name(im.method), im.compute_delay_samples,
                im.compute_delay_samples == 1.0 ? "sample" : "samples",
                im.word_length == WordLength::Float ? ", float coefficients" : "");
  return buf;
}

std::string sampled_label(const Implementation& im) {
  char buf[80];
  std::snprintf(buf, sizeof buf, "sampled at T = %.6g s (", im.sample_time_s);
  return buf + implementation_words(im) + ")";
}

}  // namespace pw
