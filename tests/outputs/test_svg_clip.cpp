#include <catch2/catch.hpp>

#include <cmath>

#include "outputs/svg_clip.hpp"

using namespace pw;

namespace {
const Box kBox{0.0, 0.0, 100.0, 100.0};
}

// Intersections below are worked by hand from the line equations.
TEST_CASE("clip_segment cuts a segment at the exact box crossings", "[outputs][svg]") {
  Pt a{-50.0, 20.0}, b{150.0, 70.0};  // y = 32.5 + x / 4
  REQUIRE(clip_segment(a, b, kBox));
  CHECK(a.x == Approx(0.0));
  CHECK(a.y == Approx(32.5));
  CHECK(b.x == Approx(100.0));
  CHECK(b.y == Approx(57.5));
  Pt c{-10.0, -10.0}, d{-5.0, 200.0};  // wholly left of the box
  CHECK_FALSE(clip_segment(c, d, kBox));
  Pt e{20.0, 20.0}, f{30.0, 40.0};  // wholly inside: unchanged
  REQUIRE(clip_segment(e, f, kBox));
  CHECK(e.x == 20.0);
  CHECK(f.y == 40.0);
  Pt g{50.0, -20.0}, h{50.0, 130.0};  // vertical through the box
  REQUIRE(clip_segment(g, h, kBox));
  CHECK(g.y == Approx(0.0));
  CHECK(h.y == Approx(100.0));
}

TEST_CASE("clip_polyline keeps the inside part with the entry and exit points", "[outputs][svg]") {
  // Enters through x = 0 at y = 50, leaves through x = 100 on y = 50 + (x - 50) / 2, i.e. y = 75.
  const auto pieces = clip_polyline({{-20.0, 50.0}, {50.0, 50.0}, {150.0, 100.0}}, kBox);
  REQUIRE(pieces.size() == 1);
  REQUIRE(pieces[0].size() == 3);
  CHECK(pieces[0][0].x == Approx(0.0));
  CHECK(pieces[0][0].y == Approx(50.0));
  CHECK(pieces[0][1].x == Approx(50.0));
  CHECK(pieces[0][2].x == Approx(100.0));
  CHECK(pieces[0][2].y == Approx(75.0));
}

TEST_CASE("clip_polyline splits a line that leaves and comes back", "[outputs][svg]") {
  const auto pieces = clip_polyline({{50.0, 50.0}, {150.0, 50.0}, {150.0, 80.0}, {50.0, 80.0}}, kBox);
  REQUIRE(pieces.size() == 2);
  CHECK(pieces[0].back().x == Approx(100.0));
  CHECK(pieces[0].back().y == Approx(50.0));
  CHECK(pieces[1].front().x == Approx(100.0));
  CHECK(pieces[1].front().y == Approx(80.0));
  CHECK(pieces[1].back().x == Approx(50.0));
  for (const auto& piece : pieces)
    for (const Pt& p : piece) CHECK(kBox.contains(p));
}

TEST_CASE("a non-finite point breaks the polyline into two pieces", "[outputs][svg]") {
  const auto pieces = clip_polyline({{10, 10}, {20, 20}, {NAN, NAN}, {30, 30}, {40, 40}, {INFINITY, 5}, {60, 60}}, kBox);
  REQUIRE(pieces.size() == 2);
  CHECK(pieces[0].size() == 2);
  CHECK(pieces[1].size() == 2);
  CHECK(pieces[1][0].x == 30.0);
  CHECK(clip_polyline({{10, 10}}, kBox).empty());
  CHECK(clip_polyline({{-10, -10}, {-20, -5}}, kBox).empty());
}

TEST_CASE("clip_polygon trims a triangle to the box", "[outputs][svg]") {
  // Triangle (50,-50), (150,50), (-50,50): clipped to y >= 0 and x <= 100 it has area by hand:
  // the part above y = 0 is the trapezoid between y = 0 (x from 0 to 100) and y = 50 (x from -50
  // to 150), cut to 0 <= x <= 100: a 100 x 50 rectangle minus nothing = 5000.
  const std::vector<Pt> c = clip_polygon({{50, -50}, {150, 50}, {-50, 50}}, kBox);
  REQUIRE(c.size() >= 3);
  double area = 0.0;
  for (size_t i = 0; i < c.size(); ++i) {
    const Pt& a = c[i];
    const Pt& b = c[(i + 1) % c.size()];
    area += a.x * b.y - b.x * a.y;
    CHECK(kBox.contains(a));
  }
  CHECK(std::abs(area) / 2.0 == Approx(5000.0));
  CHECK(clip_polygon({{200, 200}, {300, 200}, {250, 300}}, kBox).empty());
  CHECK(clip_polygon({{10, 10}, {NAN, 20}, {30, 10}}, kBox).empty());
}

TEST_CASE("path_data writes move and line commands per piece", "[outputs][svg]") {
  CHECK(path_data({{{0, 0}, {10, 5.5}}, {{20, 20}, {30, 30}}}) == "M0 0 L10 5.5 M20 20 L30 30");
  CHECK(path_data({{{0, 0}, {10, 0}, {10, 10}}}, true) == "M0 0 L10 0 L10 10 Z");
  CHECK(path_data({}).empty());
}
