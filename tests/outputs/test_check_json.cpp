#include <catch2/catch.hpp>

#include <cmath>

#include <regex>

#include "polewright/outputs/check_output.hpp"
#include "polewright/requirements/spec_parse.hpp"

using namespace pw;

namespace {
CheckReport demo(const char* name) {
  const Spec spec = parse_spec(read_json_file(std::string(POLEWRIGHT_SOURCE_DIR) + "/specs/" + name));
  return run_check(spec, *spec.current);
}

// Walks a JSON value and fails on any non-finite number (the writer must have turned them into null).
void all_finite(const nlohmann::json& j) {
  if (j.is_number_float()) CHECK(std::isfinite(j.get<double>()));
  if (j.is_structured())
    for (const auto& v : j) all_finite(v);
}
}  // namespace

TEST_CASE("check JSON has the documented shape for every demo", "[outputs][check_output]") {
  for (const char* name : {"wafer-stage.json", "greenhouse-heater.json", "magnetic-bearing.json"}) {
    INFO(name);
    const CheckReport r = demo(name);
    const nlohmann::json j = check_report_json(r);
    CHECK((j.at("status") == "met" || j.at("status") == "not_met"));
    CHECK(j.at("status") == (r.evaluation.all_met ? "met" : "not_met"));
    for (const char* k : {"region", "variants", "worst", "closed_loop_poles", "gain_interval", "locus", "cautions", "requirements"})
      CHECK(j.contains(k));
    CHECK(j.at("variants").size() == r.plants.size());
    CHECK(j.at("worst").at("metrics").size() == j.at("worst").at("met").size());
    CHECK(j.at("locus").at("branches").size() == r.locus.branches.size());
    all_finite(j);
    // Round trip through text: dump and parse give the same document.
    CHECK(nlohmann::json::parse(j.dump()) == j);
  }
}

TEST_CASE("region JSON lists its derivations", "[outputs][check_output]") {
  Region reg;
  reg.min_damping = 0.5;
  reg.derivations = {"damping >= 0.5"};
  const nlohmann::json j = region_json(reg);
  CHECK(j.at("min_damping_ratio") == 0.5);
  CHECK(j.at("max_natural_frequency_rad_s").is_null());
  CHECK(j.at("derivations").size() == 1);
}

TEST_CASE("pole list and gain interval JSON", "[outputs][check_output]") {
  PoleAnalysis pa;
  PoleInfo p;
  p.pole = Complex(-1.0, 2.0);
  p.damping = 1.0 / std::sqrt(5.0);
  p.natural_frequency = std::sqrt(5.0);
  p.share = 0.4;
  p.matters = true;
  pa.poles = {p};
  const nlohmann::json j = pole_list_json(pa);
  REQUIRE(j.size() == 1);
  CHECK(j[0].at("im") == 2.0);
  CHECK(j[0].at("matters") == true);
  GainToleranceResult g;
  CHECK(gain_interval_json(g).is_null());  // nominal loop outside the region
  g.lo = 0.5;
  g.hi = 1.5;
  CHECK(gain_interval_json(g) == nlohmann::json({0.5, 1.5}));
}

TEST_CASE("check JSON and text carry the conditioning warnings", "[outputs][check_json][stress]") {
  // (s + 2)^8 expanded into coefficients: an 8-fold root the coefficients fix only to about
  // eps^(1/8) = 1.1e-2 relative (closed form).
  const nlohmann::json doc = {
      {"plant", {{"numerator", {256}}, {"denominator", {1, 16, 112, 448, 1120, 1792, 1792, 1024, 256}}}},
      {"requirements", {{"phase_margin_deg", {{"min", 30}}}}},
      {"current", {{"gain", 1.2}}}};
  const Spec spec = parse_spec(doc);
  const CheckReport r = run_check(spec, *spec.current);
  const nlohmann::json j = check_report_json(r);
  REQUIRE(j.at("warnings").size() == 1);
  CHECK(j.at("warnings").at(0).get<std::string>().find("$.plant.denominator") != std::string::npos);
  CHECK(check_report_text(r).find("warning      $.plant.denominator") != std::string::npos);
  CHECK(check_report_json(demo("wafer-stage.json")).at("warnings").empty());
}

TEST_CASE("check JSON of a spec with an implementation: sampled figures, the label, the continuous block",
          "[outputs][check_output][implementation]") {
  const Spec spec = parse_spec(parse_json_text(R"({
    "plant": {"numerator": [1], "denominator": [1, 1, 0], "delay_s": 0.1},
    "requirements": {"overshoot_pct": {"max": 20}, "settling_time_s": {"max": 12}},
    "current": {"gain": 0.8},
    "implementation": {"sample_time_s": 0.25, "method": "tustin", "compute_delay_samples": 0.5}
  })"));
  const CheckReport r = run_check(spec, *spec.current);
  const nlohmann::json j = check_report_json(r);
  all_finite(j);
  REQUIRE(j.contains("sampled"));
  REQUIRE(j.contains("continuous"));
  CHECK(j["sampled"]["label"] == "sampled at T = 0.25 s (tustin, delay 0.5 samples)");
  CHECK(j["sampled"]["nyquist_rad_s"].get<double>() == Approx(M_PI / 0.25));
  CHECK(j["status"] == (r.evaluation.all_met ? "met" : "not_met"));
  CHECK(j["continuous"]["status"] == (r.continuous->all_met ? "met" : "not_met"));
  CHECK(j["continuous"]["requirements"].size() == j["requirements"].size());
  // The rows are of the sampled loop, the continuous block of the continuous one.
  CHECK(j["requirements"][0]["value"].get<double>() == Approx(*r.evaluation.outcomes[0].worst.value));
  CHECK(j["continuous"]["requirements"][0]["value"].get<double>() == Approx(*r.continuous->outcomes[0].worst.value));
  CHECK(j["sampled"]["loops"][0]["step_at_samples"]["overshoot_pct"].is_number());
  // Without an implementation there is neither block.
  const nlohmann::json plain = check_report_json(demo("wafer-stage.json"));
  CHECK_FALSE(plain.contains("sampled"));
  CHECK_FALSE(plain.contains("continuous"));
}
