#include "polewright/synthesis/candidate.hpp"

#include <cmath>
#include <cstdio>

#include "polewright/synthesis/fragility.hpp"
#include "polewright/synthesis/parameters.hpp"
#include "polewright/synthesis/problem.hpp"

namespace pw {

LoopContext LoopContext::FromSpec(const Spec& spec) {
  LoopContext c;
  c.plants = spec.plants;
  c.requirements = spec.requirements;
  c.region = region_from_requirements(spec.requirements);
  c.analysis = spec.analysis;
  c.frequency_range = spec.stages.frequency_range_rad_s ? *spec.stages.frequency_range_rad_s
                                                        : default_frequency_range(spec.plants, c.region);
  c.uncut_frequency_range = c.frequency_range;
  c.implementation = spec.implementation;
  if (c.implementation) {
    const double cap = kCornerNyquistShare * M_PI / c.implementation->sample_time_s;
    if (c.frequency_range.second > cap) {
      c.corner_cap_rad_s = cap;
      c.frequency_range.second = cap;
      // A range entirely above the cap keeps a decade below it.
      if (c.frequency_range.first >= cap) c.frequency_range.first = cap / 10.0;
    }
  }
  return c;
}

std::string LoopContext::corner_note() const {
  if (!corner_cap_rad_s || !implementation) return "";
  char buf[400];
  std::snprintf(buf, sizeof buf,
                "corners above %.6g rad/s (%.6g of the Nyquist frequency pi / T = %.6g rad/s at T = %.6g s) are left out "
                "of the search: the frequency range [%.6g, %.6g] rad/s was cut to [%.6g, %.6g] rad/s",
                *corner_cap_rad_s, kCornerNyquistShare, M_PI / implementation->sample_time_s,
                implementation->sample_time_s, uncut_frequency_range.first, uncut_frequency_range.second,
                frequency_range.first, frequency_range.second);
  return buf;
}

Candidate Verifier::verify(const Zpk& compensator, Objective objective, bool fragility) const {
  Candidate c;
  c.compensator = compensator;
  c.verification = evaluate_all(compensator, context_.plants, context_.requirements, context_.region, context_.analysis);
  if (context_.implementation) {
    // The sampled loop is the verdict; the continuous check stays beside it. A compensator the
    // implementation cannot run (a warp point it cannot find, an overflow) meets nothing.
    c.continuous = c.verification;
    try {
      c.verification = evaluate_sampled(compensator, context_.plants, context_.requirements, context_.region,
                                        context_.analysis, *context_.implementation, *c.continuous)
                           .evaluation;
    } catch (const SpecError&) {
      c.verification.all_stable = false;
      c.verification.all_met = false;
      c.verification.total_violation += kUnstableViolation;
      for (RequirementOutcome& o : c.verification.outcomes) o.met = false;
    }
  }
  c.worst = worst_metrics(c.verification.plants, context_.requirements);
  c.meets = c.verification.all_met;
  c.violation = c.verification.total_violation;
  c.objective = objective_value(objective, c.worst, compensator.gain);
  // A loop on the stability boundary (a margin within numerical noise of zero) is no stable design.
  for (const LoopEvaluation& e : c.verification.plants) c.margins_at_noise = c.margins_at_noise || (e.stable && margins_at_noise(e));
  if (c.margins_at_noise) {
    c.verification.all_stable = false;
    c.verification.all_met = false;
    c.meets = false;
    c.violation += kNoiseMarginViolation;
    c.verification.total_violation = c.violation;
  }
  if (fragility) add_fragility(c);
  return c;
}

void Verifier::add_fragility(Candidate& c) const {
  if (!c.verification.all_stable || c.fragility_checked) return;
  c.fragility_checked = true;
  const Fragility f = settling_fragility(c.compensator, context_.plants, context_.requirements, context_.region,
                                         context_.analysis, context_.implementation);
  c.fragility_assessed = f.assessed;
  c.fragile = f.assessed && f.fragile;
  c.settling_jump_share = f.assessed ? f.jump_share : 0.0;
}

}  // namespace pw
