#include <catch2/catch.hpp>

#include "polewright/jobs/design.hpp"
#include "polewright/outputs/design_output.hpp"
#include "polewright/requirements/spec_parse.hpp"

using namespace pw;
using nlohmann::json;

namespace {
Spec spec_of(const char* text) { return parse_spec(json::parse(text)); }
}  // namespace

TEST_CASE("design finds a lead for 4/(s(s+2)) with no more effort than the published one", "[jobs][design]") {
  // Published lead 4.68 (s + 2.9)/(s + 5.4) (textbook worked example, from memory) meets
  // zeta >= 0.48 and wn >= 3.9 with a peak effort of 4.68.
  const Spec spec = spec_of(R"({"plant": {"gain": 4, "poles": [0, -2]},
    "requirements": {"damping_ratio": {"min": 0.48}, "natural_frequency_rad_s": {"min": 3.9}},
    "stages": {"lead": 1, "frequency_range_rad_s": [0.1, 100]}})");
  DesignOptions o = DesignOptions::FromSpec(spec);
  o.threads = 1;
  const DesignReport r = run_design(spec, o);
  REQUIRE(r.met());
  const Candidate& best = r.candidates.front();
  CHECK(best.meets);
  CHECK(best.verification.all_met);  // meets is the full-accuracy verdict
  CHECK(*best.worst[static_cast<size_t>(MetricId::PeakEffort)].value <= 4.68);
  for (size_t i = 1; i < r.candidates.size(); ++i) {
    CHECK(r.candidates[i].rank == static_cast<int>(i) + 1);
    if (r.candidates[i].meets) CHECK(r.candidates[i - 1].meets);
  }
  CHECK(r.summary.evaluations > 0);
}

TEST_CASE("a right-half-plane zero against a fast settling limit ends not met, naming the zero", "[jobs][design]") {
  const Spec spec = spec_of(R"({"plant": {"gain": -1, "zeros": [2], "poles": [-1, -3]},
    "requirements": {"settling_time_s": {"max": 0.2}, "overshoot_pct": {"max": 10}},
    "stages": {"lead": 1, "integrator": true, "frequency_range_rad_s": [0.01, 1000]}})");
  DesignOptions o = DesignOptions::FromSpec(spec);
  o.threads = 1;
  const DesignReport r = run_design(spec, o);
  CHECK_FALSE(r.met());
  bool named = false;
  for (const PlantLimit& l : r.limits) named = named || (l.kind == "rhp_zero" && l.binding && l.requirement == "settling_time_s");
  CHECK(named);
  REQUIRE_FALSE(r.binding.empty());
  CHECK(r.binding.front().requirement.metric == MetricId::SettlingTime);
  REQUIRE(r.binding.front().best_value.value);
  CHECK(*r.binding.front().best_value.value > 0.2);  // the best reachable settling is far slower
  const json j = design_report_json(r);
  CHECK(j.at("status") == "not_met");
  CHECK(j.at("limits").at(0).at("kind") == "rhp_zero");
}

TEST_CASE("design output is byte-identical on 1 and 2 threads", "[jobs][design]") {
  const Spec spec = parse_spec(read_json_file(std::string(POLEWRIGHT_SOURCE_DIR) + "/specs/magnetic-bearing.json"));
  std::string out[2];
  for (int t = 1; t <= 2; ++t) {
    DesignOptions o = DesignOptions::FromSpec(spec);
    o.threads = t;
    out[t - 1] = design_report_json(run_design(spec, o), false).dump(1);
  }
  CHECK(out[0] == out[1]);
  std::string err;
  DesignOptions bad;
  bad.keep = 0;
  CHECK_FALSE(bad.IsValid(&err));
}
