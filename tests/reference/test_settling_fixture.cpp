// Settling time when the last band excursion falls between samples: the loops of
// tests/reference/settling_fixture.json (make_settling_fixture.py, Debian numpy/scipy:
// scipy.signal.step on 2,000,001 points over 5 s) against the analysis, within 0.1 % as issue 11
// asks, on the full-accuracy (check) path and on the search's screening path.
#include <catch2/catch.hpp>

#include <cmath>
#include <cstdlib>

#include "polewright/jobs/check.hpp"
#include "polewright/requirements/evaluate.hpp"
#include "polewright/requirements/spec_parse.hpp"

using namespace pw;
using nlohmann::json;

namespace {

std::string settling_fixture_path() {
  if (const char* p = std::getenv("POLEWRIGHT_SETTLING_FIXTURE")) return p;
  return std::string(POLEWRIGHT_SOURCE_DIR) + "/tests/reference/settling_fixture.json";
}

}  // namespace

TEST_CASE("step settling time between samples agrees with the scipy fine-grid reference", "[fixture][settling]") {
  const json doc = read_json_file(settling_fixture_path());
  REQUIRE(doc.at("loops").size() >= 12);
  int above = 0, below = 0;
  for (const json& loop : doc.at("loops")) {
    const std::string name = loop.at("name");
    INFO("loop " << name);
    const Plant plant = parse_plant_object(loop.at("plant"), "$.plant", false);
    const Zpk comp = parse_compensator(loop.at("compensator"), "$.compensator");
    RequirementSet req;
    req.settling_band = loop.at("band_pct").get<double>() / 100.0;
    req.items = {{MetricId::SettlingTime, Sense::AtMost, 1.0}};
    const double want = loop.at("expected").at("settling_time_s").get<double>();
    if (loop.at("expected").contains("largest_after_exit_over_band")) {
      // The fixture holds both sides of each touching value: the last peak just above the band
      // (counted) and just inside it (not counted).
      const double before = loop.at("expected").at("peak_before_exit_over_band").get<double>();
      (before < 1.01 ? above : below) += 1;
    }
    for (bool screening : {false, true}) {
      INFO((screening ? "screening path" : "full-accuracy path"));
      AnalysisOptions opt;
      EvaluationNeeds needs;
      if (screening) {
        opt = AnalysisOptions::Screening(opt);
        needs.everything = false;
      }
      const LoopEvaluation e = evaluate_loop(comp, plant, req, Region{}, opt, needs);
      REQUIRE(e.stable);
      REQUIRE(e.step);
      CHECK(std::abs(e.step->final_value - loop.at("expected").at("final_value").get<double>()) <= 1e-9);
      REQUIRE(e.step->settling_time_s);
      CHECK(std::abs(*e.step->settling_time_s - want) <= 1e-3 * want);
    }
  }
  CHECK(above >= 6);
  CHECK(below >= 6);
}

TEST_CASE("check: the two-mass drive that settles at 1.5207 s misses a 1.5 s settling requirement",
          "[jobs][check][settling]") {
  // Issue 11: scipy.signal.step on 2,000,001 points says 1.5207 s (a -2.30 +- j42.87 mode with a
  // 4 % share lifts |y - y_f| to 2.0011 % at 1.5191 s, between samples); `check` said 1.442 s, met.
  const json doc = {
      {"plant", {{"numerator", {400.0, 1000.0, 250000.0}}, {"denominator", {1.0, 2.4, 1600.0, 0.0, 0.0}}}},
      {"requirements", {{"settling_time_s", {{"max", 1.5}, {"band_pct", 2}}}}},
      {"current",
       {{"numerator", {1.0246578220588987, 7.305799380036161, 12.756228732213696}},
        {"denominator", {1.0, 25.041567350128528, 155.91944844706194}}}}};
  const Spec spec = parse_spec(doc);
  const CheckReport r = run_check(spec, *spec.current, CheckOptions{});
  REQUIRE(r.evaluation.outcomes.size() == 1);
  const RequirementOutcome& o = r.evaluation.outcomes[0];
  REQUIRE(o.worst.value);
  CHECK(*o.worst.value == Approx(1.520728).epsilon(1e-3));
  CHECK_FALSE(o.met);
  CHECK_FALSE(r.evaluation.all_met);
}
