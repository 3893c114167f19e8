#include <catch2/catch.hpp>

#include <cmath>
#include <regex>

#include "outputs/svg_plot.hpp"

using namespace pw;

namespace {

// Every number in the d attributes of the data paths.
std::vector<std::pair<double, double>> data_points(const std::string& svg) {
  std::vector<std::pair<double, double>> pts;
  const std::regex path("class=\"pw-data[^\"]*\"[^>]* d=\"([^\"]*)\"");
  const std::regex pair("[ML](-?[0-9.]+) (-?[0-9.]+)");
  for (auto it = std::sregex_iterator(svg.begin(), svg.end(), path); it != std::sregex_iterator(); ++it) {
    const std::string d = (*it)[1];
    for (auto p = std::sregex_iterator(d.begin(), d.end(), pair); p != std::sregex_iterator(); ++p)
      pts.emplace_back(std::stod((*p)[1]), std::stod((*p)[2]));
  }
  return pts;
}

}  // namespace

TEST_CASE("a plot clips its data to the plot area and drops non-finite values", "[outputs][svg]") {
  Plot p(400, 300, "clip <test> & more");
  p.x.lo = 0.0;
  p.x.hi = 1.0;
  p.y.lo = 0.0;
  p.y.hi = 1.0;
  Style s;
  s.stroke = "#0b6e79";
  p.line({-1.0, 0.5, 2.0}, {0.5, 0.5, 3.0}, s, "line");
  p.line({0.1, 0.2, NAN, 0.4}, {0.1, INFINITY, 0.3, 0.4}, s);
  p.markers({0.5, 5.0, NAN}, {0.5, 0.5, 0.1}, Marker::Cross, 6, s, "marks");
  const std::string svg = p.svg();
  const Box b = p.area();
  const auto pts = data_points(svg);
  REQUIRE(!pts.empty());
  for (const auto& q : pts) {
    CHECK(q.first >= b.x0 - 3.01);  // a marker's arm may reach half its size past its centre
    CHECK(q.first <= b.x1 + 3.01);
    CHECK(q.second >= b.y0 - 3.01);
    CHECK(q.second <= b.y1 + 3.01);
  }
  CHECK_FALSE(std::regex_search(svg, std::regex("nan|inf", std::regex::icase)));
  CHECK(svg.find("clip &lt;test&gt; &amp; more") != std::string::npos);
  CHECK(svg.find("<test>") == std::string::npos);
  // The first line enters at x = 0 (left edge of the area) at y = 0.5 (middle of the area).
  CHECK(svg.find("M" + std::to_string(static_cast<int>(b.x0)) + " " +
                 std::to_string(static_cast<int>(0.5 * (b.y0 + b.y1)))) != std::string::npos);
}

TEST_CASE("the legend sits below the plot area and grows the SVG", "[outputs][svg]") {
  Plot p(300, 200, "legend");
  p.x.lo = 0;
  p.x.hi = 1;
  p.y.lo = 0;
  p.y.hi = 1;
  Style s;
  for (int i = 0; i < 6; ++i) p.line({0, 1}, {0.1 * i, 0.1 * i}, s, "series number " + std::to_string(i));
  const std::string svg = p.svg();
  std::smatch m;
  REQUIRE(std::regex_search(svg, m, std::regex("viewBox=\"0 0 300 ([0-9.]+)\"")));
  CHECK(std::stod(m[1]) > 200.0 + 18.0);  // more than one legend row
  const std::regex text("<text x=\"[0-9.]+\" y=\"([0-9.]+)\"[^>]*>series number");
  int n = 0;
  for (auto it = std::sregex_iterator(svg.begin(), svg.end(), text); it != std::sregex_iterator(); ++it, ++n)
    CHECK(std::stod((*it)[1]) > p.area().y1 + 30.0);  // below the x tick labels
  CHECK(n == 6);
}

TEST_CASE("equal_aspect gives both axes the same data units per pixel", "[outputs][svg]") {
  Plot p(500, 300, "s");
  p.x.lo = -10;
  p.x.hi = 0;
  p.y.lo = -10;
  p.y.hi = 10;
  p.equal_aspect();
  const Box b = p.area();
  CHECK((p.x.hi - p.x.lo) / (b.x1 - b.x0) == Approx((p.y.hi - p.y.lo) / (b.y1 - b.y0)));
  CHECK(p.y.lo == Approx(-10.0));  // the y range was the binding one
  CHECK(0.5 * (p.x.lo + p.x.hi) == Approx(-5.0));
}

TEST_CASE("fills are clipped polygons and reference lines carry their notes", "[outputs][svg]") {
  Plot p(400, 300, "fill");
  p.x.lo = 0;
  p.x.hi = 1;
  p.y.lo = 0;
  p.y.hi = 1;
  Style f;
  f.fill = "#d8eadf";
  f.opacity = 0.8;
  p.fill({-5, 5, 5, -5}, {-5, -5, 0.5, 0.5}, f, "region");
  Style l;
  p.hline(0.25, l, "limit 5 %");
  p.vline(2.0, l, "outside");  // outside the x range: not drawn
  p.vline(0.5, l, "low note", "", true);
  const std::string svg = p.svg();
  const Box b = p.area();
  std::smatch m;
  REQUIRE(std::regex_search(svg, m, std::regex("pw-fill\"[^>]* d=\"([^\"]*)\"")));
  CHECK(std::string(m[1]).find('Z') != std::string::npos);
  CHECK(svg.find("limit 5 %") != std::string::npos);
  CHECK(svg.find("outside") == std::string::npos);
  std::smatch lm;
  REQUIRE(std::regex_search(svg, lm, std::regex("y=\"([0-9.]+)\"[^>]*>low note<")));
  CHECK(std::stod(lm[1]) > 0.5 * (b.y0 + b.y1));  // in the lower half of the area
  for (const auto& q : data_points(svg)) {
    CHECK(q.first >= b.x0 - 1e-9);
    CHECK(q.first <= b.x1 + 1e-9);
  }
  // Log x axis: x <= 0 never reaches the SVG.
  Plot g(400, 300, "log");
  g.x.log = true;
  g.x.lo = 0.1;
  g.x.hi = 100;
  g.y.lo = -1;
  g.y.hi = 1;
  g.line({0.0, 0.1, 1.0, 10.0}, {0, 0, 0.5, 0.5}, l);
  const std::string gs = g.svg();
  CHECK(data_points(gs).size() == 3);
  CHECK(gs.find(">0.1<") != std::string::npos);
  CHECK(gs.find(">100<") != std::string::npos);
}

TEST_CASE("legend_line lists a series in its own order", "[outputs][svg]") {
  Plot p(400, 300, "order");
  p.x.lo = 0;
  p.x.hi = 1;
  p.y.lo = 0;
  p.y.hi = 1;
  Style s;
  p.legend_line("first", s);
  p.line({0, 1}, {0.2, 0.2}, s, "second");
  p.line({0, 1}, {0.4, 0.4}, s, "first");  // already listed: not repeated
  const std::string svg = p.svg();
  const size_t a = svg.find(">first<"), b = svg.find(">second<");
  REQUIRE(a != std::string::npos);
  REQUIRE(b != std::string::npos);
  CHECK(a < b);
  CHECK(svg.find(">first<", a + 1) == std::string::npos);
}

TEST_CASE("marker_path and text_width", "[outputs][svg]") {
  CHECK(marker_path(Marker::Cross, 10, 10, 4) == "M8 8 L12 12 M8 12 L12 8");
  CHECK(marker_path(Marker::Square, 0, 0, 2) == "M-1 -1 L1 -1 L1 1 L-1 1 Z");
  CHECK(marker_path(Marker::Diamond, 0, 0, 2) == "M0 -1 L1 0 L0 1 L-1 0 Z");
  CHECK(marker_path(Marker::Circle, 0, 0, 2).find('A') != std::string::npos);
  CHECK(text_width("abc", 10) == Approx(16.8));
  CHECK(text_width("\xcf\x89", 10) == Approx(5.6));  // one code point, two bytes
}
