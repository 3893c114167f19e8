#include <catch2/catch.hpp>

#include <cmath>
#include <regex>

#include "outputs/svg_map.hpp"

using namespace pw;

namespace {

std::vector<MapPoint> grid3x2() {
  std::vector<MapPoint> p;
  for (double x : {0.0, 1.0, 3.0})
    for (double y : {10.0, 20.0}) {
      MapPoint m;
      m.x = x;
      m.y = y;
      m.feasible = x < 0.5 && y < 15.0;
      m.category = m.feasible ? 0 : 1;
      m.value = x + y;
      p.push_back(m);
    }
  return p;
}

double luminance(const std::string& hex) {
  auto h = [&](int i) { return std::stoi(hex.substr(static_cast<size_t>(i), 2), nullptr, 16) / 255.0; };
  return 0.2126 * h(1) + 0.7152 * h(3) + 0.0722 * h(5);
}

}  // namespace

TEST_CASE("map_grid recognises a full rectangular grid and nothing else", "[outputs][svg]") {
  std::vector<MapPoint> p = grid3x2();
  const MapGrid g = map_grid(p);
  REQUIRE_FALSE(g.empty());
  CHECK(g.xs == std::vector<double>{0.0, 1.0, 3.0});
  CHECK(g.ys == std::vector<double>{10.0, 20.0});
  CHECK(p[static_cast<size_t>(g.cell[2][1])].x == 3.0);
  CHECK(p[static_cast<size_t>(g.cell[2][1])].y == 20.0);
  p.pop_back();
  CHECK(map_grid(p).empty());  // a node missing
  p.push_back(p.front());
  CHECK(map_grid(p).empty());  // a node repeated
}

TEST_CASE("cell_edges puts edges midway (geometric midway on log axes)", "[outputs][svg]") {
  const std::vector<double> e = cell_edges({0.0, 1.0, 3.0}, false);
  REQUIRE(e.size() == 4);
  CHECK(e[0] == Approx(-0.5));
  CHECK(e[1] == Approx(0.5));
  CHECK(e[2] == Approx(2.0));
  CHECK(e[3] == Approx(4.0));
  const std::vector<double> l = cell_edges({1.0, 10.0, 100.0}, true);
  REQUIRE(l.size() == 4);
  CHECK(l[0] == Approx(1.0 / std::sqrt(10.0)));
  CHECK(l[1] == Approx(std::sqrt(10.0)));
  CHECK(l[3] == Approx(100.0 * std::sqrt(10.0)));
}

TEST_CASE("feasible_boundary runs along the edges between feasible and infeasible cells", "[outputs][svg]") {
  const std::vector<MapPoint> p = grid3x2();
  const std::vector<Segment> s = feasible_boundary(p, map_grid(p), false, false);
  // Only (0, 10) is feasible: its right edge x = 0.5 over y 5..15 and its top edge y = 15 over x -0.5..0.5.
  REQUIRE(s.size() == 2);
  bool right = false, top = false;
  for (const Segment& g : s) {
    if (g.x0 == Approx(0.5) && g.x1 == Approx(0.5) && g.y0 == Approx(5.0) && g.y1 == Approx(15.0)) right = true;
    if (g.y0 == Approx(15.0) && g.y1 == Approx(15.0) && g.x0 == Approx(-0.5) && g.x1 == Approx(0.5)) top = true;
  }
  CHECK(right);
  CHECK(top);
}

TEST_CASE("ramp_colour runs from pale to dark and greys out missing values", "[outputs][svg]") {
  CHECK(ramp_colour(0.0) == "#f3e9c6");
  CHECK(ramp_colour(1.0) == "#0b4f5c");
  CHECK(ramp_colour(2.0) == "#0b4f5c");
  CHECK(ramp_colour(NAN) == "#c9cbc6");
  double prev = 2.0;
  for (int i = 0; i <= 20; ++i) {
    const double l = luminance(ramp_colour(i / 20.0));
    CHECK(l < prev);
    prev = l;
  }
}

TEST_CASE("category and metric maps draw cells per colour and the boundary", "[outputs][svg]") {
  Plot p(400, 300, "map");
  p.x.lo = -0.5;
  p.x.hi = 4.0;
  p.y.lo = 5.0;
  p.y.hi = 25.0;
  add_category_map(p, grid3x2(), {{"met", "#2f7d55"}, {"not met", "#b3261e"}});
  const std::string svg = p.svg();
  CHECK(svg.find("pw-fill\" fill=\"#2f7d55\"") != std::string::npos);
  CHECK(svg.find("pw-fill\" fill=\"#b3261e\"") != std::string::npos);
  CHECK(svg.find("boundary of the feasible area") != std::string::npos);
  CHECK(svg.find(">met<") != std::string::npos);
  CHECK(svg.find(">not met<") != std::string::npos);

  Plot q(400, 300, "metric");
  q.x.lo = -0.5;
  q.x.hi = 4.0;
  q.y.lo = 5.0;
  q.y.hi = 25.0;
  std::vector<MapPoint> pts = grid3x2();
  pts[3].value.reset();
  add_metric_map(q, pts, 10.0, 23.0, "settling");
  const std::string qs = q.svg();
  CHECK(qs.find("settling: n/a") != std::string::npos);
  CHECK(qs.find(ramp_colour(0.1)) != std::string::npos);  // the lowest bin (value 10)

  // Scattered points (not a grid) become markers.
  Plot r(400, 300, "scatter");
  r.x.lo = 0;
  r.x.hi = 10;
  r.y.lo = 0;
  r.y.hi = 10;
  std::vector<MapPoint> sc(3);
  sc[0].x = 1;
  sc[0].y = 1;
  sc[1].x = 5;
  sc[1].y = 2;
  sc[2].x = 7;
  sc[2].y = 9;
  sc[2].category = 1;
  add_category_map(r, sc, {{"met", "#2f7d55"}, {"not met", "#b3261e"}});
  const std::string rs = r.svg();
  CHECK(rs.find("pw-markers") != std::string::npos);
  CHECK(rs.find("boundary") == std::string::npos);
}

TEST_CASE("a metric legend never reads \"2 to 2\"", "[outputs][svg]") {
  // Every value the same: one entry, "= 2".
  std::vector<MapPoint> pts = grid3x2();
  for (MapPoint& m : pts) m.value = 2.0;
  Plot p(400, 300, "metric");
  p.x.lo = -0.5;
  p.x.hi = 4.0;
  p.y.lo = 5.0;
  p.y.hi = 25.0;
  add_metric_map(p, pts, 2.0, 2.0, "peak");
  const std::string s = p.svg();
  CHECK(s.find("peak = 2<") != std::string::npos);
  CHECK(s.find(" to ") == std::string::npos);
  // Values 2.0001 .. 2.0006: bin edges get the digits to differ ("2.0001 to 2.0002", not "2 to 2").
  for (size_t i = 0; i < pts.size(); ++i) pts[i].value = 2.0001 + 1e-4 * static_cast<double>(i);
  Plot q(400, 300, "metric");
  q.x.lo = -0.5;
  q.x.hi = 4.0;
  q.y.lo = 5.0;
  q.y.hi = 25.0;
  add_metric_map(q, pts, 2.0001, 2.0006, "peak");
  const std::string qs = q.svg();
  const std::regex same(">[^<]* ([-0-9.e]+) to \\1<");
  CHECK_FALSE(std::regex_search(qs, same));
  CHECK(qs.find("peak 2.0001 to 2.0002") != std::string::npos);
}
