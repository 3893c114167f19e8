#include "polewright/outputs/json_values.hpp"
#include "polewright/outputs/report.hpp"
#include "polewright/outputs/report_sweep.hpp"
#include "svg_palette.hpp"
#include "svg_text.hpp"

namespace pw {

namespace {

// Our own look: warm paper, ink text, a teal rule; cards that do not break across printed pages.
const char* const kCss = R"CSS(
:root { --ink: #22292f; --muted: #69737a; --rule: #0b6e79; --paper: #fcfcfa; --card: #ffffff; --line: #dfe2dc; }
* { box-sizing: border-box; }
body { margin: 0; background: #f1f2ee; color: var(--ink);
  font-family: "DejaVu Sans", "Liberation Sans", "Helvetica Neue", Arial, sans-serif; font-size: 14px; line-height: 1.45; }
header.pw-head { background: var(--ink); color: #f4f4ef; padding: 18px 28px 14px; border-bottom: 4px solid var(--rule); }
header.pw-head h1 { margin: 0; font-size: 21px; font-weight: 600; letter-spacing: 0.2px; }
header.pw-head .pw-sub { color: #c4cbc9; font-size: 13px; margin-top: 3px; }
main { max-width: 1160px; margin: 0 auto; padding: 18px 22px 40px; }
section.pw-section { background: var(--card); border: 1px solid var(--line); border-radius: 6px; padding: 14px 18px 10px; margin: 0 0 18px; }
section.pw-section > h2 { margin: 0 0 10px; font-size: 16px; font-weight: 600; border-left: 4px solid var(--rule); padding-left: 9px; }
.pw-badge { display: inline-block; padding: 2px 10px; border-radius: 11px; font-weight: 600; font-size: 13px; color: #fff; }
.pw-badge.met { background: #2f7d55; } .pw-badge.not_met { background: #b3261e; }
.pw-cautions { border: 2px solid #9a3412; background: #fff6ef; border-radius: 6px; padding: 9px 14px; margin: 0 0 18px; }
.pw-cautions strong { color: #9a3412; }
.pw-grid2 { display: grid; grid-template-columns: minmax(0, 1.4fr) minmax(0, 1fr); gap: 22px; }
table.pw-table th.nowrap { white-space: nowrap; }
.pw-flow { display: flex; flex-wrap: wrap; gap: 10px 34px; align-items: flex-start; }
.pw-flow > div { flex: 0 0 auto; width: min-content; max-width: 100%; }
table.pw-table.pw-compact { width: auto; }
table.pw-table { border-collapse: collapse; width: 100%; font-size: 13px; }
table.pw-table th { text-align: left; font-weight: 600; color: var(--muted); border-bottom: 2px solid var(--line); padding: 4px 8px; }
table.pw-table td { border-bottom: 1px solid var(--line); padding: 4px 8px; vertical-align: top; }
table.pw-table td.nowrap, table.pw-table td .pw-ok, table.pw-table td .pw-bad { white-space: nowrap; }
table.pw-table td.pw-roots { font-size: 12px; font-variant-numeric: tabular-nums; }
.pw-root, span.nowrap { white-space: nowrap; }
table.pw-table td.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
.pw-ok { color: #2f7d55; font-weight: 600; } .pw-bad { color: #b3261e; font-weight: 600; } .pw-grey { color: var(--muted); font-weight: 600; }
.pw-scroll { max-height: 560px; overflow: auto; border: 1px solid var(--line); border-radius: 4px; }
.pw-scroll table.pw-table th { position: sticky; top: 0; background: var(--card); }
.pw-tf { font-family: "DejaVu Sans Mono", "Liberation Mono", monospace; font-size: 13px; background: #f5f6f2; padding: 6px 9px; border-radius: 4px; overflow-wrap: anywhere; }
.pw-kv { display: grid; grid-template-columns: max-content 1fr; gap: 3px 12px; font-size: 13px; }
.pw-kv .k { color: var(--muted); }
.pw-figures { display: grid; grid-template-columns: repeat(auto-fit, minmax(440px, 1fr)); gap: 12px 18px; align-items: start; }
.pw-split { display: grid; grid-template-columns: minmax(0, 640px) minmax(0, 1fr); gap: 18px; align-items: start; }
.pw-stack { display: grid; gap: 6px; }
figure.pw-figure { margin: 0; min-width: 0; }
figure.pw-figure svg { width: 100%; height: auto; display: block; font-family: inherit; }
figcaption { color: var(--muted); font-size: 12px; margin: 2px 4px 6px; }
.pw-swatch { display: inline-block; width: 12px; height: 12px; border-radius: 2px; vertical-align: -1px; margin-right: 5px; }
.pw-note { color: var(--muted); font-size: 12px; }
.pw-diagnosis { border-left: 3px solid #b3261e; padding: 2px 10px; margin: 10px 0; } .pw-diagnosis ul { margin: 0; padding-left: 18px; }
footer { color: var(--muted); font-size: 12px; text-align: center; padding: 8px 0 20px; }
@media print {
  body { background: #fff; font-size: 11px; }
  header.pw-head { background: #fff; color: var(--ink); border-bottom: 2px solid var(--rule); padding: 6px 0; }
  header.pw-head .pw-sub { color: var(--muted); }
  main { max-width: none; padding: 6px 0; }
  section.pw-section, figure.pw-figure, .pw-cautions { break-inside: avoid; page-break-inside: avoid; }
  section.pw-section { border: none; padding: 4px 0; }
  .pw-figures, .pw-split, .pw-grid2 { grid-template-columns: 1fr; }
  .pw-scroll { max-height: none; overflow: visible; border: none; }
  .pw-badge { border: 1px solid var(--ink); color: var(--ink); background: none !important; }
  @page { size: A4; margin: 14mm; }
}
)CSS";

}  // namespace

std::vector<ReportSection> report_sections(JobKind job) {
  if (job == JobKind::Sweep)
    return {{"summary", "Sweep at a glance", report_sweep_summary_section},
            {"sweep-map", "Sweep map", report_sweep_map_section},
            {"points", "Points of the sweep", report_sweep_points_section}};
  std::vector<ReportSection> s = {
      {"summary", "Verdict and compensator", report_summary_section},
      {"s-plane", "Closed-loop poles and root locus", report_splane_section},
      {"time", "Unit step: output and control effort", report_time_section},
      {"disturbance", "Disturbance steps: output deviation", report_disturbance_section},
      {"actuator", "The loop with the actuator limits", report_saturated_section},
      {"frequency", "Loop frequency response", report_frequency_section},
      {"nyquist", "Nyquist plot and delay margin", report_nyquist_section},
  };
  if (job == JobKind::Design) s.push_back({"candidates", "Ranked candidates", report_candidates_section});
  if (job == JobKind::Retune) {
    // The changes come first after the verdict; the ranked table only when there is more than one.
    s.insert(s.begin() + 1, {"changes", "Changes from the design in service", report_retune_section});
    s.push_back({"candidates", "Ranked candidates", [](const ReportData& d) {
                   return d.designs.size() > 1 ? report_candidates_section(d) : std::string();
                 }});
  }
  return s;
}

std::string report_html(const ReportData& d) {
  std::string h;
  h += "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\"/>\n";
  h += "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\"/>\n";
  h += "<title>polewright " + xml_escape(job_kind_name(d.job)) + " report: " + xml_escape(d.name) + "</title>\n";
  h += "<style>" + std::string(kCss) + "</style>\n</head>\n<body>\n";
  const std::string status = d.met() ? "met" : "not_met";
  h += "<header class=\"pw-head\"><h1>" + xml_escape(d.name.empty() ? std::string("unnamed spec") : d.name) + "</h1>\n";
  if (d.sweep) {
    h += "<div class=\"pw-sub\">polewright sweep report &#183; <span class=\"pw-badge " + status + "\">" +
         std::to_string(d.sweep->count(PointStatus::Met)) + " of " + std::to_string(d.sweep->expected) + " points met</span> &#183; " +
         std::to_string(d.sweep->file.parameters.size()) + " parameter(s) &#183; " + xml_escape(sweep_job_name(d.sweep->file.job)) +
         " at every point</div></header>\n<main>\n";
  } else {
    std::string extra;
    if (d.job == JobKind::Retune) extra = d.previous ? " &#183; retuned from the design in service" : " &#183; design in service unchanged";
    h += "<div class=\"pw-sub\">polewright " + xml_escape(job_kind_name(d.job)) + " report &#183; requirements <span class=\"pw-badge " + status +
         "\">" + (d.met() ? "met" : "not met") + "</span> &#183; " + std::to_string(d.spec.plants.size()) +
         " plant model(s) &#183; " + std::to_string(d.designs.size()) + " compensator(s)" + extra + "</div></header>\n<main>\n";
  }
  h += "<div class=\"pw-cautions\" id=\"cautions\"><strong>Cautions.</strong> " + xml_escape(kCautions) + "</div>\n";
  for (const ReportSection& s : report_sections(d.job)) {
    const std::string body = s.build(d);
    if (body.empty()) continue;
    h += "<section class=\"pw-section\" id=\"" + xml_escape(s.id) + "\">\n<h2>" + xml_escape(s.title) + "</h2>\n" + body + "</section>\n";
  }
  h += std::string("</main>\n<footer>") +
       (d.sweep ? "Made by polewright from the points the sweep wrote. " : "Made by polewright from the spec embedded in the result; every figure was recomputed. ") +
       xml_escape(kCautions) + "</footer>\n</body>\n</html>\n";
  return h;
}

std::string report_html(const ResultInput& result) { return report_html(prepare_report(result)); }

}  // namespace pw
