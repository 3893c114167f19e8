#include "svg_map.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <map>

#include "svg_palette.hpp"
#include "svg_text.hpp"

namespace pw {

namespace {

std::vector<double> unique_sorted(std::vector<double> v) {
  std::sort(v.begin(), v.end());
  v.erase(std::unique(v.begin(), v.end()), v.end());
  return v;
}

int index_of(const std::vector<double>& v, double x) {
  const auto it = std::lower_bound(v.begin(), v.end(), x);
  return it != v.end() && *it == x ? static_cast<int>(it - v.begin()) : -1;
}

}  // namespace

MapGrid map_grid(const std::vector<MapPoint>& points) {
  MapGrid g;
  std::vector<double> xs, ys;
  for (const MapPoint& p : points) {
    if (!std::isfinite(p.x) || !std::isfinite(p.y)) return {};
    xs.push_back(p.x);
    ys.push_back(p.y);
  }
  g.xs = unique_sorted(xs);
  g.ys = unique_sorted(ys);
  if (g.xs.size() * g.ys.size() != points.size() || g.xs.size() < 2 || g.ys.size() < 2) return {};
  g.cell.assign(g.xs.size(), std::vector<int>(g.ys.size(), -1));
  for (size_t i = 0; i < points.size(); ++i) {
    int& c = g.cell[static_cast<size_t>(index_of(g.xs, points[i].x))][static_cast<size_t>(index_of(g.ys, points[i].y))];
    if (c >= 0) return {};  // a repeated node
    c = static_cast<int>(i);
  }
  return g;
}

std::vector<double> cell_edges(const std::vector<double>& nodes, bool log) {
  std::vector<double> e;
  const size_t n = nodes.size();
  if (n == 0) return e;
  auto mid = [&](double a, double b) { return log ? std::sqrt(a * b) : 0.5 * (a + b); };
  if (n == 1) {
    e = log ? std::vector<double>{nodes[0] / 1.5, nodes[0] * 1.5} : std::vector<double>{nodes[0] - 0.5, nodes[0] + 0.5};
    return e;
  }
  e.push_back(log ? nodes[0] * nodes[0] / mid(nodes[0], nodes[1]) : 2.0 * nodes[0] - mid(nodes[0], nodes[1]));
  for (size_t i = 0; i + 1 < n; ++i) e.push_back(mid(nodes[i], nodes[i + 1]));
  e.push_back(log ? nodes[n - 1] * nodes[n - 1] / mid(nodes[n - 2], nodes[n - 1]) : 2.0 * nodes[n - 1] - mid(nodes[n - 2], nodes[n - 1]));
  return e;
}

std::vector<Segment> feasible_boundary(const std::vector<MapPoint>& points, const MapGrid& g, bool log_x, bool log_y) {
  std::vector<Segment> s;
  if (g.empty()) return s;
  const std::vector<double> ex = cell_edges(g.xs, log_x), ey = cell_edges(g.ys, log_y);
  auto feasible = [&](size_t i, size_t j) { return points[static_cast<size_t>(g.cell[i][j])].feasible; };
  for (size_t i = 0; i < g.xs.size(); ++i)
    for (size_t j = 0; j < g.ys.size(); ++j) {
      if (i + 1 < g.xs.size() && feasible(i, j) != feasible(i + 1, j)) s.push_back({ex[i + 1], ey[j], ex[i + 1], ey[j + 1]});
      if (j + 1 < g.ys.size() && feasible(i, j) != feasible(i, j + 1)) s.push_back({ex[i], ey[j + 1], ex[i + 1], ey[j + 1]});
    }
  return s;
}

std::string ramp_colour(double t) {
  if (!std::isfinite(t)) return "#c9cbc6";
  t = std::max(0.0, std::min(1.0, t));
  // Three stops: pale sand, sage, deep teal.
  const double stops[3][3] = {{0xf3, 0xe9, 0xc6}, {0x8f, 0xbf, 0x9a}, {0x0b, 0x4f, 0x5c}};
  const double u = t * 2.0;
  const int k = std::min(1, static_cast<int>(u));
  const double f = u - k;
  char buf[8];
  std::snprintf(buf, sizeof buf, "#%02x%02x%02x", static_cast<int>(std::lround(stops[k][0] + f * (stops[k + 1][0] - stops[k][0]))),
                static_cast<int>(std::lround(stops[k][1] + f * (stops[k + 1][1] - stops[k][1]))),
                static_cast<int>(std::lround(stops[k][2] + f * (stops[k + 1][2] - stops[k][2]))));
  return buf;
}

namespace {

// Draws the cells (or markers) grouped by colour, then the boundary.
// Groups are drawn (and listed in the legend) in ascending `key_of` of their first point.
void draw(Plot& plot, const std::vector<MapPoint>& points, const std::vector<std::string>& colour_of,
          const std::vector<std::string>& legend_of, const std::vector<int>& key_of) {
  const MapGrid g = map_grid(points);
  std::map<std::string, std::vector<size_t>> groups;  // colour -> points (ordered, deterministic)
  std::vector<std::string> order;
  for (size_t i = 0; i < points.size(); ++i) {
    if (!groups.count(colour_of[i])) order.push_back(colour_of[i]);
    groups[colour_of[i]].push_back(i);
  }
  std::stable_sort(order.begin(), order.end(),
                   [&](const std::string& a, const std::string& b) { return key_of[groups[a].front()] < key_of[groups[b].front()]; });
  if (!g.empty()) {
    const std::vector<double> ex = cell_edges(g.xs, plot.x.log), ey = cell_edges(g.ys, plot.y.log);
    for (const std::string& c : order) {
      std::vector<std::vector<double>> boxes;
      for (size_t i : groups[c]) {
        const int ix = index_of(g.xs, points[i].x), iy = index_of(g.ys, points[i].y);
        boxes.push_back({ex[static_cast<size_t>(ix)], ex[static_cast<size_t>(ix) + 1], ey[static_cast<size_t>(iy)], ey[static_cast<size_t>(iy) + 1]});
      }
      Style s;
      s.fill = c;
      s.opacity = 1.0;
      s.stroke = "#ffffff";
      s.width = 0.6;
      plot.rects(boxes, s, legend_of[groups[c].front()]);
    }
    std::vector<double> bx, by;
    for (const Segment& s : feasible_boundary(points, g, plot.x.log, plot.y.log)) {
      bx.insert(bx.end(), {s.x0, s.x1, NAN});
      by.insert(by.end(), {s.y0, s.y1, NAN});
    }
    Style edge;
    edge.stroke = colour::kInk;
    edge.width = 2.4;
    if (!bx.empty()) plot.line(bx, by, edge, "boundary of the feasible area");
    return;
  }
  for (const std::string& c : order) {
    std::vector<double> xs, ys;
    for (size_t i : groups[c]) {
      xs.push_back(points[i].x);
      ys.push_back(points[i].y);
    }
    Style s;
    s.fill = c;
    s.stroke = colour::kInk;
    s.width = 0.6;
    plot.markers(xs, ys, Marker::Square, 9, s, legend_of[groups[c].front()]);
  }
}

}  // namespace

void add_category_map(Plot& plot, const std::vector<MapPoint>& points, const std::vector<MapCategory>& categories) {
  std::vector<std::string> colour_of, legend_of;
  std::vector<int> key_of;
  for (const MapPoint& p : points) {
    key_of.push_back(p.category >= 0 && p.category < static_cast<int>(categories.size()) ? p.category : 1 << 20);
    const bool known = p.category >= 0 && p.category < static_cast<int>(categories.size());
    colour_of.push_back(known ? categories[static_cast<size_t>(p.category)].colour : ramp_colour(NAN));
    legend_of.push_back(known ? categories[static_cast<size_t>(p.category)].label : "unknown");
  }
  draw(plot, points, colour_of, legend_of, key_of);
}

void add_metric_map(Plot& plot, const std::vector<MapPoint>& points, double vmin, double vmax, const std::string& metric_label) {
  // Five legend bins over [vmin, vmax]: each point is coloured by its bin's centre, so the legend
  // names every colour on the map.
  // A legend never reads "2 to 2": the bin edges get up to 6 digits until they differ, and when
  // every value is the same (or too close to tell apart) there is one bin, "= v".
  std::vector<std::string> colour_of, legend_of;
  std::vector<int> key_of;
  int bins = 5;
  int digits = 3;
  const double span = vmax > vmin ? vmax - vmin : 1.0;
  auto edges_differ = [&](int dg) {
    for (int k = 0; k < bins; ++k)
      if (format_number(vmin + span * k / bins, dg) == format_number(vmin + span * (k + 1) / bins, dg)) return false;
    return true;
  };
  if (!(vmax > vmin)) bins = 1;
  else {
    while (digits < 6 && !edges_differ(digits)) ++digits;
    if (!edges_differ(digits)) bins = 1;
  }
  const bool single = bins == 1;
  for (const MapPoint& p : points) {
    if (!p.value || !std::isfinite(*p.value)) {
      colour_of.push_back(ramp_colour(NAN));
      legend_of.push_back(metric_label + ": n/a");
      key_of.push_back(bins);
      continue;
    }
    const int k = std::max(0, std::min(bins - 1, static_cast<int>(std::floor((*p.value - vmin) / span * bins))));
    colour_of.push_back(ramp_colour((k + 0.5) / bins));
    key_of.push_back(k);
    if (single) {
      const std::string lo = format_number(vmin, digits), hi = format_number(vmax, digits);
      legend_of.push_back(metric_label + (lo == hi ? " = " + lo : " " + lo + " to " + hi));
    } else {
      legend_of.push_back(metric_label + " " + format_number(vmin + span * k / bins, digits) + " to " +
                          format_number(vmin + span * (k + 1) / bins, digits));
    }
  }
  draw(plot, points, colour_of, legend_of, key_of);
}

}  // namespace pw
