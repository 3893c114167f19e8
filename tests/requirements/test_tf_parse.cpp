#include <catch2/catch.hpp>

#include <cmath>

#include "polewright/requirements/spec_parse.hpp"

using namespace pw;
using nlohmann::json;

TEST_CASE("plant objects in both forms", "[requirements][tf_parse]") {
  const Plant a = parse_plant_object(json::parse(R"({"numerator": [1.2e5], "denominator": [1, 24, 0], "delay_s": 0.0005})"), "$.plant", false);
  CHECK(a.tf.gain == Approx(1.2e5));
  CHECK(a.tf.poles.size() == 2);
  CHECK(a.delay_s == 0.0005);
  const Plant b = parse_plant_object(
      json::parse(R"({"gain": 2, "zeros": [-1], "poles": [0, {"re": -1, "im": 2}, {"wn": 60, "zeta": 0.02}, {"wn": 5, "zeta": 2}]})"),
      "$.plant", false);
  REQUIRE(b.tf.poles.size() == 7);
  int complex_count = 0;
  for (const Complex& p : b.tf.poles) complex_count += p.imag() != 0.0;
  CHECK(complex_count == 4);
  // wn = 5, zeta = 2: real pair -5 (2 +- sqrt 3).
  bool found = false;
  for (const Complex& p : b.tf.poles) found = found || std::abs(p.real() + 5 * (2 + std::sqrt(3.0))) < 1e-9;
  CHECK(found);
}

TEST_CASE("bad plants and compensators name the field", "[requirements][tf_parse]") {
  auto err = [](const char* text, bool comp = false) {
    try {
      if (comp) parse_compensator(json::parse(text), "$.current");
      else parse_plant_object(json::parse(text), "$.plant", false);
    } catch (const SpecError& e) {
      return std::string(e.what());
    }
    return std::string();
  };
  CHECK(err(R"({"numerator": [1, 0, 0], "denominator": [1, 1]})").find("$.plant.numerator: improper plant") == 0);
  CHECK(err(R"({"numerator": [1], "denominator": [0, 0]})").find("$.plant.denominator: is all zero") == 0);
  CHECK(err(R"({"numerator": [1], "denominator": [0, 1]})").find("$.plant.denominator[0]") == 0);
  CHECK(err(R"({"numerator": [1], "denominator": [1, "NaN"]})").find("$.plant.denominator[1]") == 0);
  CHECK(err(R"({"numerator": [1], "denominator": [1, 1], "poles": [-1]})").find("mixes") != std::string::npos);
  CHECK(err(R"({"numerator": [1], "denominator": [1, 1], "delay_s": -1})").find("$.plant.delay_s") == 0);
  CHECK(err(R"({"poles": [{"re": -1}]})").find("$.plant.poles[0].im: is missing") == 0);
  CHECK(err(R"({"poles": [{"re": -1, "im": 0}]})").find("$.plant.poles[0].im") == 0);
  CHECK(err(R"({"poles": [{"wn": 0, "zeta": 0.1}]})").find("$.plant.poles[0].wn") == 0);
  CHECK(err(R"({"poles": [-1], "zeros": [-2, -3]})", true).find("improper compensator") != std::string::npos);
  CHECK(err(R"({"gain": 0, "poles": [-1]})", true).find("$.current.gain") == 0);
  CHECK(err(R"({"numerator": [1], "denominator": [1, 1], "delay_s": 1})", true).find("$.current.delay_s: unknown key") == 0);
  std::string big = R"({"poles": [)";
  for (int i = 0; i < 31; ++i) big += (i ? ",-" : "-") + std::to_string(i + 1);
  big += "]}";
  CHECK(err(big.c_str()).find("above the limit of 30") != std::string::npos);
}
