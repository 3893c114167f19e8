#include <catch2/catch.hpp>

#include <cmath>
#include <cstdio>
#include <fstream>

#include <nlohmann/json.hpp>

#include "polewright/model/measured_plant.hpp"
#include "polewright/requirements/evaluate.hpp"
#include "polewright/requirements/measured_parse.hpp"
#include "polewright/requirements/spec_parse.hpp"
#include "polewright/outputs/measured_output.hpp"

#include "support/measured_fixture.hpp"

using namespace pw;
using nlohmann::json;

namespace {

// A spec whose plant is the fixture's data file (named relative to tests/reference).
json spec_on(const std::string& csv, const json& measured_extra = json::object()) {
  json m = {{"file", "measured/" + csv}};
  for (auto it = measured_extra.begin(); it != measured_extra.end(); ++it) m[it.key()] = it.value();
  json doc = {{"plant", {{"measured", m}}}, {"requirements", {{"phase_margin_deg", {{"min", 30}}}}}};
  inline_measured_files(doc, test::measured_fixture_dir());
  return doc;
}

json real_zpk_json(const Zpk& z) {
  json zs = json::array(), ps = json::array();
  for (const Complex& c : z.zeros) zs.push_back(c.real());  // real roots only here
  for (const Complex& c : z.poles) ps.push_back(c.real());
  return {{"gain", z.gain}, {"zeros", zs}, {"poles", ps}};
}

// Inline data of G(jw) e^(-jwT) on n log-spaced points over [lo, hi].
json inline_data(const Zpk& g, double T, double lo, double hi, int n) {
  json w = json::array(), m = json::array(), p = json::array();
  double prev = 0.0;
  for (int i = 0; i < n; ++i) {
    const double x = lo * std::pow(hi / lo, double(i) / (n - 1));
    const Complex v = g.evaluate(Complex(0.0, x)) * std::polar(1.0, -x * T);
    double ph = std::arg(v) * 180.0 / M_PI;
    while (i > 0 && ph - prev > 180.0) ph -= 360.0;
    while (i > 0 && ph - prev <= -180.0) ph += 360.0;
    prev = ph;
    w.push_back(x);
    m.push_back(std::abs(v));
    p.push_back(ph);
  }
  return {{"frequency_rad_s", w}, {"magnitude_ratio", m}, {"phase_deg", p}};
}

std::string error_of(const json& doc) {
  try {
    parse_spec(doc);
  } catch (const SpecError& e) {
    return e.what();
  }
  return "";
}

}  // namespace

TEST_CASE("a measured file is inlined relative to the spec's folder, in rad/s, ratio and degrees", "[requirements][measured_parse]") {
  // delayed_heater.csv is in Hz and as a ratio (make_measured_fixture.py).
  const json doc = spec_on("delayed_heater.csv");
  const json& d = doc["plant"]["measured"]["data"];
  std::ifstream in(test::measured_fixture_dir() + "/measured/delayed_heater.csv");
  std::string line;
  std::getline(in, line);  // comment
  std::getline(in, line);  // header
  std::getline(in, line);  // first row
  double f = 0, mag = 0, ph = 0;
  REQUIRE(std::sscanf(line.c_str(), "%lf,%lf,%lf", &f, &mag, &ph) == 3);
  CHECK(d["frequency_rad_s"][0].get<double>() == Approx(2.0 * M_PI * f).epsilon(1e-15));
  CHECK(d["magnitude_ratio"][0].get<double>() == Approx(mag).epsilon(1e-15));
  CHECK(d["phase_deg"][0].get<double>() == Approx(ph).epsilon(1e-12));
  CHECK(d["frequency_rad_s"].size() == d["phase_deg"].size());
  CHECK_FALSE(d.contains("coherence"));
  // Parsing the inlined spec needs no file any more.
  const Spec s = parse_spec(doc);
  REQUIRE(s.plants.at(0).measured);
  CHECK(s.plants[0].measured->file == "measured/delayed_heater.csv");
  CHECK(s.document["plant"]["measured"].contains("data"));
}

TEST_CASE("the fit of a measured plant recovers the true poles (make_measured_fixture.py, scipy)", "[requirements][measured_parse]") {
  const test::MeasuredCase c = test::measured_case("resonant_stage");
  const Spec s = parse_spec(spec_on("resonant_stage.csv"));
  const Plant& p = s.plants.at(0);
  REQUIRE(p.measured);
  REQUIRE(p.tf.poles.size() == c.plant.poles.size());
  for (const Complex& truth : c.plant.poles) {
    double best = INFINITY;
    for (const Complex& q : p.tf.poles) best = std::min(best, std::abs(q - truth));
    INFO(truth);
    CHECK(best <= 0.01 * std::max(1.0, std::abs(truth)));
  }
  CHECK(p.tf.zeros.empty());
  CHECK(p.tf.gain == p.measured->fit.model.gain);
  CHECK(p.tf.poles == p.measured->fit.model.poles);
  CHECK(p.delay_s == p.measured->fit.delay_s);
}

TEST_CASE("margins of a measured plant come from the data, within 0.3 deg and 0.2 dB of the exact ones", "[requirements][measured_parse][evaluate]") {
  // Exact figures: scipy.signal.freqresp of the true plant and brentq (make_measured_fixture.py).
  for (const char* name : {"resonant_stage", "delayed_heater"}) {
    INFO(name);
    const test::MeasuredCase c = test::measured_case(name);
    const json extra = std::string(name) == "delayed_heater" ? json{{"fit", {{"estimate_delay", true}}}} : json::object();
    const Spec s = parse_spec(spec_on(std::string(name) + ".csv", extra));
    const LoopEvaluation e = evaluate_loop(c.compensator, s.plants.at(0), s.requirements, Region{}, s.analysis);
    CHECK(e.frequency_from_data);
    REQUIRE(e.frequency.phase_margins_deg.size() == c.loop["phase_margins_deg"].size());
    for (size_t i = 0; i < e.frequency.phase_margins_deg.size(); ++i)
      CHECK(std::abs(e.frequency.phase_margins_deg[i] - c.loop["phase_margins_deg"][i].get<double>()) <= 0.3);
    REQUIRE(e.frequency.critical_gains.size() == c.loop["gain_margins_db"].size());
    for (size_t i = 0; i < e.frequency.critical_gains.size(); ++i)
      CHECK(std::abs(20.0 * std::log10(e.frequency.critical_gains[i]) - c.loop["gain_margins_db"][i].get<double>()) <= 0.2);
    REQUIRE(e.frequency.peak_sensitivity);
    CHECK(*e.frequency.peak_sensitivity == Approx(c.loop["peak_sensitivity"].get<double>()).epsilon(0.01));
    // The step comes from the fitted model.
    CHECK(e.stable);
  }
}

TEST_CASE("a measured loop is divided by the compensator in service", "[requirements][measured_parse]") {
  const Zpk g{{}, {Complex(-1.0, 0.0), Complex(-4.0, 0.0)}, 8.0};
  const Zpk cur{{Complex(-2.0, 0.0)}, {Complex(-10.0, 0.0)}, 5.0};
  Zpk loop = g;
  loop.gain *= cur.gain;
  loop.zeros = cur.zeros;
  loop.poles.push_back(cur.poles[0]);
  json doc = json::object();
  doc["plant"] = {{"measured", {{"data", inline_data(loop, 0.0, 0.1, 100.0, 60)}}}, {"measured_loop", true}};
  doc["current"] = real_zpk_json(cur);
  doc["requirements"] = json::object();
  const Spec s = parse_spec(doc);
  const MeasuredPlant& m = *s.plants.at(0).measured;
  CHECK(m.from_loop);
  for (size_t i = 0; i < m.data.size(); i += 7) {
    const Complex want = g.evaluate(Complex(0.0, m.data.w_rad_s[i]));
    CHECK(std::abs(m.data.point(i) - want) <= 1e-12 * std::abs(want));
  }
  doc.erase("current");
  CHECK(error_of(doc).find("$.plant.measured: is a measured loop") == 0);
}

TEST_CASE("measured plant errors name the field", "[requirements][measured_parse]") {
  const Zpk g{{}, {Complex(-1.0, 0.0)}, 1.0};
  const json data = inline_data(g, 0.0, 0.1, 10.0, 12);
  json doc = {{"plant", {{"measured", {{"data", data}}}, {"gain", 2}}}, {"requirements", json::object()}};
  CHECK(error_of(doc).find("$.plant.gain: cannot stand beside measured") == 0);
  doc["plant"].erase("gain");
  doc["plant"]["measured"]["data"]["phase_deg"][5] = doc["plant"]["measured"]["data"]["phase_deg"][4].get<double>() - 170.0;
  CHECK(error_of(doc).find("$.plant.measured.data.phase_deg[5]: changes by more than 150 deg") == 0);
  doc["plant"]["measured"]["data"] = data;
  doc["plant"]["measured"]["data"]["frequency_rad_s"][3] = 0.01;
  CHECK(error_of(doc).find("$.plant.measured.data.frequency_rad_s[3]: does not increase") == 0);
  doc["plant"]["measured"] = {{"file", "bench.csv"}};
  CHECK(error_of(doc).find("$.plant.measured.file: was not read") == 0);
  doc["plant"] = {{"poles", {-1}}, {"measured_loop", true}};
  CHECK(error_of(doc).find("$.plant.measured_loop: applies only to a measured plant") == 0);
  doc["plant"] = {{"measured", {{"data", data}}}};
  doc["implementation"] = {{"sample_time_s", 0.01}};
  CHECK(error_of(doc).find("$.plant.measured: is not judged on the sampled loop yet") == 0);
}

TEST_CASE("a bad data file is an error at measured.file naming the line and the column", "[requirements][measured_parse]") {
  const std::string dir = "/tmp";
  const std::string path = dir + "/pw-measured-parse-test.csv";
  {
    std::ofstream out(path);
    out << "frequency_hz,magnitude_db,phase_deg\n";
    for (int i = 0; i < 10; ++i) out << (i == 6 ? 0.5 : 1.0 + i) << ",0,-90\n";
  }
  json doc = {{"plant", {{"measured", {{"file", "pw-measured-parse-test.csv"}}}}}, {"requirements", json::object()}};
  std::string msg;
  try {
    inline_measured_files(doc, dir);
  } catch (const SpecError& e) {
    msg = e.what();
  }
  std::remove(path.c_str());
  CHECK(msg.find("$.plant.measured.file: ") == 0);
  CHECK(msg.find("line 8, column frequency_hz: frequency does not increase") != std::string::npos);
}

TEST_CASE("a variant's own plant kind replaces the nominal plant's", "[requirements][measured_parse]") {
  const Zpk g{{}, {Complex(-1.0, 0.0)}, 1.0};
  const json data = inline_data(g, 0.0, 0.1, 10.0, 12);
  json doc = {{"plant", {{"poles", {-2}}, {"gain", 3}, {"variants", {{{"name", "bench"}, {"measured", {{"data", data}}}}}}}},
              {"requirements", json::object()}};
  Spec s = parse_spec(doc);
  CHECK_FALSE(s.plants[0].measured);
  REQUIRE(s.plants[1].measured);
  doc["plant"] = {{"measured", {{"data", data}}}, {"variants", {{{"poles", {-3}}}}}};
  s = parse_spec(doc);
  CHECK(s.plants[0].measured);
  CHECK_FALSE(s.plants[1].measured);
  CHECK(s.plants[1].tf.poles.at(0) == Complex(-3.0, 0.0));
}

TEST_CASE("the outputs say which figures of a measured plant come from the data", "[outputs][measured_output]") {
  const Spec s = parse_spec(spec_on("resonant_stage.csv"));
  const std::vector<std::string> lines = measured_plant_lines(s.plants);
  REQUIRE(lines.size() >= 4);
  CHECK(lines[0].find("nominal: measured, 321 points over 0.01 .. 100 rad/s from measured/resonant_stage.csv") == 0);
  CHECK(lines.back().find("from the measured points") != std::string::npos);
  const json j = measured_plant_json(*s.plants[0].measured);
  CHECK(j["points"] == 321);
  CHECK(j["fit"]["poles"].size() == 3);  // a conjugate pair is listed once
  CHECK(j["fit"]["per_decade"].size() == 4);
  CHECK(measured_plant_lines({Plant{}}).empty());
}
