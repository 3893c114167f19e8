#include "polewright/synthesis/fragility.hpp"

#include <algorithm>
#include <cmath>

#include "polewright/requirements/sampled_evaluate.hpp"

namespace pw {

namespace {

// The settling time of one loop with the band and the compensator gain given; nullopt when the
// loop is unstable or does not settle within the horizon.
std::optional<double> settling_time(const Zpk& c, const Plant& p, const RequirementSet& step_only,
                                    const Region& region, const AnalysisOptions& options, double band,
                                    const std::optional<Implementation>& im) {
  RequirementSet rs = step_only;
  rs.settling_band = band;
  AnalysisOptions a = options;
  a.step.band = band;
  if (im) {
    try {
      const SampledEvaluation s = evaluate_sampled(c, {p}, rs, region, a, *im, Evaluation{});
      const LoopEvaluation& e = s.evaluation.plants.front();
      if (!e.well_posed || !e.stable || !e.step) return std::nullopt;
      return e.step->settling_time_s;
    } catch (const SpecError&) {
      return std::nullopt;  // e.g. prewarp with no warp point to take: not assessed
    }
  }
  EvaluationNeeds n;
  n.everything = false;
  n.step = true;
  n.step_gate = INFINITY;
  const LoopEvaluation e = evaluate_loop(c, p, rs, region, a, n);
  if (!e.well_posed || !e.stable || !e.step) return std::nullopt;
  return e.step->settling_time_s;
}

}  // namespace

Fragility settling_fragility(const Zpk& compensator, const std::vector<Plant>& plants, const RequirementSet& req,
                             const Region& region, const AnalysisOptions& options,
                             const std::optional<Implementation>& im) {
  // Only the step, with no requirement: its horizon then comes from the poles and residues alone
  // (provably past the last band exit, step.hpp), not from the settling limit, which for a loose
  // limit would simulate many times longer than the loop takes to settle.
  RequirementSet only = req;
  only.items.clear();
  const double band = req.settling_band;
  Fragility f;
  f.assessed = !plants.empty();
  for (const Plant& p : plants) {
    const std::optional<double> t0 = settling_time(compensator, p, only, region, options, band, im);
    if (!t0 || !(*t0 > 0.0)) {
      f.assessed = false;
      return f;
    }
    Zpk up = compensator, down = compensator;
    up.gain *= 1.0 + kFragileGainShare;
    down.gain *= 1.0 - kFragileGainShare;
    const std::optional<double> near[] = {
        settling_time(compensator, p, only, region, options, band * (1.0 - kFragileBandShare), im),
        settling_time(compensator, p, only, region, options, band * (1.0 + kFragileBandShare), im),
        settling_time(up, p, only, region, options, band, im),
        settling_time(down, p, only, region, options, band, im)};
    for (const std::optional<double>& t : near) {
      const double share = t && *t > 0.0 ? std::abs(*t - *t0) / std::min(*t, *t0) : 1e9;
      f.jump_share = std::max(f.jump_share, std::min(share, 1e9));
    }
  }
  f.fragile = f.jump_share > kFragileJumpShare;
  return f;
}

bool margins_at_noise(const LoopEvaluation& e) {
  const MetricValue& pm = e.values[static_cast<size_t>(MetricId::PhaseMargin)];
  const MetricValue& gm = e.values[static_cast<size_t>(MetricId::GainMargin)];
  return (pm.value && std::abs(*pm.value) < kNoisePhaseMarginDeg) || (gm.value && std::abs(*gm.value) < kNoiseGainMarginDb);
}

PrunedCompensator prune_negligible_stages(const Zpk& c, const Structure& s, const std::vector<double>& parameters,
                                          std::pair<double, double> range) {
  PrunedCompensator out;
  out.compensator.gain = c.gain;
  out.structure = s;
  out.parameters = parameters;
  std::vector<size_t> drop_params;  // parameter indices to erase
  size_t root = 0, param = 1;
  const std::vector<StageKind> stages = s.stages();
  double x0_shift = 0.0;
  for (StageKind k : stages) {
    const int n_roots = k == StageKind::Notch ? 2 : 1;
    const int n_params = stage_facts(k).parameters;
    bool negligible = false;
    double factor = 1.0;
    if (k == StageKind::Integrator && root < c.zeros.size()) {
      // factor 1: (s + wi) / s tends to 1 above wi, and x[0] does not carry the integrator.
      negligible = std::abs(c.zeros[root]) <= range.first * std::pow(10.0, kParkedIntegratorDecades);
      out.integrator_dropped = negligible;
    } else if (k != StageKind::Integrator && root + n_roots <= c.zeros.size() && root + n_roots <= c.poles.size()) {
      auto stage_at = [&](Complex sv) {
        Complex v(1.0, 0.0);
        for (int i = 0; i < n_roots; ++i) v *= (sv - c.zeros[root + i]) / (sv - c.poles[root + i]);
        return v;
      };
      const Complex low = stage_at(Complex(0.0, 0.0));
      for (const Complex asym : {low, Complex(1.0, 0.0)}) {
        if (negligible || !(std::abs(asym) > 0.0) || !std::isfinite(std::abs(asym))) continue;
        double worst = 0.0;
        for (int i = 0; i < kNegligibleStageSamples; ++i) {
          const double w = range.first * std::pow(range.second / range.first, i / (kNegligibleStageSamples - 1.0));
          worst = std::max(worst, std::abs(stage_at(Complex(0.0, w)) / asym - 1.0));
        }
        if (worst < kNegligibleStageShare) {
          negligible = true;
          factor = asym.real();  // real: zeros and poles come in conjugate pairs or are real
        }
      }
    }
    if (negligible) {
      out.compensator.gain *= factor;
      ++out.dropped;
      // The DC-normalised gain x[0]: a lead or lag carries unit DC gain, so folding its
      // high-frequency value 1 (= factor) changes the zpk gain's DC-normalised part by |factor / f(0)|.
      if (k != StageKind::Integrator) {
        Complex dc(1.0, 0.0);
        for (int i = 0; i < n_roots; ++i) dc *= c.zeros[root + i] / c.poles[root + i];
        x0_shift += std::log10(std::abs(factor / dc.real()));
      }
      for (int i = 0; i < n_params; ++i) drop_params.push_back(param + static_cast<size_t>(i));
      if (k == StageKind::Integrator) out.structure.integrator = false;
      if (k == StageKind::Lead) --out.structure.lead;
      if (k == StageKind::Lag) --out.structure.lag;
      if (k == StageKind::Notch) --out.structure.notch;
    } else {
      for (int i = 0; i < n_roots && root + i < c.zeros.size(); ++i) out.compensator.zeros.push_back(c.zeros[root + i]);
      for (int i = 0; i < n_roots && root + i < c.poles.size(); ++i) out.compensator.poles.push_back(c.poles[root + i]);
    }
    root += static_cast<size_t>(n_roots);
    param += static_cast<size_t>(n_params);
  }
  // Roots beyond the structure's stages (none from params_to_zpk) stay as they are.
  for (size_t i = root; i < c.zeros.size(); ++i) out.compensator.zeros.push_back(c.zeros[i]);
  for (size_t i = root; i < c.poles.size(); ++i) out.compensator.poles.push_back(c.poles[i]);
  if (!out.parameters.empty() && out.dropped > 0) {
    out.parameters[0] += x0_shift;
    for (auto it = drop_params.rbegin(); it != drop_params.rend(); ++it)
      if (*it < out.parameters.size()) out.parameters.erase(out.parameters.begin() + static_cast<long>(*it));
  }
  return out;
}

}  // namespace pw
