#include <catch2/catch.hpp>

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
