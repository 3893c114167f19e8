// The export's outputs: identifiers, literals, the JSON format of the issue, CSV and text.
#include <catch2/catch.hpp>

#include <cmath>
#include <cstdlib>

#include "polewright/outputs/export_output.hpp"
#include "polewright/outputs/json_values.hpp"

using namespace pw;
using nlohmann::json;

namespace {
ExportReport pi_report(Precision p = Precision::Double) {
  const ResultInput in = parse_result(json{{"gain", 3}, {"zeros", {-5}}, {"poles", {0, -200}}});
  ExportOptions o;
  o.sample_time_s = 1e-3;
  o.precision = p;
  return run_export(in, 1, o);
}
}  // namespace

TEST_CASE("C identifiers and literals", "[export][export_output]") {
  CHECK(c_identifier("out/axis-x.ctrl.c") == "axis_x");
  CHECK(c_identifier("/tmp/9lives") == "pw_9lives");
  CHECK(c_identifier("") == "compensator");
  // One identifier for any file name: runs of other bytes (UTF-8 included) become one '_', a
  // leading underscore is reserved at file scope (C99 7.1.3) and a leading digit is not allowed.
  CHECK(c_identifier("out/my axis") == "my_axis");
  CHECK(c_identifier("\xc3\x84xis \xc3\xbcnit") == "pw__xis_nit");
  CHECK(c_identifier("v1.2-axis") == "v1");
  CHECK(c_identifier("_hidden") == "pw__hidden");
  CHECK(c_identifier("---") == "compensator");
  CHECK(c_header_file_error("axis-x.h").empty());
  CHECK(c_header_file_error("my axis.h").empty());
  CHECK_FALSE(c_header_file_error("").empty());
  CHECK_FALSE(c_header_file_error(".h").empty());
  CHECK_FALSE(c_header_file_error("a\"b.h").empty());
  CHECK_FALSE(c_header_file_error("a\nb.h").empty());
  CHECK(c_literal(1.0, Precision::Double) == "1.0");
  CHECK(c_literal(1.0, Precision::Float) == "1.0f");
  CHECK(c_literal(0.1, Precision::Double) == "0.10000000000000001");  // %.17g round-trips
  CHECK(c_literal(0.1, Precision::Float) == "0.100000001f");          // %.9g of float(0.1)
  CHECK(c_literal(1e-30, Precision::Float) == "1e-30f");  // an exponent needs no decimal point
  // %.9g round-trips a float (9 significant digits suffice for IEEE single precision).
  const std::string lit = c_literal(2.0 / 3.0, Precision::Float);
  CHECK(std::strtof(lit.substr(0, lit.size() - 1).c_str(), nullptr) == static_cast<float>(2.0 / 3.0));
  CHECK(std::strtod(c_literal(M_PI, Precision::Double).c_str(), nullptr) == M_PI);
  CHECK_THROWS(c_literal(NAN, Precision::Double));
  CHECK(integrator_sign(pi_report().discrete) == 1);
}

TEST_CASE("the JSON holds g and sections so that H(z) = g prod b(z^-1)/a(z^-1)", "[export][export_output]") {
  const ExportReport r = pi_report();
  const nlohmann::ordered_json j = export_json(r);
  // The keys first, in its order.
  std::vector<std::string> keys;
  for (auto it = j.begin(); it != j.end() && keys.size() < 4; ++it) keys.push_back(it.key());
  CHECK(keys == std::vector<std::string>{"sample_time_s", "method", "gain", "sections"});
  CHECK(j.at("sample_time_s") == 1e-3);
  CHECK(j.at("method") == "tustin");
  CHECK(j.at("cautions") == kCautions);
  const double g = j.at("gain");
  const Complex z = std::polar(1.0, 0.7), w = 1.0 / z;
  Complex h(g, 0.0);
  for (const auto& s : j.at("sections")) {
    const auto b = s.at("b").get<std::vector<double>>();
    const auto a = s.at("a").get<std::vector<double>>();
    REQUIRE(b.size() == 3);
    REQUIRE(a.size() == 3);
    CHECK(a[0] == 1.0);
    h *= (b[0] + w * (b[1] + w * b[2])) / (a[0] + w * (a[1] + w * a[2]));
  }
  // Reference: the Tustin substitution s = (2/T)(z - 1)/(z + 1) in C(s) directly.
  const Complex s = (2.0 / 1e-3) * (z - 1.0) / (z + 1.0);
  const Complex want = r.continuous.evaluate(s);
  CHECK(std::abs(h - want) < 1e-10 * std::abs(want));
  CHECK(j.at("reverification").at("status") == "not_verified");
  CHECK(export_json(r).dump() == j.dump());  // deterministic
}

TEST_CASE("CSV rows and the text report", "[export][export_output]") {
  const ExportReport r = pi_report();
  const std::string csv = export_csv(r);
  CHECK(csv.find("section,b0,b1,b2,a0,a1,a2\n0,") != std::string::npos);
  CHECK(csv.find(kCautions) != std::string::npos);
  size_t rows = 0;
  for (char c : csv) rows += c == '\n';
  CHECK(rows == 4 + 1 + r.cascade.sections.size());  // 3 comments + header, gain row, sections
  const std::string text = export_text(r);
  CHECK(text.find("not re-verified") != std::string::npos);
  CHECK(text.find(kCautions) != std::string::npos);
}

TEST_CASE("C header and source carry the design, the coefficients and the cautions", "[export][export_output]") {
  const ExportReport r = pi_report(Precision::Float);
  const std::string h = export_c_header(r, "heater");
  const std::string c = export_c_source(r, "heater");
  CHECK(h.find("typedef float heater_real;") != std::string::npos);
  CHECK(h.find("heater_real heater_step(heater_state* st, heater_real e);") != std::string::npos);
  CHECK(h.find("Sample time: 0.001 s") != std::string::npos);
  CHECK(c.find(kCautions) != std::string::npos);
  CHECK(c.find(c_literal(r.cascade.gain, Precision::Float)) != std::string::npos);
  CHECK(c.find("kIntegratorSign") == std::string::npos);  // no clamp asked
}
