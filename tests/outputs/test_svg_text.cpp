#include <catch2/catch.hpp>

#include <cmath>
#include <limits>

#include "outputs/svg_text.hpp"

using namespace pw;

TEST_CASE("xml_escape replaces the five XML special characters", "[outputs][svg]") {
  // The five predefined entities of XML 1.0 (W3C recommendation, section 4.6).
  CHECK(xml_escape("a<b & \"c\" 'd'>") == "a&lt;b &amp; &quot;c&quot; &#39;d&#39;&gt;");
  CHECK(xml_escape("plain \xcf\x89 text") == "plain \xcf\x89 text");  // UTF-8 passes through
  CHECK(xml_escape("&amp;") == "&amp;amp;");
}

TEST_CASE("svg_coord prints two decimals at most and never nan or inf", "[outputs][svg]") {
  CHECK(svg_coord(12.5) == "12.5");
  CHECK(svg_coord(3.0) == "3");
  CHECK(svg_coord(-0.004) == "0");
  CHECK(svg_coord(1.236) == "1.24");
  CHECK(svg_coord(std::numeric_limits<double>::quiet_NaN()) == "0");
  CHECK(svg_coord(std::numeric_limits<double>::infinity()) == "0");
}

TEST_CASE("format_tick uses one decimal count per axis step and the 1e4 style at the ends", "[outputs][svg]") {
  CHECK(format_tick(0.1, 0.05) == "0.10");
  CHECK(format_tick(0.05, 0.05) == "0.05");
  CHECK(format_tick(0.0, 0.05) == "0");
  CHECK(format_tick(-1e-17, 0.05) == "0");
  CHECK(format_tick(20.0, 5.0) == "20");
  CHECK(format_tick(0.75, 0.25) == "0.75");
  CHECK(format_tick(0.5, 0.25) == "0.50");
  CHECK(format_tick(-180.0, 45.0) == "-180");
  CHECK(format_tick(20000.0, 5000.0) == "2e4");
  CHECK(format_tick(25000.0, 5000.0) == "2.5e4");
  CHECK(format_tick(2e-4, 1e-4) == "2e-4");
  CHECK(format_tick(std::numeric_limits<double>::quiet_NaN(), 1.0).empty());
}

TEST_CASE("format_decade writes small decades out and large ones as 1eN", "[outputs][svg]") {
  CHECK(format_decade(0) == "1");
  CHECK(format_decade(3) == "1000");
  CHECK(format_decade(-2) == "0.01");
  CHECK(format_decade(4) == "1e4");
  CHECK(format_decade(-5) == "1e-5");
}

TEST_CASE("format_number gives significant digits without trailing zeros", "[outputs][svg]") {
  CHECK(format_number(0.15349) == "0.153");
  CHECK(format_number(12.0) == "12");
  CHECK(format_number(47.25, 3) == "47.2");  // printf rounding of 47.25 (binary 47.25 exactly: to even)
  CHECK(format_number(450000.0) == "4.5e5");
  CHECK(format_number(-2.5e-5) == "-2.5e-5");
  CHECK(format_number(std::numeric_limits<double>::infinity()) == "unbounded");
  CHECK(format_number(std::numeric_limits<double>::quiet_NaN()) == "n/a");
}
