#include <catch2/catch.hpp>

#include <cmath>

#include "polewright/outputs/json_values.hpp"
#include "polewright/requirements/spec_parse.hpp"

using namespace pw;

TEST_CASE("non-finite numbers become null", "[outputs][json_values]") {
  CHECK(json_number(NAN).is_null());
  CHECK(json_number(INFINITY).is_null());
  CHECK(json_number(std::optional<double>()).is_null());
  CHECK(json_number(2.5) == 2.5);
  MetricValue inf;
  inf.infinite = true;
  CHECK(json_number(inf).is_null());
  CHECK(json_complex(Complex(1, -2)).at("im") == -2.0);
}

TEST_CASE("a compensator written as JSON reads back as the same compensator", "[outputs][json_values]") {
  Zpk c;
  c.gain = 12;
  c.zeros = {Complex(-4, 0), Complex(-3, 59.9), Complex(-3, -59.9)};
  c.poles = {Complex(-40, 0), Complex(-42, 42.8), Complex(-42, -42.8)};
  nlohmann::json j = json_zpk(c);
  CHECK(j.at("numerator").size() == 4);
  CHECK(j.at("denominator").at(0) == 1.0);
  j.erase("numerator");
  j.erase("denominator");
  const Zpk back = parse_compensator(j, "$");
  REQUIRE(back.zeros.size() == 3);
  const Complex s(0.5, 7.0);
  CHECK(std::abs(back.evaluate(s) - c.evaluate(s)) < 1e-12 * std::abs(c.evaluate(s)));
  CHECK(std::string(kCautions).find("real plant") != std::string::npos);
}
