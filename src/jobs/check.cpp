#include "polewright/jobs/check.hpp"

#include <cmath>
#include <cstdio>

namespace pw {

void check_cancellations(const Zpk& c, const Plant& plant, const std::string& path) {
  auto scan = [&](const Roots& unstable_set, const Roots& cancel_set, const char* what) {
    for (const Complex& p : unstable_set) {
      if (p.real() < 0.0) continue;
      for (const Complex& z : cancel_set) {
        if (std::abs(z - p) <= 1e-6 * std::max(1.0, std::abs(p))) {
          char buf[200];
          std::snprintf(buf, sizeof buf, "%s at %g%+gj cancels an unstable root of the other block: "
                        "the loop would hide a growing internal signal", what, z.real(), z.imag());
          throw SpecError(path, buf);
        }
      }
    }
  };
  scan(plant.tf.poles, c.zeros, "compensator zero");
  scan(c.poles, plant.tf.zeros, "plant zero");
}

CheckReport run_check(const Spec& spec, const Zpk& compensator, const CheckOptions& options) {
  CheckReport r;
  r.spec_name = spec.name;
  r.spec_document = spec.document;
  r.compensator = compensator;
  r.plants = spec.plants;
  r.requirements = spec.requirements;
  r.analysis = spec.analysis;
  r.analysis.step.keep_trace = options.trace_step;
  r.region = region_from_requirements(spec.requirements);
  for (size_t i = 0; i < spec.plants.size(); ++i) check_cancellations(compensator, spec.plants[i], "$.current");
  r.evaluation = evaluate_all(compensator, spec.plants, spec.requirements, r.region, r.analysis);
  r.locus = root_locus(make_loop_parts(compensator, spec.plants.front(), spec.analysis.pade_order), options.locus);
  return r;
}

}  // namespace pw
