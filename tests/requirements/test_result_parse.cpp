#include <catch2/catch.hpp>

#include <string>

#include "polewright/jobs/check.hpp"
#include "polewright/outputs/check_output.hpp"
#include "polewright/requirements/result_parse.hpp"
#include "polewright/requirements/spec_parse.hpp"

using namespace pw;
using nlohmann::json;

namespace {
const char* kSpec = R"({
  "name": "spindle speed loop",
  "plant": {"numerator": [40], "denominator": [0.05, 1]},
  "requirements": {"overshoot_pct": {"max": 10}, "steady_state_error": {"max": 0, "input": "step"}},
  "current": {"gain": 0.2, "zeros": [-15], "poles": [0]}
})";

std::string error_of(const json& doc) {
  try {
    parse_result(doc);
  } catch (const SpecError& e) {
    return e.what();
  }
  return "";
}
}  // namespace

TEST_CASE("a check result reads back with its spec and compensator", "[requirements][result_parse]") {
  const Spec spec = parse_spec(json::parse(kSpec));
  const CheckReport rep = run_check(spec, *spec.current);
  const json doc = json::parse(check_report_json(rep).dump());  // through text, as a file would be
  const ResultInput r = parse_result(doc);
  CHECK(r.job == JobKind::Check);
  REQUIRE(r.spec);
  CHECK(r.spec->name == "spindle speed loop");
  CHECK(r.spec->requirements.items.size() == spec.requirements.items.size());
  REQUIRE(r.compensators.size() == 1);
  CHECK(r.compensators[0].gain == spec.current->gain);
  REQUIRE(r.compensators[0].zeros.size() == 1);
  CHECK(r.compensators[0].zeros[0].real() == -15.0);
  CHECK(&result_compensator(r, 1) == &r.compensators[0]);
  CHECK(result_compensator_path(r, 1) == "$.compensator");
}

TEST_CASE("a bare compensator object is a result of its own", "[requirements][result_parse]") {
  const ResultInput r = parse_result(json::parse(R"({"numerator": [2, 10], "denominator": [1, 50]})"));
  CHECK(r.job == JobKind::Compensator);
  CHECK_FALSE(r.spec);
  REQUIRE(r.compensators.size() == 1);
  CHECK(r.compensators[0].poles[0].real() == Approx(-50.0));
  CHECK(result_compensator_path(r, 1) == "$");
}

TEST_CASE("bad result files name the field", "[requirements][result_parse]") {
  CHECK(error_of(json::array()).rfind("$:", 0) == 0);
  CHECK(error_of(json::parse(R"({"tool": {"job": "plot"}})")).rfind("$.tool.job:", 0) == 0);
  CHECK(error_of(json::parse(R"({"tool": {"job": "design"}, "spec": null})")).rfind("$.spec:", 0) == 0);
  json doc = json::parse(R"({"tool": {"job": "design"}, "candidates": []})");
  doc["spec"] = json::parse(kSpec);
  doc["spec"]["plant"]["denominator"] = json::array({0, 0});
  CHECK(error_of(doc).rfind("$.spec.plant.denominator", 0) == 0);
  doc["spec"] = json::parse(kSpec);
  doc["candidates"] = json::parse(R"([{"compensator": {"gain": 1, "zeros": [-1, -2], "poles": [-3]}}])");
  CHECK(error_of(doc).rfind("$.candidates[0].compensator", 0) == 0);
  doc["candidates"] = json::array();
  const ResultInput empty = parse_result(doc);
  CHECK_THROWS_AS(result_compensator(empty, 1), SpecError);
  doc["candidates"] = json::parse(R"([{"compensator": {"gain": 1, "zeros": [], "poles": []}}])");
  const ResultInput one = parse_result(doc);
  CHECK_THROWS_WITH(result_compensator(one, 2), Catch::StartsWith("rank: is 2"));
  CHECK(result_compensator_path(one, 1) == "$.candidates[0].compensator");
  CHECK_THROWS_WITH(result_compensator_path(one, 2), Catch::StartsWith("rank: is 2"));
}
