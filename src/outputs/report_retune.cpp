#include <cmath>

#include "polewright/outputs/report.hpp"
#include "svg_palette.hpp"
#include "report_util.hpp"

namespace pw {

namespace {

// A change list value as text: a number (gain, real root) or a pair "re ± im j" (the upper root).
std::string change_value(const nlohmann::json& v) {
  if (v.is_number()) return xml_escape(format_number(v.get<double>(), 4));
  if (v.is_object() && v.contains("re") && v.contains("im") && v["re"].is_number() && v["im"].is_number())
    return report::root_html(Complex(v["re"].get<double>(), v["im"].get<double>()), 4);
  return "none";
}

std::string damping_text(const nlohmann::json& c, const char* key) {
  if (!c.contains(key) || !c[key].is_number()) return "";
  return " <span class=\"pw-note\">(&#950; " + xml_escape(format_number(c[key].get<double>(), 3)) + ")</span>";
}

const RequirementOutcome* outcome_of(const Evaluation& ev, const Requirement& r) {
  for (const RequirementOutcome& o : ev.outcomes)
    if (o.requirement.metric == r.metric && o.requirement.sense == r.sense) return &o;
  return nullptr;
}

std::string verdict(const RequirementOutcome* o) {
  if (!o) return "n/a";
  return o->met ? "<span class=\"pw-ok\">met</span>" : "<span class=\"pw-bad\">not met</span>";
}

// "settling_time_s.max" as the requirement it names: "settling time &#8804; 0.6 s"; the key as
// given when it names none of the spec's requirements.
std::string driven_html(const ReportData& d, const std::string& key) {
  const size_t dot = key.rfind('.');
  const std::string metric = key.substr(0, dot), bound = dot == std::string::npos ? "" : key.substr(dot + 1);
  for (const Requirement& r : d.spec.requirements.items) {
    const MetricInfo& info = metric_info(r.metric);
    if (metric != info.key) continue;
    if ((bound == "max") != (r.sense == Sense::AtMost)) continue;
    return "<span class=\"nowrap\">" + xml_escape(info.label) + (r.sense == Sense::AtMost ? " &#8804; " : " &#8805; ") +
           xml_escape(format_number(r.limit, 4)) + (info.unit[0] ? " " + xml_escape(info.unit) : "") + "</span>";
  }
  return xml_escape(key);
}

}  // namespace

std::string report_retune_section(const ReportData& d) {
  if (d.job != JobKind::Retune) return "";
  if (!d.previous) {
    if (d.unchanged)
      return "<p><span class=\"pw-badge met\">unchanged</span> The compensator in service already meets every requirement on "
             "every plant model, so the retune changed nothing. This page shows the design in service only.</p>\n";
    return "<p><span class=\"pw-badge not_met\">no candidate</span> The retune returned no candidate; this page shows the "
           "design in service only.</p>\n";
  }
  const ReportDesign& now = d.designs.front();
  const ReportDesign& old = *d.previous;
  const nlohmann::json none;
  const nlohmann::json& cand = d.document.contains("candidates") && d.document["candidates"].is_array() &&
                                       !d.document["candidates"].empty()
                                   ? d.document["candidates"][0]
                                   : none;
  std::string h = "<div class=\"pw-flow\">\n<div>\n";
  // The change list of the new design, as the result gives it.
  h += "<p style=\"margin:0 0 6px\">From the design in service (grey in the plots) to <span class=\"pw-swatch\" style=\"background:" +
       std::string(candidate_colour(now.colour)) + "\"></span>" + xml_escape(now.label) + "</p>\n";
  h += "<table class=\"pw-table pw-changes pw-compact\"><thead><tr><th>item</th><th>old</th><th>new</th><th>change</th><th>driven by</th>"
       "</tr></thead><tbody>\n";
  size_t rows = 0;
  if (cand.is_object() && cand.contains("changes") && cand["changes"].is_array()) {
    for (size_t ci = 0; ci < cand["changes"].size(); ++ci) {
      const nlohmann::json& c = cand["changes"][ci];
      if (!c.is_object()) continue;
      ++rows;
      if (c.contains("item") && !c["item"].is_string())
        throw SpecError("$.candidates[0].changes[" + std::to_string(ci) + "].item", "must be a string (gain, zero or pole)");
      const std::string item = c.contains("item") ? c["item"].get<std::string>() : std::string("?");
      const int index = c.contains("index") && c["index"].is_number_integer() ? c["index"].get<int>() : 0;
      const nlohmann::json& pc = c.contains("percent_change") ? c["percent_change"] : none;
      std::string pct = "new";
      if (pc.is_number()) pct = (pc.get<double>() > 0 ? "+" : "") + format_number(pc.get<double>(), 3) + " %";
      const std::string driven = c.contains("driven_by") && c["driven_by"].is_string() ? c["driven_by"].get<std::string>() : "";
      const std::string name = item == "gain" ? "low-frequency gain" : item + (index > 0 ? " " + std::to_string(index) : "");
      h += "<tr class=\"pw-change\"><td class=\"nowrap\">" + xml_escape(name) +
           "</td><td class=\"num\">" + change_value(c.contains("old") ? c["old"] : none) + damping_text(c, "old_damping") +
           "</td><td class=\"num\">" + change_value(c.contains("new") ? c["new"] : none) + damping_text(c, "new_damping") +
           "</td><td class=\"num\">" + xml_escape(pct) + "</td><td>" + (driven.empty() ? "&#8212;" : driven_html(d, driven)) + "</td></tr>\n";
    }
  }
  if (rows == 0) h += "<tr><td colspan=\"5\">no change listed</td></tr>\n";
  h += "</tbody></table>\n<p class=\"pw-note\">Change: of the low-frequency gain, or of |root| (the corner or natural frequency); pairs also show "
       "their damping. Driven by: the requirement that fails when that change alone is undone.";
  auto number = [&](const char* key) -> std::string {
    return cand.is_object() && cand.contains(key) && cand[key].is_number() ? format_number(cand[key].get<double>(), 3) : "n/a";
  };
  h += " Change distance " + xml_escape(number("change_decades")) + " decades; response change " +
       xml_escape(number("response_change_decades")) + " decades (RMS of |log10 C<sub>new</sub>/C<sub>old</sub>| over the frequency range).";
  if (cand.is_object() && cand.contains("added_stages") && cand["added_stages"].is_array() && !cand["added_stages"].empty()) {
    std::string added;
    for (const nlohmann::json& a : cand["added_stages"])
      if (a.is_string()) added += (added.empty() ? "" : ", ") + a.get<std::string>();
    h += " Stages added: " + xml_escape(added) + ".";
  }
  h += "</p>\n</div>\n<div>\n";
  // Every requirement: the old and the new worst value over the plants.
  h += "<table class=\"pw-table pw-compact\"><thead><tr><th>requirement</th><th>limit</th><th class=\"nowrap\">old worst</th><th></th><th class=\"nowrap\">new worst</th><th></th>"
       "</tr></thead><tbody>\n";
  for (const Requirement& r : d.spec.requirements.items) {
    const MetricInfo& info = metric_info(r.metric);
    const RequirementOutcome* o = outcome_of(old.evaluation, r);
    const RequirementOutcome* n = outcome_of(now.evaluation, r);
    h += "<tr><td class=\"nowrap\">" + xml_escape(info.label) + "</td><td class=\"num\">" + (r.sense == Sense::AtMost ? "&#8804; " : "&#8805; ") +
         xml_escape(format_number(r.limit, 4)) + (info.unit[0] ? " " + xml_escape(info.unit) : "") + "</td><td class=\"num\">" +
         (o ? xml_escape(report::metric_text(o->worst, info.unit)) : "n/a") + "</td><td>" + verdict(o) + "</td><td class=\"num\">" +
         (n ? xml_escape(report::metric_text(n->worst, info.unit)) : "n/a") + "</td><td>" + verdict(n) + "</td></tr>\n";
  }
  h += "</tbody></table>\n<p class=\"pw-note\">Worst value over the nominal plant and every variant, for the design in service "
       "(old) and the new design. In the plots below the old design is drawn in grey dashes under the new one.</p>\n";
  h += "</div>\n</div>\n";
  return h;
}

}  // namespace pw
