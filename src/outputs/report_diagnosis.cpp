// The diagnosis of a design that meets nothing: the binding requirements and the plant's limits,
// read from the result file (the same lists, in the same words, as the text output).
#include "polewright/outputs/report.hpp"
#include "report_util.hpp"

namespace pw {

std::string report_diagnosis_html(const ReportData& d) {
  if (d.job != JobKind::Design || d.met() || !d.document.is_object()) return "";
  const nlohmann::json& doc = d.document;
  std::string h = "<div class=\"pw-diagnosis\"><p><b>Nothing meets every requirement.</b></p>\n";
  bool any = false;
  if (doc.contains("binding") && doc["binding"].is_array() && !doc["binding"].empty()) {
    h += "<p style=\"margin:4px 0 2px\">Binding requirements (each relaxed in turn: the best the search reached)</p><ul>";
    for (const nlohmann::json& b : doc["binding"]) {
      if (!b.is_object()) continue;
      const std::string key = b.value("requirement", std::string("?"));
      const bool at_most = b.value("bound", std::string("max")) == "max";
      auto num = [&](const char* k) {
        return b.contains(k) && b[k].is_number() ? format_number(b[k].get<double>(), 4) : std::string("n/a");
      };
      std::string label = key, unit;
      for (const MetricInfo& info : metric_table())
        if (key == info.key) {
          label = info.label;
          unit = info.unit;
        }
      const std::string u = unit.empty() ? "" : " " + unit;
      auto with_unit = [&](const char* k) {
        if (!std::strcmp(k, "best_value_when_relaxed") && b.value("best_value_unbounded", false))
          return std::string("unbounded (every design tried)");
        const std::string v = num(k);
        return v == "n/a" ? v : v + u;
      };
      h += "<li class=\"pw-binding\">" + xml_escape(label) + " (limit " + (at_most ? "&#8804; " : "&#8805; ") + xml_escape(with_unit("limit")) +
           "): best reachable with it relaxed " + xml_escape(with_unit("best_value_when_relaxed")) +
           (b.value("relaxing_it_meets_the_rest", false) ? ", and then everything else is met" : "") + "</li>";
      any = true;
    }
    h += "</ul>\n";
  }
  if (doc.contains("limits") && doc["limits"].is_array()) {
    std::string items;
    for (const nlohmann::json& l : doc["limits"]) {
      if (!l.is_object() || !l.contains("message") || !l["message"].is_string()) continue;
      const bool binding = l.value("binding", false);
      items += std::string("<li class=\"pw-limit\">") + (binding ? "<span class=\"pw-bad\">binding</span> " : "") +
               xml_escape(l.value("plant", std::string())) + ": " + xml_escape(l["message"].get<std::string>()) + "</li>";
    }
    if (!items.empty()) {
      h += "<p style=\"margin:4px 0 2px\">Limits the plant imposes (common-practice bounds)</p><ul>" + items + "</ul>\n";
      any = true;
    }
  }
  if (!any) h += "<p class=\"pw-note\">The result lists no binding requirement and no plant limit.</p>\n";
  return h + "</div>\n";
}

}  // namespace pw
