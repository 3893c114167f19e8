#include <cmath>

#include "polewright/model/polynomial.hpp"
#include "polewright/outputs/report.hpp"
#include "svg_palette.hpp"
#include "report_util.hpp"

namespace pw {

namespace {

// A polynomial in s with superscript powers: "12 s<sup>3</sup> + 4.8 s + 1".
std::string poly_html(const Poly& p) {
  std::string s;
  const int n = static_cast<int>(p.size()) - 1;
  for (int i = 0; i <= n; ++i) {
    const double c = p[static_cast<size_t>(i)];
    if (c == 0.0) continue;
    const int power = n - i;
    const double a = std::abs(c);
    std::string term;
    const bool unit = std::abs(a - 1.0) < 1e-12 && power > 0;
    if (!unit) term = xml_escape(format_number(a, 5));
    if (power >= 1) term += std::string(unit ? "" : " ") + "s";
    if (power >= 2) term += "<sup>" + std::to_string(power) + "</sup>";
    if (s.empty()) s = (c < 0 ? "&#8722;" : "") + term;
    else s += (c < 0 ? " &#8722; " : " + ") + term;
  }
  return s.empty() ? "0" : s;
}

std::string requirement_rows(const ReportData& d, const Evaluation& ev) {
  std::string h = "<table class=\"pw-table\"><thead><tr><th>requirement</th><th>limit</th><th>worst</th>"
                  "<th>margin</th><th>verdict</th><th>worst plant</th></tr></thead><tbody>\n";
  for (const RequirementOutcome& o : ev.outcomes) {
    const MetricInfo& info = metric_info(o.requirement.metric);
    const std::string unit = info.unit;
    std::string margin = "n/a";
    if (o.worst.infinite) margin = "unbounded";
    else if (o.worst.value) margin = fmt_margin(o.requirement, *o.worst.value, 3) + (unit.empty() ? "" : " " + unit);
    h += "<tr><td>" + xml_escape(info.label) + "</td><td class=\"num\">" +
         (o.requirement.sense == Sense::AtMost ? "&#8804; " : "&#8805; ") + xml_escape(format_number(o.requirement.limit, 4)) +
         (unit.empty() ? "" : " " + xml_escape(unit)) + "</td><td class=\"num\">" + xml_escape(report::outcome_value_text(o, info.unit)) +
         "</td><td class=\"num\">" + xml_escape(margin) + "</td><td>" +
         (o.met ? "<span class=\"pw-ok\">met</span>" : "<span class=\"pw-bad\">not met</span>") + "</td><td class=\"nowrap\">" +
         xml_escape(report::plant_name(d, static_cast<size_t>(o.worst_plant))) + "</td></tr>\n";
  }
  h += "</tbody></table>\n";
  return h;
}

}  // namespace

std::string report_summary_section(const ReportData& d) {
  std::string h = "<div class=\"pw-grid2\">\n<div>\n";
  if (d.designs.empty()) {
    h += "<p class=\"pw-bad\">The result holds no compensator.</p>\n" + report_diagnosis_html(d) + "</div><div></div></div>\n";
    return h;
  }
  const ReportDesign& best = d.designs.front();
  const Evaluation& ev = best.evaluation;
  h += "<p>" + std::string(ev.all_met ? "<span class=\"pw-badge met\">met</span> every requirement holds on every plant model."
                                      : "<span class=\"pw-badge not_met\">not met</span> at least one requirement fails on some plant model.") +
       (ev.all_stable ? "" : " <span class=\"pw-bad\">A closed loop is unstable.</span>") + "</p>\n";
  h += requirement_rows(d, ev);
  h += report_diagnosis_html(d);
  h += "<p class=\"pw-note\">Margin: distance to the limit in the metric's unit, positive when met; the worst value is taken over "
       "the nominal plant and every variant.</p>\n</div>\n<div>\n";
  const Zpk& c = best.compensator;
  h += "<div class=\"pw-kv\">";
  h += "<span class=\"k\">design</span><span><span class=\"pw-swatch\" style=\"background:" + std::string(candidate_colour(best.colour)) +
       "\"></span>" + xml_escape(best.label) + "</span>";
  h += "<span class=\"k\">zero-pole gain</span><span>" + xml_escape(format_number(c.gain, 5)) + "</span>";
  h += "<span class=\"k\">low-frequency gain</span><span>" + xml_escape(format_number(zpk_low_frequency_gain(c), 5)) +
       (zpk_integrators(c) != 0 ? " (of s<sup>" + std::to_string(zpk_integrators(c)) + "</sup> C(s))" : std::string()) + "</span>";
  h += "<span class=\"k\">zeros</span><span>" + report::roots_html(c.zeros, 4) + "</span>";
  h += "<span class=\"k\">poles</span><span>" + report::roots_html(c.poles, 4) + "</span>";
  h += "</div>\n<p class=\"pw-note\">" + report::gain_convention_html() + "</p>\n<p style=\"margin:8px 0 3px\">C(s) factored</p><div class=\"pw-tf\">" + report::powers_html(xml_escape(zpk_to_string(c))) + "</div>\n";
  h += "<p style=\"margin:8px 0 3px\">C(s) as polynomials</p><div class=\"pw-tf\">(" + poly_html(zpk_numerator(c)) + ") / (" +
       poly_html(zpk_denominator(c)) + ")</div>\n";
  const LoopEvaluation& nominal = ev.plants.front();
  h += "<div class=\"pw-kv\" style=\"margin-top:10px\">";
  if (nominal.gain.lo && nominal.gain.hi)
    h += "<span class=\"k\">gain interval</span><span>&#215;" + xml_escape(format_number(*nominal.gain.lo, 3)) + " to &#215;" +
         xml_escape(format_number(*nominal.gain.hi, 3)) + " of the nominal gain keeps the poles that matter in the region</span>";
  else
    h += "<span class=\"k\">gain interval</span><span>none: the nominal loop's poles that matter are not all in the region "
         "(the region guides the design; the verdict rests on the requirements above)</span>";
  if (nominal.dominant_pole)
    h += "<span class=\"k\">dominant pole</span><span>" + report::root_html(*nominal.dominant_pole, 4) + " (damping " +
         xml_escape(format_number(damping_of(*nominal.dominant_pole), 3)) + ")</span>";
  h += "</div>\n";
  if (!d.region.derivations.empty()) {
    h += "<p style=\"margin:10px 0 3px\">Allowed region of the dominant poles</p><ul class=\"pw-note\" style=\"margin:0;padding-left:18px\">";
    for (const std::string& line : d.region.derivations) h += "<li>" + xml_escape(line) + "</li>";
    h += "</ul>\n";
  }
  h += "</div>\n</div>\n";
  return h;
}

}  // namespace pw
