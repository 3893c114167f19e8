// Maps over two axes for sweep results: points coloured by a category (met / not met / unstable,
// ...) or by a metric on a sequential colour ramp, drawn as cells when the points form a full
// rectangular grid (a heat map) and as markers otherwise, with the boundary of the feasible area
// traced along the cell edges between feasible and infeasible neighbours.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "svg_plot.hpp"

namespace pw {

struct MapPoint {
  double x = 0.0, y = 0.0;
  int category = 0;              // index into the categories
  std::optional<double> value;   // metric for the metric colouring (missing: drawn grey)
  bool feasible = false;
};

struct MapCategory {
  std::string label;
  std::string colour;
};

// The points arranged as a full grid: xs and ys ascending, cell[ix][iy] the index of the point at
// (xs[ix], ys[iy]). Empty when the points do not form one (a missing or a repeated node).
struct MapGrid {
  std::vector<double> xs, ys;
  std::vector<std::vector<int>> cell;
  bool empty() const { return xs.empty(); }
};
MapGrid map_grid(const std::vector<MapPoint>& points);

// Cell edges between neighbouring nodes: midpoints (geometric means on a log axis), the outer
// edges mirrored half a step out.
std::vector<double> cell_edges(const std::vector<double>& nodes, bool log);

// The feasible boundary as line segments (x0, y0, x1, y1) in data coordinates: every cell edge
// with a feasible cell on one side and an infeasible one on the other.
struct Segment {
  double x0, y0, x1, y1;
};
std::vector<Segment> feasible_boundary(const std::vector<MapPoint>& points, const MapGrid& grid, bool log_x, bool log_y);

// Our sequential ramp for metric maps, t in [0, 1]: pale sand to deep teal (lightness falls
// monotonically, so it reads in grey too). Non-finite t gives the "missing" grey.
std::string ramp_colour(double t);

// Adds the points to `plot`: cells (grid) or markers, one legend entry per category used, and the
// feasible boundary. With `by_metric`, colours come from the ramp over [vmin, vmax] instead.
void add_category_map(Plot& plot, const std::vector<MapPoint>& points, const std::vector<MapCategory>& categories);
void add_metric_map(Plot& plot, const std::vector<MapPoint>& points, double vmin, double vmax, const std::string& metric_label);

}  // namespace pw
