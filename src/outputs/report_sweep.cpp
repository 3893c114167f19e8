#include <algorithm>
#include <cmath>

#include "polewright/outputs/report_sweep.hpp"
#include "svg_palette.hpp"
#include "svg_plot.hpp"
#include "report_sweep_map.hpp"
#include "report_util.hpp"

namespace pw {

namespace {

const char* sample_name(SweepSample s) {
  switch (s) {
    case SweepSample::Grid: return "grid";
    case SweepSample::Sobol: return "Sobol";
    case SweepSample::Latin: return "Latin hypercube";
  }
  return "";
}

std::string parameter_text(const SweepParameter& p, SweepSample sample) {
  if (!p.is_range()) {
    std::string s;
    for (double v : p.values) s += (s.empty() ? "" : ", ") + format_number(v, 4);
    return "values " + s;
  }
  std::string s = format_number(p.from, 4) + " to " + format_number(p.to, 4) + (p.log ? ", log scale" : ", linear");
  if (sample == SweepSample::Grid) s += ", " + std::to_string(p.count) + " values";
  return s;
}

std::string status_html(PointStatus status) {
  if (status == PointStatus::Met) return "<span class=\"pw-ok\">met</span>";
  if (status == PointStatus::NotMet) return "<span class=\"pw-bad\">not met</span>";
  return "<span class=\"pw-grey\">" + std::string(status == PointStatus::BadPoint ? "bad point" : point_status_name(status)) + "</span>";
}

// The metrics the table shows: those the base spec requires, and the mapped one.
std::vector<MetricId> table_metrics(const SweepReport& r) {
  std::vector<MetricId> out;
  const nlohmann::json& base = r.file.base;
  for (const MetricInfo& info : metric_table())
    if ((base.contains("requirements") && base["requirements"].is_object() && base["requirements"].contains(info.key)) ||
        info.id == r.metric)
      out.push_back(info.id);
  return out;
}

std::string value_text(const std::optional<double>& v) {
  if (!v) return "";
  if (!std::isfinite(*v)) return "unbounded";
  return format_number(*v, 3);
}

}  // namespace

std::vector<MapCategory> sweep_categories() {
  return {{"met", colour::kMet}, {"not met", colour::kNotMet}, {"bad point or error", colour::kMuted}};
}

void set_sweep_axis(Axis& a, const std::vector<double>& nodes, bool log, bool grid) {
  a.log = log;
  if (nodes.empty()) return;
  if (grid) {
    const std::vector<double> e = cell_edges(nodes, log);
    a.lo = e.front();
    a.hi = e.back();
    return;
  }
  double lo = nodes.front(), hi = nodes.back();
  if (log) {
    const double f = hi > lo ? std::pow(hi / lo, 0.06) : 1.5;
    a.lo = lo / f;
    a.hi = hi * f;
  } else {
    const double pad = hi > lo ? 0.06 * (hi - lo) : std::max(0.5, 0.1 * std::abs(lo));
    a.lo = lo - pad;
    a.hi = hi + pad;
  }
}

std::string report_sweep_summary_section(const ReportData& d) {
  if (!d.sweep) return "";
  const SweepReport& r = *d.sweep;
  const SweepFile& f = r.file;
  const long long found = static_cast<long long>(r.points.size());
  const long long met = r.count(PointStatus::Met), not_met = r.count(PointStatus::NotMet), bad = r.count(PointStatus::BadPoint),
                  err = r.count(PointStatus::Error);
  const std::vector<SweepCell> cells = sweep_cells(r);
  long long cells_met = 0;
  for (const SweepCell& c : cells) cells_met += c.category == 0;
  std::string h = "<div class=\"pw-grid2\">\n<div>\n";
  h += "<p>" + std::string(r.all_met() ? "<span class=\"pw-badge met\">all met</span> every point of the sweep meets its requirements."
                                       : "<span class=\"pw-badge not_met\">" + std::to_string(met) + " of " +
                                             std::to_string(r.expected) + " met</span> not every point of the sweep meets its requirements.") +
       "</p>\n";
  h += "<table class=\"pw-table pw-counts\"><thead><tr><th>points</th><th>count</th></tr></thead><tbody>\n";
  auto row = [&](const std::string& k, long long n, const std::string& swatch) {
    h += "<tr><td>" + (swatch.empty() ? "" : "<span class=\"pw-swatch\" style=\"background:" + swatch + "\"></span>") + xml_escape(k) +
         "</td><td class=\"num\">" + std::to_string(n) + "</td></tr>\n";
  };
  row("in the sweep", r.expected, "");
  row("found in the directories", found, "");
  row("missing (not run yet, or in another shard)", r.expected - found, "");
  row("met", met, colour::kMet);
  row("not met", not_met, colour::kNotMet);
  row("bad point (an invalid spec, or a per-point limit)", bad, colour::kMuted);
  row("error", err, colour::kMuted);
  h += "</tbody></table>\n";
  for (const std::string& t : r.torn)
    h += "<p class=\"pw-note\">" + xml_escape(t) + ": the points file has a torn or corrupt line, or an index outside the "
         "sweep (a run cut short or a damaged file); those lines were skipped, and <code>sweep --resume</code> repairs the "
         "file and redoes those points.</p>\n";
  h += "</div>\n<div>\n<div class=\"pw-kv\">";
  h += "<span class=\"k\">job at every point</span><span>" + xml_escape(sweep_job_name(f.job)) + "</span>";
  h += "<span class=\"k\">sampling</span><span>" + xml_escape(sample_name(f.sample)) +
       (f.sample == SweepSample::Grid ? "" : ", " + std::to_string(f.sample_count) + " points") + ", seed " + std::to_string(f.seed) + "</span>";
  for (const SweepParameter& p : f.parameters)
    h += "<span class=\"k\">" + xml_escape(p.name) + "</span><span>" + xml_escape(parameter_text(p, f.sample)) + "</span>";
  std::string dirs;
  for (const std::string& s : r.dirs) dirs += (dirs.empty() ? "" : ", ") + s;
  h += "<span class=\"k\">read from</span><span>" + xml_escape(dirs) + "</span>";
  const std::string up = r.strip() ? metric_info(r.metric).label : f.parameters[static_cast<size_t>(r.y)].name;
  h += "<span class=\"k\">" + std::string(r.strip() ? "strip" : "map") + "</span><span>" +
       xml_escape(f.parameters[static_cast<size_t>(r.x)].name) + " across, " + xml_escape(up) + " up; " +
       std::to_string(cells_met) + " of " + std::to_string(cells.size()) + (r.strip() ? " values" : " map positions") + " met</span>";
  h += "</div>\n</div>\n</div>\n";
  return h;
}

std::string report_sweep_map_section(const ReportData& d) {
  if (!d.sweep) return "";
  const SweepReport& r = *d.sweep;
  const std::vector<SweepCell> cells = sweep_cells(r);
  if (cells.empty()) return "<p>No point of the sweep has run yet.</p>\n";
  if (r.strip()) return report_sweep_strip_section(r, cells);
  const std::vector<MapPoint> pts = sweep_map_points(cells);
  const MapGrid g = map_grid(pts);
  const SweepParameter& px = r.file.parameters[static_cast<size_t>(r.x)];
  const SweepParameter& py = r.file.parameters[static_cast<size_t>(r.y)];
  std::vector<double> xs, ys;
  for (const MapPoint& p : pts) {
    xs.push_back(p.x);
    ys.push_back(p.y);
  }
  std::sort(xs.begin(), xs.end());
  xs.erase(std::unique(xs.begin(), xs.end()), xs.end());
  std::sort(ys.begin(), ys.end());
  ys.erase(std::unique(ys.begin(), ys.end()), ys.end());
  const bool grid = !g.empty();
  const bool log_x = px.log && xs.front() > 0.0, log_y = py.log && ys.front() > 0.0;
  const MetricInfo& mi = metric_info(r.metric);
  const std::string unit = mi.unit[0] ? std::string(" (") + mi.unit + ")" : std::string();

  Plot pc(540, 420, "Verdict over " + px.name + " and " + py.name);
  Plot pm(540, 420, std::string(r.worst_is_max ? "Largest " : "Smallest ") + mi.label + " over " + px.name + " and " + py.name);
  for (Plot* p : {&pc, &pm}) {
    set_sweep_axis(p->x, xs, log_x, grid);
    set_sweep_axis(p->y, ys, log_y, grid);
    // Ticks at the swept values (a "50" tick between 10, 20, 40 would suggest a point there).
    if (xs.size() <= 24) p->x.fixed_ticks = xs;
    if (ys.size() <= 24) p->y.fixed_ticks = ys;
    p->x.label = "sweep parameter " + px.name + " (units of the sweep file)";
    p->y.label = "sweep parameter " + py.name + " (units of the sweep file)";
  }
  add_category_map(pc, pts, sweep_categories());
  double vmin = 0.0, vmax = 0.0;
  bool any = false;
  for (const MapPoint& p : pts)
    if (p.value) {
      vmin = any ? std::min(vmin, *p.value) : *p.value;
      vmax = any ? std::max(vmax, *p.value) : *p.value;
      any = true;
    }
  add_metric_map(pm, pts, vmin, vmax, mi.label + unit);

  const bool hidden = r.file.parameters.size() > 2;
  std::string rule = hidden ? " Points that differ only in the other parameters share a position: it is met only when every one of "
                              "them is met, not met when any ran and missed, grey when none missed but some could not run."
                            : "";
  std::string shape = grid ? "Cells: one per position of the full grid; the heavy line is the boundary of the feasible (met) area."
                           : "Markers: the points do not form a full grid (a Sobol or Latin sample, or points still missing), so no "
                             "boundary is traced.";
  std::string h = "<div class=\"pw-figures\">\n";
  h += report::figure(pc.svg(), shape + rule);
  h += report::figure(pm.svg(), std::string("Colour: the ") + (r.worst_is_max ? "largest" : "smallest") + " (worst) " + mi.label +
                                    (hidden ? " over the points at each position" : " of each point") +
                                    ", over the plants; grey: no value (the point did not run) or unbounded." +
                                    (grid ? " Heavy line: the feasible boundary, as on the left." : ""));
  h += "</div>\n";
  return h;
}

std::string report_sweep_points_section(const ReportData& d) {
  if (!d.sweep) return "";
  const SweepReport& r = *d.sweep;
  const std::vector<MetricId> ms = table_metrics(r);
  const bool retune = r.file.job == SweepJob::Retune;
  std::string h = "<div class=\"pw-scroll\"><table class=\"pw-table pw-points\"><thead><tr><th>index</th>";
  for (const SweepParameter& p : r.file.parameters) h += "<th>" + xml_escape(p.name) + "</th>";
  h += "<th>status</th><th>structure</th>";
  for (MetricId m : ms) {
    const MetricInfo& info = metric_info(m);
    h += "<th>" + xml_escape(info.label) + (info.unit[0] ? " (" + xml_escape(info.unit) + ")" : "") + "</th>";
  }
  if (retune) h += "<th>change (decades)</th>";
  h += "</tr></thead><tbody>\n";
  const size_t n = std::min(r.points.size(), kSweepTableRows);
  for (size_t i = 0; i < n; ++i) {
    const SweepReportPoint& p = r.points[i];
    h += "<tr class=\"pw-point\"><td class=\"num\">" + std::to_string(p.index) + "</td>";
    for (double v : p.values) h += "<td class=\"num\">" + (std::isfinite(v) ? xml_escape(format_number(v, 4)) : "") + "</td>";
    h += "<td class=\"nowrap\">" + status_html(p.status) + "</td><td>" +
         xml_escape(p.structure.empty() ? p.message : p.structure) + "</td>";
    for (MetricId m : ms) h += "<td class=\"num\">" + xml_escape(value_text(p.metrics[static_cast<size_t>(m)])) + "</td>";
    if (retune) h += "<td class=\"num\">" + xml_escape(value_text(p.change_decades)) + "</td>";
    h += "</tr>\n";
  }
  h += "</tbody></table></div>\n<p class=\"pw-note\">Metrics: worst value over the plants of each point. ";
  if (r.points.size() > n)
    h += "The table shows the first " + std::to_string(n) + " of " + std::to_string(r.points.size()) +
         " points; every point is in the directory's summary.csv (or <code>polewright merge</code> for shards).";
  h += "</p>\n";
  return h;
}

}  // namespace pw
