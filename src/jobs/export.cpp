#include "polewright/jobs/export.hpp"

#include "../model/format_text.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <stdexcept>

#include "polewright/jobs/check.hpp"
#include "polewright/requirements/region.hpp"

namespace pw {

std::optional<ExportProblem> ExportOptions::Problem() const {
  auto bad = [](const char* field, const char* message) { return ExportProblem{field, message}; };
  if (!(sample_time_s > 0.0) || !std::isfinite(sample_time_s)) return bad("sample_time_s", "must be a number > 0");
  if (prewarp_rad_s && (!(*prewarp_rad_s > 0.0) || !std::isfinite(*prewarp_rad_s)))
    return bad("prewarp_rad_s", "must be a number > 0");
  if (prewarp_rad_s && !(*prewarp_rad_s * sample_time_s < M_PI))
    return bad("prewarp_rad_s", "must be below the Nyquist frequency pi / T");
  if (!(compute_delay_samples >= 0.0 && compute_delay_samples <= kMaxComputeDelaySamples))
    return bad("compute_delay_samples", "must be a number of samples within 0..50");
  if (clamp && !(std::isfinite(clamp->first) && std::isfinite(clamp->second) && clamp->first < clamp->second))
    return bad("clamp", "needs two finite numbers LO < HI");
  if (!(max_phase_margin_drop_deg >= 0.0)) return bad("max_phase_margin_drop_deg", "must be >= 0");
  if (!(max_gain_margin_drop_db >= 0.0)) return bad("max_gain_margin_drop_db", "must be >= 0");
  if (!(min_rate_ratio > 0.0)) return bad("min_rate_ratio", "must be > 0");
  if (!(unbounded_gain_margin_floor_db >= 0.0)) return bad("unbounded_gain_margin_floor_db", "must be >= 0");
  if (!(float_radius_fraction > 0.0 && float_radius_fraction < 1.0)) return bad("float_radius_fraction", "must be within (0, 1)");
  return std::nullopt;
}

ExportOptions ExportOptions::FromImplementation(const Implementation& im) {
  ExportOptions o;
  o.sample_time_s = im.sample_time_s;
  o.method = im.method;
  o.prewarp_rad_s = im.prewarp_rad_s;
  o.compute_delay_samples = im.compute_delay_samples;
  o.precision = im.word_length == WordLength::Float ? Precision::Float : Precision::Double;
  return o;
}

Implementation ExportOptions::implementation() const {
  Implementation im;
  im.sample_time_s = sample_time_s;
  im.method = method;
  im.prewarp_rad_s = prewarp_rad_s;
  im.compute_delay_samples = compute_delay_samples;
  im.word_length = precision == Precision::Float ? WordLength::Float : WordLength::Double;
  return im;
}

bool ExportOptions::IsValid(std::string* error) const {
  const std::optional<ExportProblem> p = Problem();
  if (p && error) *error = p->field + " " + p->message;
  return !p;
}

namespace {

using detail::fmt;

// A bad export, blamed on the ExportOptions field `field` (see ExportProblem).
[[noreturn]] void bad(const std::string& field, const std::string& msg) { throw SpecError(field, msg); }

}  // namespace

namespace {
// Least crossover frequency times T (rad per sample) for which the sampled loop is evaluated.
constexpr double kMinCrossoverTimesT = 1e-8;
}  // namespace

ExportReport run_export(const ResultInput& in, int rank, const ExportOptions& o) {
  if (const std::optional<ExportProblem> p = o.Problem()) bad(p->field, p->message);
  ExportReport r;
  r.options = o;
  r.rank = rank;
  r.source_job = in.job;
  r.continuous = result_compensator(in, rank);
  r.verified = in.spec.has_value();
  r.design_name = in.spec && !in.spec->name.empty() ? in.spec->name : (in.spec ? "unnamed spec" : "compensator");
  const double T = o.sample_time_s;

  // Continuous figures first: they give the default warp point and the figures to compare with.
  Region region;
  if (in.spec) {
    const Spec& spec = *in.spec;
    r.requirements = spec.requirements;
    r.plants = spec.plants;
    region = region_from_requirements(spec.requirements);
    for (const Plant& p : spec.plants) check_cancellations(r.continuous, p, result_compensator_path(in, rank));
    for (const Plant& p : spec.plants) {
      ExportLoop L;
      L.plant_name = p.name;
      L.continuous_eval = evaluate_loop(r.continuous, p, spec.requirements, region, spec.analysis);
      L.continuous = L.continuous_eval.values;
      L.continuous_stable = L.continuous_eval.stable;
      const auto& wc = L.continuous_eval.frequency.crossover_rad_s;
      if (wc && (!r.crossover_rad_s || *wc > *r.crossover_rad_s)) r.crossover_rad_s = *wc;
      r.loops.push_back(L);
    }
  }

  // Double precision: a root p maps to z = exp(pT), whose distance from 1 is about |p|T; below
  // about 1e-8 the sampled loop's figures are dominated by rounding (a 70 deg phase margin read
  // as -53 deg at T = 1e-11 on the wafer stage). Refused at the crossover, warned at a root.
  if (r.crossover_rad_s && *r.crossover_rad_s * T < kMinCrossoverTimesT)
    bad("sample_time_s", fmt("is too short for double precision: the crossover %.4g rad/s moves only %.3g rad per sample "
                             "(below %.0e), so the sampled loop cannot be evaluated reliably",
                             *r.crossover_rad_s, *r.crossover_rad_s * T, kMinCrossoverTimesT));
  for (const Roots* set : {&r.continuous.zeros, &r.continuous.poles})
    for (const Complex& c : *set)
      if (std::abs(c) > 0.0 && std::abs(c) * T < kMinCrossoverTimesT) {
        r.warnings.push_back(fmt("a compensator root at %.4g rad/s moves only %.3g rad per sample: its discrete value "
                                 "keeps few correct digits in double precision",
                                 std::abs(c), std::abs(c) * T));
        break;
      }

  DiscretizeOptions d;
  d.sample_time_s = T;
  d.method = o.method;
  if (o.method == DiscreteMethod::Prewarp) {
    if (o.prewarp_rad_s) r.warp_rad_s = *o.prewarp_rad_s;
    else if (!r.loops.empty() && r.loops.front().continuous_eval.frequency.crossover_rad_s)
      r.warp_rad_s = *r.loops.front().continuous_eval.frequency.crossover_rad_s;
    else if (!in.spec) bad("prewarp_rad_s", "is needed with the prewarp method for a bare compensator (no spec gives the crossover)");
    else bad("prewarp_rad_s", "is needed: the continuous loop has no gain crossover to warp at");
    if (!(*r.warp_rad_s * T < M_PI))
      bad("sample_time_s", fmt("is too long: the warp point %.6g rad/s is at or above the Nyquist frequency %.6g rad/s",
                               *r.warp_rad_s, M_PI / T));
    d.prewarp_rad_s = *r.warp_rad_s;
  }
  try {
    r.discrete = discretize(r.continuous, d);
  } catch (const std::invalid_argument& e) {
    bad("sample_time_s", e.what());
  }
  auto finite_zpk = [](const Zpk& z) {
    bool ok = std::isfinite(z.gain);
    for (const Roots* set : {&z.zeros, &z.poles})
      for (const Complex& c : *set) ok = ok && std::isfinite(c.real()) && std::isfinite(c.imag());
    return ok;
  };
  if (!finite_zpk(r.discrete))
    bad("sample_time_s", "the discrete compensator overflows at this sample time (a root or the gain is beyond double range)");
  r.cascade = biquad_cascade(r.discrete);
  const double limit = o.precision == Precision::Float ? 3.0e38 : 1.0e300;
  bool in_range = std::abs(r.cascade.gain) < limit;
  for (const Biquad& s : r.cascade.sections)
    for (double c : {s.b[0], s.b[1], s.b[2], s.a[1], s.a[2]}) in_range = in_range && std::abs(c) < limit;
  if (!in_range)
    bad(o.precision == Precision::Float ? "precision" : "sample_time_s",
        "a section coefficient or the gain is beyond the range of the chosen precision");
  for (const Biquad& s : r.cascade.sections) r.radii.push_back(section_pole_radius(s));

  // Warnings that need no spec.
  for (size_t i = 0; i < r.cascade.sections.size(); ++i) {
    const Biquad& s = r.cascade.sections[i];
    if (s.integrator) continue;
    const SectionRadius& rad = r.radii[i];
    const bool close = rad.float_radius >= 1.0 ||
                       std::abs(rad.float_radius - rad.double_radius) > o.float_radius_fraction * (1.0 - rad.double_radius);
    if (close) {
      const std::string msg = fmt("section %.0f is close to instability in float: pole radius %.9g in double, %.9g with "
                                  "a1, a2 rounded to float",
                                  static_cast<double>(i + 1), rad.double_radius, rad.float_radius);
      (o.precision == Precision::Float ? r.warnings : r.notes).push_back(msg);
    }
  }
  for (const Complex& p : r.discrete.poles)
    if (std::abs(p) >= 1.0 && std::abs(p - 1.0) > 1e-12)
      r.notes.push_back(fmt("the compensator has a pole on or outside the unit circle (|z| = %.6g)", std::abs(p)));

  if (!in.spec) {
    r.notes.push_back("a bare compensator carries no spec: the sampled loop is not re-verified "
                      "(export from a check or design result to re-verify it)");
    return r;
  }

  // Re-verification of the sampled loop for every plant, by the routine check uses with an
  // implementation block (evaluate_sampled_loop: the compensator with the coefficients it runs,
  // the plant behind a zero-order hold with its dead time and the computation delay, the step
  // between the samples too), so a spec's verdict and its export's agree.
  const Spec& spec = *in.spec;
  const Implementation im = o.implementation();
  const Zpk as_run = o.precision == Precision::Float ? float_rounded_compensator(r.discrete) : r.discrete;
  if (spec.implementation) {
    const Implementation& si = *spec.implementation;
    const bool same = si.sample_time_s == im.sample_time_s && si.method == im.method &&
                      si.prewarp_rad_s == im.prewarp_rad_s && si.compute_delay_samples == im.compute_delay_samples &&
                      si.word_length == im.word_length;
    if (same)
      r.notes.push_back("the sampled loop of the spec's implementation block (" + sampled_label(im) + "), as check judges it");
    else
      r.warnings.push_back("the spec's implementation block is " + sampled_label(si) + ", this export " + sampled_label(im) +
                           ": the verdict below is of another loop than the one check and design judge");
  }
  r.discrete_stable = true;
  for (size_t i = 0; i < spec.plants.size(); ++i) {
    ExportLoop& L = r.loops[i];
    const auto& cs = L.continuous_eval.step;
    const int min_samples = cs ? static_cast<int>(std::min<double>(DiscreteLoopOptions{}.max_samples, std::ceil(cs->horizon_s / T) + 1.0)) : 0;
    SampledLoopEvaluation s;
    try {
      s = evaluate_sampled_loop(as_run, spec.plants[i], im, spec.requirements, region, spec.analysis, min_samples);
    } catch (const SpecError& e) {
      bad("sample_time_s", e.message());
    }
    L.discrete_eval = std::move(s.analysis);
    L.discrete = s.loop.values;
    if (L.discrete_eval.step_truncated)
      r.warnings.push_back(sampled_step_truncated_warning(L.plant_name, DiscreteLoopOptions{}.max_samples, T));
    r.discrete_stable = r.discrete_stable && s.loop.stable;
  }
  r.all_met = r.discrete_stable;
  for (const Requirement& req : spec.requirements.items) {
    ExportOutcome out;
    out.requirement = req;
    // The worst case over the plants by the rule check uses (worst_over_plants), for the sampled
    // loop and for the continuous one it is compared with.
    const size_t m = static_cast<size_t>(req.metric);
    const WorstCase wd = worst_over_plants(req, r.loops.size(), [&](size_t i) {
      return PlantValue{r.loops[i].discrete[m], r.loops[i].discrete_eval.stable};
    });
    const WorstCase wc = worst_over_plants(req, r.loops.size(), [&](size_t i) {
      return PlantValue{r.loops[i].continuous[m], r.loops[i].continuous_stable};
    });
    out.discrete = wd.worst;
    out.worst_plant = wd.plant;
    out.continuous = wc.worst;
    if (metric_info(req.metric).on_request) {
      out.judged = false;
      out.worst_plant = wc.plant;
      if (std::find(r.not_judged.begin(), r.not_judged.end(), metric_info(req.metric).key) == r.not_judged.end())
        r.not_judged.push_back(metric_info(req.metric).key);
      r.outcomes.push_back(out);
      continue;
    }
    out.met = wd.violation == 0.0 && r.discrete_stable;
    r.all_met = r.all_met && out.met;
    r.outcomes.push_back(out);
  }

  // Warnings that compare the two loops.
  if (!r.discrete_stable) r.warnings.push_back("the sampled loop is unstable (a closed-loop pole with |z| >= 1)");
  for (const ExportLoop& L : r.loops) {
    const auto& cp = L.continuous[static_cast<size_t>(MetricId::PhaseMargin)];
    const auto& dp = L.discrete[static_cast<size_t>(MetricId::PhaseMargin)];
    if (cp.value && dp.value && *cp.value - *dp.value > o.max_phase_margin_drop_deg)
      r.warnings.push_back(L.plant_name + ": " +
                           fmt("phase margin drops by %.3g deg (%.4g -> %.4g deg) in discrete time", *cp.value - *dp.value,
                               *cp.value, *dp.value) + fmt(", more than %.3g deg", o.max_phase_margin_drop_deg));
    const auto& cg = L.continuous[static_cast<size_t>(MetricId::GainMargin)];
    const auto& dg = L.discrete[static_cast<size_t>(MetricId::GainMargin)];
    const double cgv = cg.infinite ? INFINITY : cg.value.value_or(NAN);
    if (dg.value && cg.infinite) {
      // Sampling always bounds the gain margin: warn only when it ends below the floor.
      const std::string msg = L.plant_name + ": " + fmt("the unbounded gain margin becomes %.4g dB in discrete time", *dg.value);
      if (*dg.value < o.unbounded_gain_margin_floor_db)
        r.warnings.push_back(msg + fmt(", under %.3g dB", o.unbounded_gain_margin_floor_db));
      else
        r.notes.push_back(msg);
    } else if (dg.value && cg.value && cgv - *dg.value > o.max_gain_margin_drop_db) {
      r.warnings.push_back(L.plant_name + ": " +
                           fmt("gain margin drops by %.3g dB (%.4g -> %.4g dB) in discrete time", cgv - *dg.value, cgv,
                               *dg.value) +
                           fmt(", more than %.3g dB", o.max_gain_margin_drop_db));
    }
  }
  if (r.crossover_rad_s) {
    const double ratio = (2.0 * M_PI / T) / *r.crossover_rad_s;
    if (ratio < o.min_rate_ratio)
      r.warnings.push_back(fmt("the sample rate 2 pi / T = %.4g rad/s is only %.3g times the crossover %.4g rad/s",
                               2.0 * M_PI / T, ratio, *r.crossover_rad_s) +
                           fmt(" (under %.3g; common practice is 10 to 20 times or more)", o.min_rate_ratio));
  }
  r.notes.push_back("step figures hold between the samples too: the plant output inside each sample interval is checked");
  for (const Plant& p : r.plants)
    if (p.measured)
      r.warnings.push_back(p.name + ": a measured plant: the sampled loop is judged on its fitted model (the measured points "
                                    "cannot give the response through the hold and the sampler); the continuous figures "
                                    "of check come from the data");
  return r;
}

}  // namespace pw
