#include "svg_clip.hpp"

#include <cmath>

#include "svg_text.hpp"

namespace pw {

namespace {

bool finite(const Pt& p) { return std::isfinite(p.x) && std::isfinite(p.y); }

}  // namespace

bool clip_segment(Pt& a, Pt& b, const Box& box) {
  const double dx = b.x - a.x, dy = b.y - a.y;
  double t0 = 0.0, t1 = 1.0;
  const double p[4] = {-dx, dx, -dy, dy};
  const double q[4] = {a.x - box.x0, box.x1 - a.x, a.y - box.y0, box.y1 - a.y};
  for (int i = 0; i < 4; ++i) {
    if (p[i] == 0.0) {
      if (q[i] < 0.0) return false;  // parallel to this edge and outside it
      continue;
    }
    const double t = q[i] / p[i];
    if (p[i] < 0.0) {
      if (t > t1) return false;
      if (t > t0) t0 = t;
    } else {
      if (t < t0) return false;
      if (t < t1) t1 = t;
    }
  }
  const Pt a0 = a;
  if (t0 > 0.0) a = {a0.x + t0 * dx, a0.y + t0 * dy};
  if (t1 < 1.0) b = {a0.x + t1 * dx, a0.y + t1 * dy};
  return true;
}

std::vector<std::vector<Pt>> clip_polyline(const std::vector<Pt>& line, const Box& box) {
  std::vector<std::vector<Pt>> pieces;
  std::vector<Pt> cur;
  auto flush = [&] {
    if (cur.size() >= 2) pieces.push_back(cur);
    cur.clear();
  };
  for (size_t i = 0; i + 1 < line.size(); ++i) {
    Pt a = line[i], b = line[i + 1];
    if (!finite(a) || !finite(b)) {
      flush();
      continue;
    }
    const bool b_inside = box.contains(b);
    if (!clip_segment(a, b, box)) {
      flush();
      continue;
    }
    // A segment that enters the box starts a new piece unless it continues the current one.
    if (cur.empty() || cur.back().x != a.x || cur.back().y != a.y) {
      flush();
      cur.push_back(a);
    }
    cur.push_back(b);
    if (!b_inside) flush();  // it left the box
  }
  flush();
  return pieces;
}

namespace {

// One Sutherland-Hodgman pass against the half plane inside(p).
template <class Inside, class Cross>
std::vector<Pt> clip_edge(const std::vector<Pt>& in, Inside inside, Cross cross) {
  std::vector<Pt> out;
  if (in.empty()) return out;
  Pt prev = in.back();
  bool prev_in = inside(prev);
  for (const Pt& p : in) {
    const bool p_in = inside(p);
    if (p_in != prev_in) out.push_back(cross(prev, p));
    if (p_in) out.push_back(p);
    prev = p;
    prev_in = p_in;
  }
  return out;
}

Pt cross_x(const Pt& a, const Pt& b, double x) {
  const double t = (x - a.x) / (b.x - a.x);
  return {x, a.y + t * (b.y - a.y)};
}

Pt cross_y(const Pt& a, const Pt& b, double y) {
  const double t = (y - a.y) / (b.y - a.y);
  return {a.x + t * (b.x - a.x), y};
}

}  // namespace

std::vector<Pt> clip_polygon(const std::vector<Pt>& polygon, const Box& box) {
  for (const Pt& p : polygon)
    if (!finite(p)) return {};
  std::vector<Pt> v = polygon;
  v = clip_edge(v, [&](const Pt& p) { return p.x >= box.x0; }, [&](const Pt& a, const Pt& b) { return cross_x(a, b, box.x0); });
  v = clip_edge(v, [&](const Pt& p) { return p.x <= box.x1; }, [&](const Pt& a, const Pt& b) { return cross_x(a, b, box.x1); });
  v = clip_edge(v, [&](const Pt& p) { return p.y >= box.y0; }, [&](const Pt& a, const Pt& b) { return cross_y(a, b, box.y0); });
  v = clip_edge(v, [&](const Pt& p) { return p.y <= box.y1; }, [&](const Pt& a, const Pt& b) { return cross_y(a, b, box.y1); });
  if (v.size() < 3) return {};
  return v;
}

std::string path_data(const std::vector<std::vector<Pt>>& pieces, bool close) {
  std::string d;
  for (const auto& piece : pieces) {
    for (size_t i = 0; i < piece.size(); ++i) {
      if (!d.empty()) d += ' ';
      d += (i == 0 ? "M" : "L") + svg_coord(piece[i].x) + " " + svg_coord(piece[i].y);
    }
    if (close && !piece.empty()) d += " Z";
  }
  return d;
}

}  // namespace pw
