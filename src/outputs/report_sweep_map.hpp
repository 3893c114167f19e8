// The sweep report's cells as points of the SVG map (private to the library: the SVG layer is not
// part of the installed API).
#pragma once

#include <vector>

#include "polewright/outputs/report_sweep.hpp"
#include "svg_map.hpp"

namespace pw {

// The cells as map points (category, the metric's worst value when finite, feasible = met).
std::vector<MapPoint> sweep_map_points(const std::vector<SweepCell>& cells);

}  // namespace pw
