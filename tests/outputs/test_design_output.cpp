#include <catch2/catch.hpp>

#include <regex>

#include "polewright/outputs/design_output.hpp"
#include "polewright/requirements/spec_parse.hpp"

using namespace pw;

TEST_CASE("design JSON and text carry the documented fields", "[outputs][design_output]") {
  const Spec spec = parse_spec(read_json_file(std::string(POLEWRIGHT_SOURCE_DIR) + "/specs/greenhouse-heater.json"));
  DesignOptions o = DesignOptions::FromSpec(spec);
  o.threads = 1;
  const DesignReport r = run_design(spec, o);
  const nlohmann::json j = design_report_json(r);
  for (const char* k : {"status", "region", "plants", "requirements", "analysis", "candidates", "search", "timing", "cautions", "limits", "binding"})
    CHECK(j.contains(k));
  CHECK_FALSE(design_report_json(r, false).contains("timing"));
  REQUIRE_FALSE(j.at("candidates").empty());
  const nlohmann::json& c = j.at("candidates").at(0);
  for (const char* k : {"rank", "structure", "meets", "compensator", "metrics", "worst_variant", "closed_loop_poles", "gain_interval", "violations"})
    CHECK(c.contains(k));
  // The requirements and plants read back through the spec parser.
  nlohmann::json back = {{"plant", j.at("plants").at(0)}, {"requirements", j.at("requirements")}};
  back["plant"].erase("name");
  const Spec again = parse_spec(back);
  CHECK(again.requirements.items.size() == spec.requirements.items.size());
  CHECK(again.plants[0].delay_s == spec.plants[0].delay_s);
  const std::string t = design_report_text(r);
  CHECK(t.find("rank") != std::string::npos);
  CHECK(t.find("caution:") != std::string::npos);
  CHECK(t.find("evaluations in") != std::string::npos);
  // Both gain conventions, named, in the table and the JSON (issue 17).
  CHECK(t.find("zero-pole gain") != std::string::npos);
  CHECK(t.find("low-freq gain") != std::string::npos);
  CHECK(t.find("low-frequency gain = lim s^n C(s)") != std::string::npos);
  const nlohmann::json& comp = c.at("compensator");
  CHECK(comp.at("low_frequency_gain").get<double>() == Approx(zpk_low_frequency_gain(r.candidates.at(0).compensator)));
  CHECK(comp.at("integrators").get<int>() == zpk_integrators(r.candidates.at(0).compensator));
  CHECK_FALSE(std::regex_search(t, std::regex("\\b(nan|inf)\\b")));
}

TEST_CASE("design JSON and text carry the conditioning warnings of the spec", "[outputs][design_output][stress]") {
  // An 8-fold root given as coefficients, (s + 2)^8 expanded (binomial coefficients, by hand).
  DesignReport r;
  r.spec_document = {{"plant", {{"numerator", {256}}, {"denominator", {1, 16, 112, 448, 1120, 1792, 1792, 1024, 256}}}}};
  const nlohmann::json j = design_report_json(r, false);
  REQUIRE(j.at("warnings").size() == 1);
  CHECK(j.at("warnings").at(0).get<std::string>().find("8 roots") != std::string::npos);
  CHECK(design_report_text(r).find("warning $.plant.denominator") != std::string::npos);
  r.spec_document = {{"plant", {{"gain", 256}, {"poles", {-2, -2, -2, -2, -2, -2, -2, -2}}}}};
  CHECK(design_report_json(r, false).at("warnings").empty());
}

TEST_CASE("metrics and unbounded lists; the search context block", "[outputs][design_output]") {
  std::vector<MetricValue> worst(kMetricCount);
  worst[static_cast<size_t>(MetricId::Overshoot)].value = 4.5;
  worst[static_cast<size_t>(MetricId::GainMargin)].infinite = true;
  nlohmann::json j;
  add_metrics(j, worst);
  CHECK(j["metrics"]["overshoot_pct"] == 4.5);
  CHECK(j["metrics"]["gain_margin_db"].is_null());
  CHECK(j["metrics"]["settling_time_s"].is_null());
  CHECK(j["unbounded"] == nlohmann::json::array({"gain_margin_db"}));
  // Every metric except the on-request ones (disturbance, noise), which appear only with a value.
  size_t shown = 0;
  for (const MetricInfo& info : metric_table()) shown += !info.on_request;
  CHECK(j["metrics"].size() == shown);
  CHECK_FALSE(j["metrics"].contains("load_peak"));
  worst[static_cast<size_t>(MetricId::LoadIae)].infinite = true;
  nlohmann::json k;
  add_metrics(k, worst);
  CHECK(k["metrics"].contains("load_iae"));
  CHECK(k["unbounded"] == nlohmann::json::array({"gain_margin_db", "load_iae"}));
  RequirementSet req;
  req.items.push_back({MetricId::Overshoot, Sense::AtMost, 10.0});
  Plant p;
  p.name = "nominal";
  p.tf.poles = {Complex(-1, 0)};
  nlohmann::json c;
  add_search_context(c, region_from_requirements(req), {0.1, 100.0}, {p}, req, AnalysisOptions{});
  CHECK(c["frequency_range_rad_s"] == nlohmann::json::array({0.1, 100.0}));
  CHECK(c["plants"].size() == 1);
  CHECK(c["requirements"]["overshoot_pct"]["max"] == 10.0);
  CHECK(c["region"]["min_damping_ratio"].get<double>() == Approx(0.5912).epsilon(1e-3));  // zeta for 10 % (second order)
  CHECK(c["analysis"]["pade_order"] == 6);
}

TEST_CASE("the settling-cliff flag is in the table, the JSON and its one-line explanation", "[outputs][design_output]") {
  // A hand-built candidate for each state; the wording follows the constants of fragility.hpp.
  Candidate c;
  CHECK(settling_robustness_text(c) == "-");
  c.fragility_assessed = true;
  CHECK(settling_robustness_text(c) == "robust");
  c.fragile = true;
  CHECK(settling_robustness_text(c) == "fragile");
  CHECK(fragile_explanation().find("more than 25 %") != std::string::npos);
  CHECK(fragile_explanation().find("10 % narrower or wider") != std::string::npos);
  c.margins_at_noise = true;
  CHECK(worst_violation(c).find("marginally stable") == 0);

  const Spec spec = parse_spec(read_json_file(std::string(POLEWRIGHT_SOURCE_DIR) + "/specs/greenhouse-heater.json"));
  DesignOptions o = DesignOptions::FromSpec(spec);
  o.threads = 1;
  const DesignReport r = run_design(spec, o);
  REQUIRE_FALSE(r.candidates.empty());
  const nlohmann::json j = design_report_json(r, false);
  for (size_t i = 0; i < r.candidates.size(); ++i) {
    const nlohmann::json& jc = j.at("candidates").at(i);
    const Candidate& rc = r.candidates[i];
    if (rc.fragility_assessed) {
      CHECK(jc.at("fragile").get<bool>() == rc.fragile);
      CHECK(jc.at("settling_jump_pct").get<double>() == Approx(100.0 * rc.settling_jump_share));
    } else {
      CHECK(jc.at("fragile").is_null());
    }
  }
  const std::string t = design_report_text(r);
  CHECK(t.find(fragile_explanation()) != std::string::npos);
  CHECK(t.find("settling") != std::string::npos);
}
