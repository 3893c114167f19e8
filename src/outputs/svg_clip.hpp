// Clipping to the plot area, in pixel coordinates: polylines are cut where they leave the box
// (exact segment-box intersections) and broken at non-finite points; polygons are clipped to the
// box for filled regions.
#pragma once

#include <string>
#include <vector>

namespace pw {

struct Pt {
  double x = 0.0, y = 0.0;
};

struct Box {
  double x0 = 0.0, y0 = 0.0, x1 = 1.0, y1 = 1.0;  // x0 < x1, y0 < y1
  bool contains(const Pt& p) const { return p.x >= x0 && p.x <= x1 && p.y >= y0 && p.y <= y1; }
};

// Clips segment a-b to the box (Liang-Barsky). False when nothing of it is inside; otherwise a and
// b are moved to the ends of the inside part.
bool clip_segment(Pt& a, Pt& b, const Box& box);

// The visible pieces of a polyline: a point with a non-finite coordinate breaks the line, and so
// does every exit from the box. Pieces of a single point are dropped.
std::vector<std::vector<Pt>> clip_polyline(const std::vector<Pt>& line, const Box& box);

// A polygon (implicitly closed, finite vertices) clipped to the box (Sutherland-Hodgman); empty
// when nothing is inside.
std::vector<Pt> clip_polygon(const std::vector<Pt>& polygon, const Box& box);

// SVG path data: "M x y L x y ..." per piece; `close` appends "Z" to each piece.
std::string path_data(const std::vector<std::vector<Pt>>& pieces, bool close = false);

}  // namespace pw
