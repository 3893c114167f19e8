#include <string>

#include "polewright/jobs/check.hpp"
#include "polewright/outputs/report.hpp"
#include "polewright/outputs/report_sweep.hpp"
#include "polewright/requirements/spec_parse.hpp"
#include "polewright/synthesis/fragility.hpp"

namespace pw {

namespace {

std::string structure_label(const nlohmann::json& doc, size_t i) {
  if (!doc.contains("candidates") || !doc["candidates"].is_array() || i >= doc["candidates"].size()) return "";
  const nlohmann::json& c = doc["candidates"][i];
  if (!c.is_object() || !c.contains("structure") || !c["structure"].is_array()) return "";
  std::string s;
  for (const auto& n : c["structure"]) {
    if (!n.is_string()) continue;
    s += (s.empty() ? "" : " + ") + n.get<std::string>();
  }
  return s.empty() ? "gain only" : s;
}

// The compensator in service of a retune result.
Zpk current_of(const nlohmann::json& doc) {
  if (!doc.contains("current") || !doc["current"].is_object()) throw SpecError("$.current", "is missing: a retune result holds the compensator in service");
  if (!doc["current"].contains("compensator")) throw SpecError("$.current.compensator", "is missing");
  const nlohmann::json& j = doc["current"]["compensator"];
  if (!j.is_object()) throw SpecError("$.current.compensator", "must be a compensator object");
  nlohmann::json roots = nlohmann::json::object();  // results write both forms; zeros/poles/gain is the exact one
  for (const char* k : {"gain", "zeros", "poles"})
    if (j.contains(k)) roots[k] = j[k];
  return parse_compensator(roots.empty() ? j : roots, "$.current.compensator");
}

}  // namespace

bool ReportData::met() const {
  if (sweep) return sweep->all_met();
  return !designs.empty() && designs.front().evaluation.all_met;
}

namespace {

// A candidate's figures as check gives them: of the sampled loop when the spec has an
// implementation block (the verdicts of design, retune and check are of that loop), else of the
// continuous loop.
Evaluation evaluation_for_report(const Spec& spec, const Zpk& c, const Region& region, const AnalysisOptions& analysis) {
  if (!spec.implementation) return evaluate_all(c, spec.plants, spec.requirements, region, analysis);
  CheckOptions o;
  o.trace_step = true;
  return run_check(spec, c, o).evaluation;
}

}  // namespace

ReportData prepare_report(const ResultInput& result) {
  if (result.job != JobKind::Check && result.job != JobKind::Design && result.job != JobKind::Retune)
    throw SpecError("$.tool.job", result.job == JobKind::Compensator
                                      ? "is missing: a bare compensator has no spec to report on (give a check, design or retune result)"
                                      : "is \"" + std::string(job_kind_name(result.job)) + "\": the report covers check, design and retune results and sweep directories");
  if (!result.spec) throw SpecError("$.spec", "is missing: the result does not embed its spec");
  ReportData d;
  d.job = result.job;
  d.spec = *result.spec;
  d.name = d.spec.name;
  d.document = result.document;
  d.region = region_from_requirements(d.spec.requirements);
  AnalysisOptions analysis = d.spec.analysis;
  analysis.step.keep_trace = true;
  std::vector<Zpk> compensators = result.compensators;
  if (d.job == JobKind::Retune) {
    const Zpk current = current_of(d.document);
    const nlohmann::json& u = d.document.contains("unchanged") ? d.document["unchanged"] : nlohmann::json();
    d.unchanged = u.is_boolean() && u.get<bool>();
    if (d.unchanged || compensators.empty()) {
      compensators = {current};  // nothing changed: the page shows the design in service only
    } else {
      ReportDesign old;
      old.label = "in service (old)";
      old.compensator = current;
      old.colour = -1;
      old.evaluation = evaluation_for_report(d.spec, current, d.region, analysis);
      d.previous = std::move(old);
    }
  }
  for (size_t i = 0; i < compensators.size(); ++i) {
    ReportDesign rd;
    rd.compensator = compensators[i];
    rd.colour = static_cast<int>(i);
    if (i == 0) {
      CheckOptions o;
      o.trace_step = true;
      CheckReport cr = run_check(d.spec, rd.compensator, o);
      rd.evaluation = std::move(cr.evaluation);
      d.locus = std::move(cr.locus);
    } else {
      rd.evaluation = evaluation_for_report(d.spec, rd.compensator, d.region, analysis);
    }
    const Fragility fr =
        settling_fragility(rd.compensator, d.spec.plants, d.spec.requirements, d.region, d.spec.analysis, d.spec.implementation);
    if (fr.assessed) rd.fragile = fr.fragile;
    if (d.job == JobKind::Check) {
      rd.label = "checked compensator";
    } else if (d.job == JobKind::Retune) {
      rd.label = !d.previous ? std::string(d.unchanged ? "in service (unchanged)" : "in service") : (i == 0 ? "new: " : "rank " + std::to_string(i + 1) + ": ") + structure_label(d.document, i);
    } else {
      rd.label = "rank " + std::to_string(i + 1) + ": " + structure_label(d.document, i);
    }
    d.designs.push_back(std::move(rd));
  }
  return d;
}

}  // namespace pw
