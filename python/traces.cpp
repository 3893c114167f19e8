#include "traces.hpp"

#include "polewright/analysis/frequency.hpp"
#include "polewright/requirements/evaluate.hpp"
#include "polewright/requirements/region.hpp"

namespace pwpy {

Traces compute_traces(const pw::ResultInput& result, int rank) {
  if (!result.spec) throw pw::SpecError("$.spec", "is missing: traces need the plants (give spec=...)");
  const pw::Spec& spec = *result.spec;
  const pw::Zpk& c = pw::result_compensator(result, rank);
  pw::AnalysisOptions analysis = spec.analysis;
  analysis.step.keep_trace = true;
  const pw::Region region = pw::region_from_requirements(spec.requirements);
  const pw::Evaluation ev = pw::evaluate_all(c, spec.plants, spec.requirements, region, analysis);
  Traces t;
  t.rank = rank;
  const int pade = spec.analysis.pade_order;
  const pw::LoopParts nominal = pw::make_loop_parts(c, spec.plants.front(), pade);
  t.frequency_rad_s = pw::frequency_grid(nominal.loop_exact, nominal.delay_s, spec.analysis.frequency);
  for (size_t i = 0; i < spec.plants.size(); ++i) {
    PlantTraces p;
    p.name = spec.plants[i].name;
    const pw::LoopEvaluation& e = ev.plants.at(i);
    p.stable = e.stable;
    if (e.step) {
      p.dt = e.step->trace.dt;
      p.y = e.step->trace.y;
      p.u = e.step->trace.u;
    }
    const pw::LoopParts parts = i == 0 ? nominal : pw::make_loop_parts(c, spec.plants[i], pade);
    const pw::LoopResponse L(parts.loop_exact, parts.delay_s);
    p.loop.reserve(t.frequency_rad_s.size());
    for (double w : t.frequency_rad_s) p.loop.push_back(L(w));
    t.plants.push_back(std::move(p));
  }
  return t;
}

}  // namespace pwpy
