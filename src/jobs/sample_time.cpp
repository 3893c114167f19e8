#include "polewright/jobs/sample_time.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

#include "polewright/requirements/sampled_evaluate.hpp"
#include "polewright/requirements/spec.hpp"

namespace pw {

std::optional<RateGuidance> rate_guidance(const Implementation& im, const Evaluation& continuous) {
  if (continuous.plants.empty()) return std::nullopt;
  const std::optional<double> wc = continuous.plants.front().frequency.crossover_rad_s;
  if (!wc || !(*wc > 0.0)) return std::nullopt;
  RateGuidance g;
  g.sample_time_s = im.sample_time_s;
  g.crossover_rad_s = *wc;
  g.rate_ratio = (2.0 * M_PI / im.sample_time_s) / *wc;
  g.hold_phase_deg = *wc * im.sample_time_s / 2.0 * 180.0 / M_PI;
  g.delay_phase_deg = *wc * im.compute_delay_samples * im.sample_time_s * 180.0 / M_PI;
  return g;
}

bool SampleTimeOptions::IsValid(std::string* error) const {
  auto fail = [&](const char* m) {
    if (error) *error = m;
    return false;
  };
  if (!(slowest_ratio > 0.0 && fastest_ratio > slowest_ratio && std::isfinite(fastest_ratio)))
    return fail("fastest_ratio must exceed slowest_ratio > 0");
  if (grid_points < 2 || grid_points > 1000) return fail("grid_points must be within 2..1000");
  if (!(relative_tolerance > 0.0 && relative_tolerance < 1.0)) return fail("relative_tolerance must be within (0, 1)");
  return true;
}

namespace {

// The frequency the trial sample times are scaled to: the nominal continuous crossover, else the
// fastest closed-loop pole that matters over the plants.
double reference_frequency(const Evaluation& continuous, bool* is_crossover) {
  *is_crossover = false;
  if (!continuous.plants.empty())
    if (const auto wc = continuous.plants.front().frequency.crossover_rad_s; wc && *wc > 0.0) {
      *is_crossover = true;
      return *wc;
    }
  double w = 0.0;
  for (const LoopEvaluation& e : continuous.plants)
    for (const PoleInfo& p : e.poles.poles)
      if (p.matters) w = std::max(w, std::abs(p.pole));
  return w > 0.0 && std::isfinite(w) ? w : 1.0;
}

}  // namespace

SampleTimeSearch find_slowest_sample_time(const Zpk& c, const std::vector<Plant>& plants, const RequirementSet& req,
                                          const Region& region, const AnalysisOptions& options,
                                          const Implementation& base, const Evaluation& continuous,
                                          const SampleTimeOptions& o) {
  std::string why;
  if (!o.IsValid(&why)) throw std::invalid_argument("SampleTimeOptions: " + why);
  SampleTimeSearch s;
  s.implementation = base;
  s.reference_rad_s = reference_frequency(continuous, &s.reference_is_crossover);
  AnalysisOptions quiet = options;
  quiet.step.keep_trace = false;
  auto meets = [&](double T) {
    Implementation im = base;
    im.sample_time_s = T;
    SampleTimeTrial t;
    t.sample_time_s = T;
    try {
      t.met = evaluate_sampled(c, plants, req, region, quiet, im, continuous).evaluation.all_met;
    } catch (const SpecError&) {
      t.implementable = false;  // e.g. a warp point at or above pi / T
    }
    s.trials.push_back(t);
    return t.met;
  };
  // The fast end also covers the fastest root of the compensator and the plants (a notch on a
  // mode far above the crossover needs that rate) and the spec's own sample time.
  double w_fast = s.reference_rad_s;
  auto take = [&](const Roots& rs) {
    for (const Complex& r : rs)
      if (std::isfinite(std::abs(r))) w_fast = std::max(w_fast, std::abs(r));
  };
  take(c.zeros);
  take(c.poles);
  for (const Plant& p : plants) {
    take(p.tf.zeros);
    take(p.tf.poles);
  }
  double t_fast = 2.0 * M_PI / (o.fastest_ratio * w_fast);
  if (base.sample_time_s > 0.0) t_fast = std::min(t_fast, base.sample_time_s);
  const double t_slow = std::max(t_fast, 2.0 * M_PI / (o.slowest_ratio * s.reference_rad_s));
  s.continuous_met = continuous.all_met;
  double met = 0.0, failed = 0.0;
  for (int k = 0; k < o.grid_points; ++k) {
    const double T = t_fast * std::pow(t_slow / t_fast, k / (o.grid_points - 1.0));
    if (!meets(T)) {
      failed = T;
      break;
    }
    met = T;
  }
  if (met > 0.0) s.slowest_met_s = met;
  if (failed > 0.0) s.first_failed_s = failed;
  if (met > 0.0 && failed > 0.0) {
    // Bisection on log T between the last trial that met and the first that failed.
    while (failed / met > 1.0 + o.relative_tolerance) {
      const double mid = std::sqrt(met * failed);
      (meets(mid) ? met : failed) = mid;
    }
    s.slowest_met_s = met;
    s.first_failed_s = failed;
  }
  return s;
}

}  // namespace pw
