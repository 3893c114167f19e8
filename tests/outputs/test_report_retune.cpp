#include <catch2/catch.hpp>

#include "polewright/jobs/check.hpp"
#include "polewright/outputs/json_values.hpp"
#include "polewright/outputs/report.hpp"
#include "polewright/requirements/spec_parse.hpp"
#include "report_test_helpers.hpp"

using namespace pw;
using namespace pw_test_report;

namespace {

Spec wafer() { return parse_spec(read_json_file(std::string(POLEWRIGHT_SOURCE_DIR) + "/specs/wafer-stage.json")); }

// A retune-shaped result made by hand: the spec, the current compensator and one retuned candidate
// (the gain raised by 20 %) with a two-entry change list.
nlohmann::json retune_doc(bool unchanged) {
  const Spec spec = wafer();
  Zpk next = *spec.current;
  next.gain *= 1.2;
  nlohmann::json doc;
  doc["tool"] = {{"name", "polewright"}, {"job", "retune"}};
  doc["spec"] = spec.document;
  doc["unchanged"] = unchanged;
  doc["current"] = {{"compensator", json_zpk(*spec.current)}};
  doc["candidates"] = nlohmann::json::array();
  if (!unchanged)
    doc["candidates"].push_back(
        {{"compensator", json_zpk(next)},
         {"structure", {"current"}},
         {"change_decades", 0.079},
         {"response_change_decades", 0.079},
         {"changes",
          {{{"item", "gain"}, {"index", 0}, {"old", spec.current->gain}, {"new", next.gain}, {"percent_change", 20.0}, {"driven_by", "overshoot_pct.max"}},
           {{"item", "pole"}, {"index", 2}, {"old", nullptr}, {"new", -5.0}, {"percent_change", nullptr}, {"driven_by", "no_such.max"}},
           {{"item", "pole"}, {"index", 1}, {"old", -30.0}, {"new", -30.0}, {"percent_change", 0.0}, {"driven_by", nullptr}}}}});
  return doc;
}

size_t count(const std::string& s, const std::string& what) {
  size_t n = 0;
  for (size_t p = s.find(what); p != std::string::npos; p = s.find(what, p + 1)) ++n;
  return n;
}

}  // namespace

TEST_CASE("retune report: old design kept apart, new design drawn over it", "[outputs][report][retune]") {
  const ReportData d = prepare_report(parse_result(retune_doc(false)));
  REQUIRE(d.previous);
  REQUIRE(d.designs.size() == 1);
  CHECK_FALSE(d.unchanged);
  CHECK(d.previous->compensator.gain == Approx(wafer().current->gain));
  CHECK(d.designs[0].compensator.gain == Approx(1.2 * wafer().current->gain));
  CHECK(d.designs[0].label == "new: current");
  const std::string html = report_html(d);
  check_page(html, 8);  // s-plane, y, u, |L|, phase, |S| |T|, Nyquist, delay margin
  // The changes section comes right after the verdict.
  const size_t summary = html.find("id=\"summary\""), changes = html.find("id=\"changes\""), splane = html.find("id=\"s-plane\"");
  REQUIRE(changes != std::string::npos);
  CHECK(summary < changes);
  CHECK(changes < splane);
  CHECK(html.find("id=\"candidates\"") == std::string::npos);  // one candidate: no ranked table
  CHECK(report_html(d) == html);  // deterministic
}

TEST_CASE("retune changes table: one row per change of the result", "[outputs][report][retune]") {
  const nlohmann::json doc = retune_doc(false);
  const ReportData d = prepare_report(parse_result(doc));
  const std::string s = report_retune_section(d);
  CHECK(count(s, "<tr class=\"pw-change\">") == doc["candidates"][0]["changes"].size());
  CHECK(s.find("+20 %") != std::string::npos);
  // "overshoot_pct.max" is written as the requirement it names (wafer-stage: overshoot at most 5 %).
  CHECK(s.find("overshoot &#8804; 5 %") != std::string::npos);
  CHECK(s.find("no_such.max") != std::string::npos);  // an unknown key as given
  CHECK(s.find("<td class=\"num\">new</td>") != std::string::npos);  // an added root has no percent change
  // Requirement table: a row per requirement of the spec, with old and new worst values.
  CHECK(count(s, "old worst") == 1);
  for (const Requirement& r : d.spec.requirements.items) CHECK(s.find(metric_info(r.metric).label) != std::string::npos);
}

TEST_CASE("retune overlays: the old design's lines in the step and loop plots, its poles in the s-plane", "[outputs][report][retune]") {
  const ReportData d = prepare_report(parse_result(retune_doc(false)));
  const std::string muted = "stroke=\"" + std::string("#69737a") + "\"";
  const std::vector<std::string> time = outer_svgs(report_time_section(d));
  REQUIRE(time.size() == 2);
  for (const std::string& svg : time) CHECK(svg.find("old design (in service), nominal") != std::string::npos);
  const std::vector<std::string> freq = outer_svgs(report_frequency_section(d));
  REQUIRE(freq.size() == 3);
  CHECK(freq[0].find("old design (in service)") != std::string::npos);
  CHECK(freq[1].find("old design (in service)") != std::string::npos);
  CHECK(freq[2].find("|S|, old design") != std::string::npos);
  CHECK(report_splane_section(d).find("closed-loop poles of the old design") != std::string::npos);
  // Without a previous design (a check) none of it appears.
  ReportData plain = d;
  plain.previous.reset();
  CHECK(report_time_section(plain).find("old design") == std::string::npos);
  CHECK(report_frequency_section(plain).find("old design") == std::string::npos);
}

TEST_CASE("an unchanged retune says so and shows the design in service only", "[outputs][report][retune]") {
  const ReportData d = prepare_report(parse_result(retune_doc(true)));
  CHECK(d.unchanged);
  CHECK_FALSE(d.previous);
  REQUIRE(d.designs.size() == 1);
  CHECK(d.designs[0].label == "in service (unchanged)");
  const std::string html = report_html(d);
  check_page(html, 8);
  CHECK(html.find("the retune changed nothing") != std::string::npos);
  CHECK(html.find("old design") == std::string::npos);
}

TEST_CASE("a retune result without its current compensator is refused, naming the field", "[outputs][report][retune]") {
  nlohmann::json doc = retune_doc(false);
  doc.erase("current");
  try {
    prepare_report(parse_result(doc));
    FAIL("no error");
  } catch (const SpecError& e) {
    CHECK(e.path() == "$.current");
  }
}

TEST_CASE("report_sections: retune puts the changes second and the candidates last", "[outputs][report][retune]") {
  const auto s = report_sections(JobKind::Retune);
  REQUIRE(s.size() == 9);
  CHECK(s[0].id == "summary");
  CHECK(s[1].id == "changes");
  CHECK(s.back().id == "candidates");
}
