// Compares the analysis with an independent numpy/scipy computation of the same loops
// (tests/reference/make_fixtures.py, Debian python3-scipy). Tolerances as stated in issue 2:
// overshoot +-0.2 points, times +-1 %, margins +-0.3 deg and +-0.2 dB, poles 1e-8 relative;
// other frequencies, gains and errors +-1 % relative.
#include <catch2/catch.hpp>

#include <cmath>
#include <cstdlib>
#include <fstream>

#include "polewright/requirements/evaluate.hpp"
#include "polewright/requirements/spec_parse.hpp"

using namespace pw;
using nlohmann::json;

namespace {

std::string fixture_path() {
  if (const char* p = std::getenv("POLEWRIGHT_FIXTURE")) return p;
  return std::string(POLEWRIGHT_SOURCE_DIR) + "/tests/reference/loops_fixture.json";
}

void near_rel(const char* what, const json& expected, const MetricValue& got, double rel) {
  INFO(what);
  if (expected.is_null()) {
    CHECK(!got.value);
    return;
  }
  REQUIRE(got.value);
  const double e = expected.get<double>();
  CHECK(std::abs(*got.value - e) <= rel * std::max(std::abs(e), 1e-12));
}

void near_abs(const char* what, const json& expected, const std::optional<double>& got, double tol) {
  INFO(what);
  if (expected.is_null()) {
    CHECK(!got);
    return;
  }
  REQUIRE(got);
  CHECK(std::abs(*got - expected.get<double>()) <= tol);
}

}  // namespace

TEST_CASE("analysis agrees with the numpy/scipy reference fixture", "[fixture]") {
  const json doc = read_json_file(fixture_path());
  REQUIRE(doc.at("loops").size() >= 12);
  for (const json& loop : doc.at("loops")) {
    const std::string name = loop.at("name");
    INFO("loop " << name);
    const Plant plant = parse_plant_object(loop.at("plant"), "$.plant", false);
    const Zpk comp = parse_compensator(loop.at("compensator"), "$.compensator");
    AnalysisOptions opt;
    opt.pade_order = loop.at("pade_order");
    RequirementSet req;
    req.settling_band = loop.at("band_pct").get<double>() / 100.0;
    const std::string in = loop.at("ss_input");
    req.error_signal = in == "ramp" ? TestSignal::Ramp : (in == "parabola" ? TestSignal::Parabola : TestSignal::Step);
    opt.step.band = req.settling_band;
    const LoopEvaluation e = evaluate_loop(comp, plant, req, Region{}, opt);
    const json& x = loop.at("expected");
    REQUIRE(e.stable);

    // Closed-loop poles: every expected pole has a computed partner within 1e-8 relative.
    const json& poles = x.at("closed_loop_poles");
    REQUIRE(poles.size() == e.poles.poles.size());
    for (const json& p : poles) {
      const Complex want(p[0].get<double>(), p[1].get<double>());
      double best = INFINITY;
      for (const PoleInfo& pi : e.poles.poles) best = std::min(best, std::abs(pi.pole - want));
      INFO("pole " << want);
      CHECK(best <= 1e-8 * std::abs(want));
    }

    const auto& v = e.values;
    auto val = [&](MetricId id) -> const MetricValue& { return v[static_cast<size_t>(id)]; };
    REQUIRE(e.step);
    CHECK(std::abs(e.step->final_value - x.at("final_value").get<double>()) <= 1e-9);
    near_abs("overshoot_pct", x.at("overshoot_pct"), val(MetricId::Overshoot).value, 0.2);
    near_rel("rise_time_s", x.at("rise_time_s"), val(MetricId::RiseTime), 0.01);
    near_rel("settling_time_s", x.at("settling_time_s"), val(MetricId::SettlingTime), 0.01);
    near_rel("peak_effort", x.at("peak_effort"), val(MetricId::PeakEffort), 0.01);
    if (x.at("overshoot_pct").get<double>() > 1.0) {
      MetricValue pt;
      pt.value = e.step->peak_time_s;
      near_rel("peak_time_s", x.at("peak_time_s"), pt, 0.01);
    }
    const json& sse = x.at("steady_state_error");
    if (sse.is_null()) CHECK(val(MetricId::SteadyStateError).infinite);
    else CHECK(std::abs(*val(MetricId::SteadyStateError).value - sse.get<double>()) <= 1e-9 + 0.01 * sse.get<double>());

    near_abs("phase_margin_deg", x.at("phase_margin_deg"), val(MetricId::PhaseMargin).value, 0.3);
    near_abs("gain_margin_db", x.at("gain_margin_db"), val(MetricId::GainMargin).value, 0.2);
    near_abs("gain_increase_db", x.at("gain_increase_db"), e.frequency.gain_increase_db, 0.2);
    near_abs("gain_reduction_db", x.at("gain_reduction_db"), e.frequency.gain_reduction_db, 0.2);
    near_rel("crossover_rad_s", x.at("crossover_rad_s"), val(MetricId::Crossover), 0.01);
    near_rel("bandwidth_rad_s", x.at("bandwidth_rad_s"), val(MetricId::Bandwidth), 0.01);
    near_rel("peak_sensitivity", x.at("peak_sensitivity"), val(MetricId::PeakSensitivity), 0.01);
  }
}
