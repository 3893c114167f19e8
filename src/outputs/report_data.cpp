#include <string>

#include "polewright/jobs/check.hpp"
#include "polewright/outputs/report.hpp"

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

}  // namespace

ReportData prepare_report(const ResultInput& result) {
  if (result.job != "check" && result.job != "design")
    throw SpecError("$.tool.job", result.job == "compensator"
                                      ? "is missing: a bare compensator has no spec to report on (give a check or design result)"
                                      : "is \"" + result.job + "\": the report covers check and design results");
  if (!result.spec) throw SpecError("$.spec", "is missing: the result does not embed its spec");
  ReportData d;
  d.job = result.job;
  d.spec = *result.spec;
  d.name = d.spec.name;
  d.document = result.document;
  d.region = region_from_requirements(d.spec.requirements);
  AnalysisOptions analysis = d.spec.analysis;
  analysis.step.keep_trace = true;
  for (size_t i = 0; i < result.compensators.size(); ++i) {
    ReportDesign rd;
    rd.compensator = result.compensators[i];
    rd.colour = static_cast<int>(i);
    if (i == 0) {
      CheckOptions o;
      o.trace_step = true;
      CheckReport cr = run_check(d.spec, rd.compensator, o);
      rd.evaluation = std::move(cr.evaluation);
      d.locus = std::move(cr.locus);
    } else {
      rd.evaluation = evaluate_all(rd.compensator, d.spec.plants, d.spec.requirements, d.region, analysis);
    }
    if (d.job == "check") {
      rd.label = "checked compensator";
    } else {
      rd.label = "rank " + std::to_string(i + 1) + ": " + structure_label(d.document, i);
    }
    d.designs.push_back(std::move(rd));
  }
  return d;
}

}  // namespace pw
