#include <catch2/catch.hpp>

#include <regex>
#include <vector>

#include "polewright/jobs/check.hpp"
#include "polewright/outputs/check_output.hpp"
#include "polewright/outputs/json_values.hpp"
#include "polewright/outputs/report.hpp"
#include "polewright/requirements/spec_parse.hpp"
#include "report_test_helpers.hpp"

using namespace pw;
using pw_test_report::check_page;
using pw_test_report::outer_svgs;

namespace {

Spec demo(const std::string& name) {
  return parse_spec(read_json_file(std::string(POLEWRIGHT_SOURCE_DIR) + "/specs/" + name));
}

ResultInput check_result(const std::string& name) {
  const Spec spec = demo(name);
  return parse_result(check_report_json(run_check(spec, *spec.current)));
}

// A design-shaped result made by hand: the spec and two ranked compensators.
ResultInput design_result() {
  const Spec spec = demo("wafer-stage.json");
  Zpk second = *spec.current;
  second.gain *= 0.8;
  nlohmann::json doc;
  doc["tool"] = {{"name", "polewright"}, {"job", "design"}};
  doc["spec"] = spec.document;
  doc["candidates"] = {{{"compensator", json_zpk(*spec.current)}, {"structure", {"lead", "notch"}}},
                       {{"compensator", json_zpk(second)}, {"structure", {"lead", "notch"}}}};
  return parse_result(doc);
}

}  // namespace

TEST_CASE("check report: one svg per plot, all drawn, no nan, cautions present", "[outputs][report]") {
  const ResultInput r = check_result("wafer-stage.json");
  const std::string html = report_html(r);
  check_page(html, 6);  // s-plane, y, u, |L|, phase, |S| |T|
  for (const char* id : {"id=\"summary\"", "id=\"s-plane\"", "id=\"time\"", "id=\"frequency\"", "id=\"cautions\""})
    CHECK(html.find(id) != std::string::npos);
  CHECK(html.find("id=\"candidates\"") == std::string::npos);
  // Every plant variant has a line in the time response.
  for (const Plant& p : r.spec->plants) CHECK(html.find(p.name.empty() ? "nominal" : p.name) != std::string::npos);
  CHECK(report_html(r) == html);  // deterministic
}

TEST_CASE("reports of the other demo specs render too (dead time, unstable plant)", "[outputs][report]") {
  check_page(report_html(check_result("greenhouse-heater.json")), 6);
  check_page(report_html(check_result("magnetic-bearing.json")), 6);
}

TEST_CASE("an unstable loop still gets its s-plane and frequency plots, and no step", "[outputs][report]") {
  // 4 / (s (s + 2) (s + 3)) with gain 50: Routh-Hurwitz on s^3 + 5 s^2 + 6 s + 200 gives stability
  // only for 4 k < 30 (worked by hand), so the loop is unstable.
  const Spec spec = parse_spec(nlohmann::json::parse(R"({ "name": "unstable demo",
      "plant": { "gain": 4, "poles": [0, -2, -3] },
      "requirements": { "overshoot_pct": { "max": 10 }, "phase_margin_deg": { "min": 40 } },
      "current": { "gain": 50 } })"));
  const ReportData d = prepare_report(parse_result(check_report_json(run_check(spec, *spec.current))));
  REQUIRE_FALSE(d.designs.front().evaluation.all_stable);
  const std::string html = report_html(d);
  check_page(html, 4);
  CHECK(html.find("No step response") != std::string::npos);
  CHECK(html.find("A closed loop is unstable") != std::string::npos);
}

TEST_CASE("design report adds the ranked candidates with their overlaid steps", "[outputs][report]") {
  const ResultInput r = design_result();
  const ReportData d = prepare_report(r);
  REQUIRE(d.designs.size() == 2);
  CHECK(d.designs[0].label == "rank 1: lead + notch");
  CHECK(d.designs[1].colour == 1);
  const std::string html = report_html(d);
  check_page(html, 7);
  CHECK(html.find("id=\"candidates\"") != std::string::npos);
  CHECK(html.find("rank 2: lead + notch") != std::string::npos);
}

TEST_CASE("prepare_report recomputes the check's figures from the embedded spec", "[outputs][report]") {
  const Spec spec = demo("wafer-stage.json");
  const CheckReport direct = run_check(spec, *spec.current);
  const ReportData d = prepare_report(parse_result(check_report_json(direct)));
  REQUIRE(d.designs.size() == 1);
  CHECK(d.met() == direct.evaluation.all_met);
  const auto& a = d.designs[0].evaluation.plants[0];
  const auto& b = direct.evaluation.plants[0];
  REQUIRE(a.step);
  REQUIRE(b.step);
  CHECK(*a.step->overshoot_pct == Approx(*b.step->overshoot_pct));
  CHECK(!a.step->trace.y.empty());  // traces kept for the plots
  CHECK(d.locus.branches.size() == direct.locus.branches.size());
}

TEST_CASE("prepare_report refuses results it cannot report, naming the field", "[outputs][report]") {
  const Spec spec = demo("wafer-stage.json");
  try {
    prepare_report(parse_result(json_zpk(*spec.current)));
    FAIL("no error");
  } catch (const SpecError& e) {
    CHECK(e.path() == "$.tool.job");
  }
}

TEST_CASE("report_sections: check has four sections, design adds the candidates", "[outputs][report]") {
  CHECK(report_sections("check").size() == 4);
  const auto s = report_sections("design");
  REQUIRE(s.size() == 5);
  CHECK(s.back().id == "candidates");
  CHECK(s.front().id == "summary");
}

TEST_CASE("section builders each give a fragment with their plots", "[outputs][report]") {
  const ReportData d = prepare_report(design_result());
  CHECK(report_summary_section(d).find("C(s) factored") != std::string::npos);
  CHECK(outer_svgs(report_splane_section(d)).size() == 1);
  CHECK(outer_svgs(report_time_section(d)).size() == 2);
  CHECK(outer_svgs(report_frequency_section(d)).size() == 3);
  CHECK(outer_svgs(report_candidates_section(d)).size() == 1);
  ReportData empty = d;
  empty.designs.clear();
  CHECK(report_splane_section(empty).empty());
  CHECK(report_summary_section(empty).find("no compensator") != std::string::npos);
}
