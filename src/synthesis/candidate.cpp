#include "polewright/synthesis/candidate.hpp"

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
  return c;
}

Candidate Verifier::verify(const Zpk& compensator, Objective objective, bool fragility) const {
  Candidate c;
  c.compensator = compensator;
  c.verification = evaluate_all(compensator, context_.plants, context_.requirements, context_.region, context_.analysis);
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
                                         context_.analysis);
  c.fragility_assessed = f.assessed;
  c.fragile = f.assessed && f.fragile;
  c.settling_jump_share = f.assessed ? f.jump_share : 0.0;
}

}  // namespace pw
