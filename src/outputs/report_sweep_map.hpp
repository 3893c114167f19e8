// The sweep report's cells as points of the SVG map, and the one-parameter strip (private to the
// library: the SVG layer is not part of the installed API).
#pragma once

#include <vector>

#include "polewright/outputs/report_sweep.hpp"
#include "svg_map.hpp"

namespace pw {

// The cells as map points (category, the metric's worst value when finite, feasible = met).
std::vector<MapPoint> sweep_map_points(const std::vector<SweepCell>& cells);

// The verdict categories of a cell (SweepCell::category): met, not met, bad point or error.
std::vector<MapCategory> sweep_categories();

// The range of a sweep parameter's axis over the swept values: cell edges for a full grid, padded
// values otherwise.
void set_sweep_axis(Axis& a, const std::vector<double>& nodes, bool log, bool grid);

// The figure of a one-parameter sweep (r.strip()): the metric over the parameter, each value
// marked by its verdict in the map's colours, the base requirement's limit as a dashed line.
std::string report_sweep_strip_section(const SweepReport& r, const std::vector<SweepCell>& cells);

}  // namespace pw
