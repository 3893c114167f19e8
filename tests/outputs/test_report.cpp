#include <catch2/catch.hpp>

#include <regex>
#include <vector>

#include "polewright/jobs/check.hpp"
#include "polewright/outputs/check_output.hpp"
#include "polewright/outputs/json_values.hpp"
#include "polewright/outputs/report.hpp"
#include "polewright/requirements/measured_parse.hpp"
#include "polewright/requirements/spec_parse.hpp"
#include "outputs/report_util.hpp"
#include "polewright/model/pade.hpp"
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
  check_page(html, 8);  // s-plane, y, u, |L|, phase, |S| |T|, Nyquist, delay margin
  CHECK(html.find("id=\"disturbance\"") == std::string::npos);  // no disturbance requirement
  for (const char* id : {"id=\"summary\"", "id=\"s-plane\"", "id=\"time\"", "id=\"frequency\"", "id=\"cautions\""})
    CHECK(html.find(id) != std::string::npos);
  CHECK(html.find("id=\"candidates\"") == std::string::npos);
  // Every plant variant has a line in the time response.
  for (const Plant& p : r.spec->plants) CHECK(html.find(p.name.empty() ? "nominal" : p.name) != std::string::npos);
  CHECK(report_html(r) == html);  // deterministic
}

TEST_CASE("reports of the other demo specs render too (dead time, unstable plant)", "[outputs][report]") {
  check_page(report_html(check_result("greenhouse-heater.json")), 8);
  check_page(report_html(check_result("magnetic-bearing.json")), 8);
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
  check_page(html, 5);  // s-plane, |L|, phase, |S| |T|, Nyquist (no delay margin figure)
  CHECK(html.find("No step response") != std::string::npos);
  CHECK(html.find("unstable: no delay margin") != std::string::npos);
  CHECK(html.find("A closed loop is unstable") != std::string::npos);
}

TEST_CASE("design report adds the ranked candidates with their overlaid steps", "[outputs][report]") {
  const ResultInput r = design_result();
  const ReportData d = prepare_report(r);
  REQUIRE(d.designs.size() == 2);
  CHECK(d.designs[0].label == "rank 1: lead + notch");
  CHECK(d.designs[1].colour == 1);
  const std::string html = report_html(d);
  check_page(html, 9);
  CHECK(html.find("id=\"candidates\"") != std::string::npos);
  CHECK(html.find("rank 2: lead + notch") != std::string::npos);
  // The settling-cliff column and its one-line explanation (synthesis/fragility.hpp).
  CHECK(html.find("<th>settling</th>") != std::string::npos);
  CHECK(html.find("settling: fragile when") != std::string::npos);
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

TEST_CASE("report_sections: check has seven sections (two drawn only when asked), design adds the candidates", "[outputs][report]") {
  CHECK(report_sections(JobKind::Check).size() == 7);
  const auto s = report_sections(JobKind::Design);
  REQUIRE(s.size() == 8);
  CHECK(s[3].id == "disturbance");
  CHECK(s[4].id == "actuator");
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

TEST_CASE("Nyquist section: the curve, unit circle, |S| circle and critical point; the delay margin figure",
          "[outputs][report][nyquist]") {
  const ReportData d = prepare_report(check_result("magnetic-bearing.json"));  // has a peak |S| limit and a dead time
  const std::string h = report_nyquist_section(d);
  const std::vector<std::string> svgs = outer_svgs(h);
  REQUIRE(svgs.size() == 2);
  for (const std::string& s : svgs) CHECK(pw_test_report::has_drawn_data(s));
  for (const char* what : {"unit circle", "critical point", "|S| limit circle: |1 + L| = 1/1.5", "delay margin (worst plant)"})
    CHECK(h.find(what) != std::string::npos);
  // The figure marks the worst plant's delay margin (as evaluate_loop computes it; its closed form is
  // tested in test_evaluate.cpp).
  double worst = INFINITY;
  for (const LoopEvaluation& e : d.designs.front().evaluation.plants)
    worst = std::min(worst, *delay_margin_value(e.frequency).value);
  CHECK(h.find("delay margin " + format_number(worst, 3) + " s") != std::string::npos);
  // The margins table of the frequency section lists it too.
  CHECK(report_frequency_section(d).find("<th>delay margin</th>") != std::string::npos);
}

TEST_CASE("delay_margin_s flows into the report: the required minimum is drawn", "[outputs][report][nyquist]") {
  nlohmann::json doc = demo("wafer-stage.json").document;
  doc["requirements"]["delay_margin_s"] = {{"min", 0.004}};
  const Spec spec = parse_spec(doc);
  const CheckReport cr = run_check(spec, *spec.current);
  const nlohmann::json j = check_report_json(cr);
  bool listed = false;
  for (const nlohmann::json& row : j["requirements"]) listed = listed || row["requirement"] == "delay_margin_s";
  CHECK(listed);
  CHECK(check_report_text(cr).find("delay_margin_s") != std::string::npos);
  const ReportData d = prepare_report(parse_result(j));
  CHECK(report_nyquist_section(d).find("required \u2265 0.004 s") != std::string::npos);
  CHECK(report_summary_section(d).find("delay margin") != std::string::npos);
}

TEST_CASE("a loop without a gain crossover has an unbounded delay margin and no figure for it", "[outputs][report][nyquist]") {
  const Spec spec = parse_spec(nlohmann::json::parse(R"({ "plant": { "gain": 1, "poles": [-1] },
      "requirements": { "delay_margin_s": { "min": 1 } }, "current": { "gain": 0.5 } })"));
  const ReportData d = prepare_report(parse_result(check_report_json(run_check(spec, *spec.current))));
  const std::string h = report_nyquist_section(d);
  CHECK(outer_svgs(h).size() == 1);
  CHECK(h.find("unbounded delay margin") != std::string::npos);
}

TEST_CASE("step plots span about three times the slowest settling time shown", "[outputs][report]") {
  // A 1 s response against a 25 s settling limit: the plot ends near 3 s, not at 1.6 x 25 s.
  const Spec spec = parse_spec(nlohmann::json::parse(R"({ "plant": { "gain": 1, "poles": [-1] },
      "requirements": { "settling_time_s": { "max": 25 } }, "current": { "gain": 3 } })"));
  const ReportData d = prepare_report(parse_result(check_report_json(run_check(spec, *spec.current))));
  const auto& st = d.designs.front().evaluation.plants.front().step;
  REQUIRE(st);
  REQUIRE(st->settling_time_s);
  // Closed form: 3 / (s + 4) settles into 2 % at ln(50) / 4 = 0.978 s.
  CHECK(*st->settling_time_s == Approx(std::log(50.0) / 4.0).epsilon(1e-3));
  CHECK(report::step_plot_end(d) == Approx(3.0 * *st->settling_time_s).epsilon(1e-9));
}

TEST_CASE("s-plane view: a dead time's Pade roots neither set the view nor pass for plant roots", "[outputs][report]") {
  // Slow dominant poles (~1 rad/s) and a 5 ms dead time, whose order-6 Pade roots reach ~2000 rad/s.
  const Spec spec = parse_spec(nlohmann::json::parse(R"({ "plant": { "gain": 2, "poles": [-0.5, -3], "delay_s": 0.005 },
      "requirements": { "overshoot_pct": { "max": 20 } }, "current": { "gain": 1, "zeros": [-0.8], "poles": [0] } })"));
  const ReportData d = prepare_report(parse_result(check_report_json(run_check(spec, *spec.current))));
  double pade_min = INFINITY;
  for (const Complex& c : pade_delay(0.005, spec.analysis.pade_order).poles) pade_min = std::min(pade_min, std::abs(c));
  REQUIRE(pade_min > 500.0);  // from the Pade coefficients: the smallest root is ~ 2.6 n / T... well beyond the loop
  const SplaneView v = splane_view(d);
  CHECK(v.x_lo > -20.0);  // plant poles at -0.5, -3 and the closed-loop poles near them set the view
  CHECK(v.y_hi < 20.0);
  const std::string h = report_splane_section(d);
  CHECK(h.find("Pade approximant of the dead time: poles (not plant roots)") != std::string::npos);
  CHECK(h.find("do not set the view") != std::string::npos);
}

TEST_CASE("a design that meets nothing carries the diagnosis of the text output", "[outputs][report]") {
  nlohmann::json doc;
  const Spec spec = demo("wafer-stage.json");
  nlohmann::json sd = spec.document;
  sd["requirements"]["settling_time_s"] = {{"max", 0.001}, {"band_pct", 2}};  // out of reach
  doc["tool"] = {{"name", "polewright"}, {"job", "design"}};
  doc["status"] = "not_met";
  doc["spec"] = sd;
  doc["candidates"] = {{{"compensator", json_zpk(*spec.current)}, {"structure", {"lead", "notch"}}}};
  doc["binding"] = {{{"requirement", "settling_time_s"}, {"bound", "max"}, {"limit", 0.001}, {"best_value_when_relaxed", 0.21},
                     {"relaxing_it_meets_the_rest", true}}};
  doc["limits"] = {{{"kind", "resonance"}, {"plant", "nominal"}, {"binding", true}, {"message", "a lightly damped mode at 60 rad/s caps crossover"}},
                   {{"kind", "delay"}, {"plant", "nominal"}, {"binding", false}, {"message", "not binding here"}}};
  const ReportData d = prepare_report(parse_result(doc));
  REQUIRE_FALSE(d.met());
  const std::string h = report_summary_section(d);
  CHECK(h.find("Nothing meets every requirement.") != std::string::npos);
  CHECK(h.find("settling time (limit &#8804; 0.001 s): best reachable with it relaxed 0.21 s, and then everything else is met") !=
        std::string::npos);
  CHECK(h.find("a lightly damped mode at 60 rad/s caps crossover") != std::string::npos);
  CHECK(h.find("<span class=\"pw-bad\">binding</span> nominal") != std::string::npos);
  size_t n = 0;
  for (size_t at = h.find("class=\"pw-limit\""); at != std::string::npos; at = h.find("class=\"pw-limit\"", at + 1)) ++n;
  CHECK(n == 2);
  // A check report never carries it.
  CHECK(report_diagnosis_html(prepare_report(check_result("wafer-stage.json"))).empty());
}

TEST_CASE("the diagnosis of a binding requirement with no value reached says n/a without a unit", "[outputs][report]") {
  const Spec spec = demo("wafer-stage.json");
  nlohmann::json doc;
  nlohmann::json sd = spec.document;
  sd["requirements"]["settling_time_s"] = {{"max", 0.001}, {"band_pct", 2}};
  doc["tool"] = {{"name", "polewright"}, {"job", "design"}};
  doc["spec"] = sd;
  doc["candidates"] = {{{"compensator", json_zpk(*spec.current)}, {"structure", {"lead", "notch"}}}};
  doc["binding"] = {{{"requirement", "settling_time_s"}, {"bound", "max"}, {"limit", 0.001}, {"best_value_when_relaxed", nullptr},
                     {"relaxing_it_meets_the_rest", false}}};
  doc["limits"] = nlohmann::json::array();
  const std::string h = report_diagnosis_html(prepare_report(parse_result(doc)));
  CHECK(h.find("best reachable with it relaxed n/a</li>") != std::string::npos);
  CHECK(h.find("n/a s") == std::string::npos);
  // Every design tried leaves the metric unbounded (a recovery the limits cannot make): said so.
  doc["binding"][0]["best_value_unbounded"] = true;
  const std::string u = report_diagnosis_html(prepare_report(parse_result(doc)));
  CHECK(u.find("best reachable with it relaxed unbounded (every design tried)</li>") != std::string::npos);
}

TEST_CASE("with an implementation block every candidate of the report is judged on the sampled loop", "[outputs][report][implementation]") {
  // The bundled arm joint runs at 2 ms. The report's rank 2 (and the retune's old loop) must carry
  // the figures check gives (the sampled loop), not the continuous loop's: they differ here in the
  // settling time by the hold and the computational delay.
  const Spec spec = parse_spec(read_json_file(std::string(POLEWRIGHT_SOURCE_DIR) + "/examples/sampled/arm-joint.json"));
  REQUIRE(spec.current);
  REQUIRE(spec.implementation);
  Zpk second = *spec.current;
  second.gain *= 0.9;
  nlohmann::json doc;
  doc["tool"] = {{"name", "polewright"}, {"job", "design"}};
  doc["spec"] = spec.document;
  doc["candidates"] = {{{"compensator", json_zpk(*spec.current)}, {"structure", {"lead", "notch"}}},
                       {{"compensator", json_zpk(second)}, {"structure", {"lead", "notch"}}}};
  const ReportData d = prepare_report(parse_result(doc));
  REQUIRE(d.designs.size() == 2);
  const Evaluation sampled = run_check(spec, second).evaluation;
  const Region region = region_from_requirements(spec.requirements);
  const Evaluation continuous = evaluate_all(second, spec.plants, spec.requirements, region, spec.analysis);
  const auto settling = [](const Evaluation& e) {
    return e.plants.front().values[static_cast<size_t>(MetricId::SettlingTime)].value;
  };
  REQUIRE(settling(sampled));
  REQUIRE(settling(continuous));
  REQUIRE(settling(d.designs[1].evaluation));
  CHECK(std::abs(*settling(sampled) - *settling(continuous)) > 1e-3);  // the two loops differ
  CHECK(*settling(d.designs[1].evaluation) == Approx(*settling(sampled)).epsilon(1e-12));
}

TEST_CASE("disturbance section: drawn only when a requirement asks, with the response and its limits", "[outputs][report][disturbance]") {
  // A spec without disturbance requirements has no such section; one with a load-step bound gets
  // the load response of every plant: its largest deviation is the load_peak figure of the check
  // (the same simulation), and the limit lines are drawn.
  CHECK(report_disturbance_section(prepare_report(check_result("wafer-stage.json"))).empty());
  const Spec spec = parse_spec(parse_json_text(R"J({
    "name": "hoist drum under a load step (demo data)",
    "plant": {"gain": 20, "poles": [0, -5], "variants": [{"name": "heavy", "gain": 14, "poles": [0, -4]}]},
    "requirements": {"overshoot_pct": {"max": 25}, "load_peak": {"max": 0.2}, "load_recovery_s": {"max": 4},
                     "disturbance_step": 0.5},
    "current": {"gain": 1.5, "zeros": [-1.2, -2.4], "poles": [0, -6]}
  })J"));
  const ReportData d = prepare_report(parse_result(check_report_json(run_check(spec, *spec.current))));
  const LoopEvaluation& nominal = d.designs.front().evaluation.plants.front();
  REQUIRE(nominal.load);
  REQUIRE_FALSE(nominal.load->trace.y.empty());
  double biggest = 0.0;
  for (double y : nominal.load->trace.y) biggest = std::max(biggest, std::abs(0.5 * y));
  const MetricValue& peak = nominal.values[static_cast<size_t>(MetricId::LoadPeak)];
  REQUIRE(peak.value);
  CHECK(biggest == Approx(*peak.value).epsilon(2e-3));  // the peak is refined between samples
  const std::string h = report_disturbance_section(d);
  CHECK_THAT(h, Catch::Contains("Output after a load step at the plant input"));
  CHECK_THAT(h, Catch::Contains("peak limit 0.2"));
  CHECK_THAT(h, Catch::Contains("recovery limit"));
  CHECK_THAT(h, Catch::Contains("heavy"));
  CHECK(h.find("Output after a step added at the output") == std::string::npos);
  check_page(report_html(d), 9);  // the eight of a check and the load response
}

TEST_CASE("a measured plant's report overlays its points on the fitted loop, over the measured range", "[outputs][report][measured]") {
  // examples/measured/belt-axis.json: 131 points from 0.5 Hz to 200 Hz (3.1 to 1257 rad/s).
  const Spec spec = parse_spec(read_spec_file(std::string(POLEWRIGHT_SOURCE_DIR) + "/examples/measured/belt-axis.json"));
  REQUIRE(spec.plants.front().measured);
  Zpk c;
  c.gain = 60.0;
  c.zeros = {Complex(-12.0, 0.0)};
  c.poles = {Complex(-300.0, 0.0)};
  const ReportData d = prepare_report(parse_result(check_report_json(run_check(spec, c))));
  const std::string h = report_frequency_section(d);
  const std::vector<std::string> svgs = outer_svgs(h);
  REQUIRE(svgs.size() == 3);
  CHECK(svgs[0].find("nominal: measured points \u00d7 C") != std::string::npos);  // gain plot
  CHECK(svgs[1].find("nominal: measured points \u00d7 C") != std::string::npos);  // phase plot
  CHECK(svgs[0].find("nominal (fitted model)") != std::string::npos);
  CHECK(h.find("Circles: the measured points times C") != std::string::npos);
  // The axis spans the data and a third of a decade beyond: decade ticks 10, 100, 1000 only
  // (the fitted model's own grid would run from 1e-4 up).
  CHECK(svgs[0].find(">1000</text>") != std::string::npos);
  CHECK(svgs[0].find(">1e-4</text>") == std::string::npos);
  CHECK(svgs[0].find(">1e4</text>") == std::string::npos);
  check_page(report_html(d), 8);  // s-plane, step, effort, three frequency plots, Nyquist, delay margin
  // A plant given as a transfer function draws no points.
  CHECK(report_frequency_section(prepare_report(check_result("wafer-stage.json"))).find("measured points") == std::string::npos);
}

TEST_CASE("actuator section: the limited step of every plant over the linear one, with the limits", "[outputs][report][actuator]") {
  // No actuator, no section. With one and a saturated_* bound: the nominal trace is the check's
  // own simulation (its peak is the saturated overshoot figure), u stays within the limits, and
  // the caption states them. Dosing pump: demo data.
  CHECK(report_saturated_section(prepare_report(check_result("wafer-stage.json"))).empty());
  const Spec spec = parse_spec(parse_json_text(R"J({
    "name": "dosing pump, command to flow (demo data)",
    "plant": {"gain": 3.125, "poles": [-1.25], "variants": [{"name": "worn pump", "gain": 2.5, "poles": [-1.0]}]},
    "requirements": {"saturated_overshoot_pct": {"max": 10}, "saturated_settling_time_s": {"max": 4}},
    "actuator": {"min": 0, "max": 1, "reference_step": 1.5},
    "current": {"gain": 1.6, "zeros": [-2], "poles": [0]}
  })J"));
  const ReportData d = prepare_report(parse_result(check_report_json(run_check(spec, *spec.current))));
  const LoopEvaluation& nominal = d.designs.front().evaluation.plants.front();
  REQUIRE(nominal.saturated);
  const SaturatedResponse& r = nominal.saturated->response;
  double top = 0.0;
  for (double y : r.y) top = std::max(top, y);
  for (double u : r.u) CHECK((u >= 0.0 && u <= 1.0));
  const MetricValue& os = nominal.values[static_cast<size_t>(MetricId::SaturatedOvershoot)];
  REQUIRE(os.value);
  CHECK((top / 1.5 - 1.0) * 100.0 == Approx(*os.value).epsilon(1e-3));  // refined between samples
  const std::string h = report_saturated_section(d);
  CHECK(outer_svgs(h).size() == 2);
  CHECK_THAT(h, Catch::Contains("Output y(t) with the actuator limits"));
  CHECK_THAT(h, Catch::Contains("0 &lt;= u &lt;= 1, no anti-windup, reference step 1.5"));
  CHECK_THAT(h, Catch::Contains("worn pump, limited"));
  CHECK_THAT(h, Catch::Contains("without limits (linear), nominal"));
  CHECK_THAT(h, Catch::Contains("overshoot limit 10 %"));
  check_page(report_html(d), 10);  // the eight of a check and the two of the limited step
}

TEST_CASE("actuator section: the limited load step from the operating point, as deviations", "[outputs][report][actuator]") {
  // Demo data: the pump holding 1.5 (u0 = 0.6) meets a load of 0.59 (u = 0.01 holds it again).
  const Spec spec = parse_spec(parse_json_text(R"J({
    "name": "dosing pump, a feed opening upstream (demo data)",
    "plant": {"gain": 3.125, "poles": [-1.25]},
    "requirements": {"disturbance_step": 0.59, "saturated_load_peak": {"max": 0.3}, "saturated_load_recovery_s": {"max": 3}},
    "actuator": {"min": 0, "max": 1, "anti_windup": "conditional", "reference_step": 1.5},
    "current": {"gain": 1.6, "zeros": [-2], "poles": [0]}
  })J"));
  const ReportData d = prepare_report(parse_result(check_report_json(run_check(spec, *spec.current))));
  const LoopEvaluation& nominal = d.designs.front().evaluation.plants.front();
  REQUIRE(nominal.saturated_load);
  CHECK_FALSE(nominal.saturated);
  CHECK(nominal.saturated_load->response.limited_time_s > 0.5);  // the slide along u = 0
  const std::string h = report_saturated_section(d);
  CHECK(outer_svgs(h).size() == 2);  // no limited reference step asked: the load pair only
  CHECK_THAT(h, Catch::Contains("Deviation y(t) - y0 after the load step, limited"));
  CHECK_THAT(h, Catch::Contains("while the loop holds the reference 1.5 (y0)"));
  CHECK_THAT(h, Catch::Contains("peak limit +-0.3"));
  CHECK_THAT(h, Catch::Contains("recovery limit 3 s"));
  CHECK_THAT(h, Catch::Contains("without limits (linear), nominal"));
}
