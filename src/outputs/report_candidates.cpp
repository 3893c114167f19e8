#include <algorithm>
#include <cmath>

#include "polewright/outputs/design_output.hpp"
#include "polewright/outputs/report.hpp"
#include "svg_palette.hpp"
#include "svg_plot.hpp"
#include "report_util.hpp"

namespace pw {

std::string report_candidates_section(const ReportData& d) {
  if (d.designs.empty()) return "<p>No candidate was returned.</p>\n";
  // Table: one row per candidate, one column per requirement bound (worst value over the plants).
  std::string h = "<table class=\"pw-table\"><thead><tr><th>candidate</th><th>verdict</th>";
  for (const Requirement& r : d.spec.requirements.items) {
    const MetricInfo& info = metric_info(r.metric);
    h += "<th>" + xml_escape(d.spec.requirements.label(r.metric)) + "<br/><span class=\"pw-note\">" + (r.sense == Sense::AtMost ? "&#8804; " : "&#8805; ") +
         xml_escape(format_number(r.limit, 4)) + (info.unit[0] ? " " + xml_escape(info.unit) : "") + "</span></th>";
  }
  h += "<th>settling</th><th>zero-pole gain</th><th>low-frequency gain</th><th>zeros</th><th>poles</th></tr></thead><tbody>\n";
  for (const ReportDesign& rd : d.designs) {
    h += "<tr><td><span class=\"pw-swatch\" style=\"background:" + std::string(candidate_colour(rd.colour)) + "\"></span>" +
         xml_escape(rd.label) + "</td><td>" +
         (rd.evaluation.all_met ? "<span class=\"pw-ok\">met</span>" : "<span class=\"pw-bad\">not met</span>") + "</td>";
    for (const Requirement& r : d.spec.requirements.items) {
      const RequirementOutcome* o = nullptr;
      for (const RequirementOutcome& x : rd.evaluation.outcomes)
        if (x.requirement.metric == r.metric && x.requirement.sense == r.sense) o = &x;
      if (!o) {
        h += "<td class=\"num\">n/a</td>";
        continue;
      }
      const std::string cls = o->met ? "num" : "num pw-bad";
      h += "<td class=\"" + cls + "\">" + xml_escape(report::metric_text(o->worst, "")) + "</td>";
    }
    h += std::string("<td>") + (!rd.fragile ? "-" : *rd.fragile ? "<span class=\"pw-bad\">fragile</span>" : "robust") + "</td>";
    h += "<td class=\"num\">" + xml_escape(format_number(rd.compensator.gain, 3)) + "</td><td class=\"num\">" +
         xml_escape(format_number(zpk_low_frequency_gain(rd.compensator), 3)) + "</td><td class=\"pw-roots\">" +
         report::roots_html(rd.compensator.zeros, 3) + "</td><td class=\"pw-roots\">" + report::roots_html(rd.compensator.poles, 3) +
         "</td></tr>\n";
  }
  h += "</tbody></table>\n<p class=\"pw-note\">Worst value over the nominal plant and every variant; red: the bound is not met. "
       "Roots to three digits (a conjugate pair once, as re &#177; im j); the exact values are in the result file. " +
       report::gain_convention_html() + " " + xml_escape(fragile_explanation()) + ".</p>\n";

  // Overlaid nominal step responses.
  const double t_end = report::step_plot_end(d);
  Plot p(1040, 380, "Unit step of every candidate (nominal plant)");
  p.x.label = "time t (s)";
  p.y.label = "output y (reference = 1)";
  double lo = 0.0, hi = 1.0;
  std::vector<double> t, v;
  bool any = false;
  auto style_of = [](size_t i, const ReportDesign& rd) {
    Style s;
    s.stroke = candidate_colour(rd.colour);
    s.width = i == 0 ? 2.4 : 1.6;
    return s;
  };
  for (size_t i = 0; i < d.designs.size(); ++i) p.legend_line(d.designs[i].label, style_of(i, d.designs[i]));  // rank order
  for (size_t i = d.designs.size(); i-- > 0;) {  // rank 1 drawn last, on top
    const ReportDesign& rd = d.designs[i];
    const LoopEvaluation& e = rd.evaluation.plants.front();
    if (!e.step || e.step->trace.y.empty()) continue;
    any = true;
    report::trace_xy(e.step->trace, false, t_end, t, v);
    for (double x : v)
      if (std::isfinite(x)) {
        lo = std::min(lo, x);
        hi = std::max(hi, x);
      }
    p.line(t, v, style_of(i, rd));
  }
  if (!any) return h;
  const double yf = d.designs.front().evaluation.plants.front().step ? d.designs.front().evaluation.plants.front().step->final_value : 1.0;
  if (auto os = d.spec.requirements.limit(MetricId::Overshoot, Sense::AtMost)) hi = std::max(hi, yf * (1.0 + *os / 100.0));
  double a = lo - 0.04 * (hi - lo), b = hi + 0.06 * (hi - lo);
  nice_bounds(a, b, 6);
  p.x.lo = 0.0;
  p.x.hi = t_end;
  p.y.lo = a;
  p.y.hi = b;
  report::draw_step_bounds(p, d, yf, t_end);
  h += "<div class=\"pw-figures\">\n" + report::figure(p.svg(), "Colours follow the candidates in the table; rank 1 is drawn on top.") + "</div>\n";
  return h;
}

}  // namespace pw
