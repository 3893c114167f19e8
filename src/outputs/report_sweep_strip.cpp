#include <algorithm>
#include <cmath>

#include "polewright/outputs/report_sweep.hpp"
#include "report_sweep_map.hpp"
#include "report_util.hpp"
#include "svg_palette.hpp"
#include "svg_plot.hpp"

namespace pw {

namespace {

// The base requirement's numeric limits on the metric ("max", then "min"); a limit written as an
// expression of the parameters has no single value and is left out.
std::vector<std::pair<std::string, double>> numeric_limits_of(const SweepReport& r) {
  std::vector<std::pair<std::string, double>> out;
  const nlohmann::json& base = r.file.base;
  const char* key = metric_info(r.metric).key;
  if (!base.contains("requirements") || !base["requirements"].is_object() || !base["requirements"].contains(key)) return out;
  const nlohmann::json& rq = base["requirements"][key];
  if (!rq.is_object()) return out;
  for (const char* bound : {"max", "min"})
    if (rq.contains(bound) && rq[bound].is_number() && std::isfinite(rq[bound].get<double>())) out.push_back({bound, rq[bound].get<double>()});
  return out;
}

}  // namespace

std::string report_sweep_strip_section(const SweepReport& r, const std::vector<SweepCell>& cells) {
  const SweepParameter& px = r.file.parameters[static_cast<size_t>(r.x)];
  const MetricInfo& mi = metric_info(r.metric);
  const std::string unit = mi.unit[0] ? std::string(" (") + mi.unit + ")" : std::string();
  std::vector<double> xs;  // cells come in ascending x, one per swept value
  for (const SweepCell& c : cells) xs.push_back(c.x);
  const bool log_x = px.log && xs.front() > 0.0;
  const auto limits = numeric_limits_of(r);

  // The metric axis covers the finite values and the limits.
  double lo = 0.0, hi = 0.0;
  bool any = false;
  auto take = [&](double v) {
    lo = any ? std::min(lo, v) : v;
    hi = any ? std::max(hi, v) : v;
    any = true;
  };
  for (const SweepCell& c : cells)
    if (c.worst && std::isfinite(*c.worst)) take(*c.worst);
  for (const auto& l : limits) take(l.second);
  if (!any) hi = 1.0;
  nice_bounds(lo, hi, 5);

  Plot p(720, 380, std::string(mi.label) + " over " + px.name);
  set_sweep_axis(p.x, xs, log_x, false);
  if (xs.size() <= 24) p.x.fixed_ticks = xs;  // ticks at the swept values, as on the map
  p.x.label = "sweep parameter " + px.name + " (units of the sweep file)";
  p.y.lo = lo;
  p.y.hi = hi;
  p.y.label = std::string(r.worst_is_max ? "largest " : "smallest ") + mi.label + unit;

  // A thin line through the finite values, to read the trend; broken where a value is missing.
  std::vector<double> ty;
  for (const SweepCell& c : cells) ty.push_back(c.worst && std::isfinite(*c.worst) ? *c.worst : NAN);
  Style trend;
  trend.stroke = colour::kMuted;
  trend.width = 1.0;
  p.line(xs, ty, trend);

  Style limit;
  limit.stroke = colour::kLimit;
  limit.width = 1.3;
  limit.dash = "6 4";
  for (const auto& l : limits)
    p.hline(l.second, limit, std::string(l.first == "max" ? "at most " : "at least ") + format_number(l.second, 4) + (mi.unit[0] ? std::string(" ") + mi.unit : ""),
            "requirement limit");

  // The feasible boundary: between neighbouring values of a complete sweep with different verdicts
  // (midway, geometric on a log axis, as the map's cell edges).
  const bool complete = static_cast<long long>(r.points.size()) == r.expected && cells.size() > 1;
  if (complete) {
    const std::vector<double> edges = cell_edges(xs, log_x);
    Style edge;
    edge.stroke = colour::kInk;
    edge.width = 1.6;
    edge.dash = "2 3";
    bool first = true;
    for (size_t i = 0; i + 1 < cells.size(); ++i)
      if ((cells[i].category == 0) != (cells[i + 1].category == 0)) {
        p.vline(edges[i + 1], edge, "", first ? "boundary of the feasible values" : "");
        first = false;
      }
  }

  // Markers by verdict, one legend entry per verdict present (the map's categories and order). An
  // unbounded value sits on the top edge, a missing one on the bottom edge.
  const std::vector<MapCategory> cats = sweep_categories();
  for (size_t k = 0; k < cats.size(); ++k) {
    std::vector<double> mx, my;
    for (const SweepCell& c : cells) {
      if (c.category != static_cast<int>(k)) continue;
      mx.push_back(c.x);
      my.push_back(!c.worst ? lo + 0.02 * (hi - lo) : std::isfinite(*c.worst) ? *c.worst : lo + 0.98 * (hi - lo));
    }
    if (mx.empty()) continue;
    Style s;
    s.fill = cats[k].colour;
    s.stroke = colour::kInk;
    s.width = 0.6;
    p.markers(mx, my, Marker::Square, 9, s, cats[k].label);
  }

  std::string caption = "One marker per swept value of " + px.name + ", coloured by its verdict; height: the " +
                        (r.worst_is_max ? std::string("largest") : std::string("smallest")) + " (worst) " + mi.label +
                        " over the plants. Markers on the top edge: unbounded; on the bottom edge: no value (the point did not run).";
  if (!limits.empty()) caption += " Dashed: the base requirement's limit.";
  if (complete) caption += " Dotted upright lines: where the verdict changes between neighbouring values.";
  return "<div class=\"pw-figures\">\n" + report::figure(p.svg(), caption) + "</div>\n";
}

}  // namespace pw
