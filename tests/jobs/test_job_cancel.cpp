// DesignOptions::cancel and RetuneOptions::cancel: a flag set from another thread stops the search
// (the Python module sets it on KeyboardInterrupt); a flag that stays false changes nothing.
#include <catch2/catch.hpp>

#include <atomic>
#include <chrono>
#include <optional>
#include <thread>

#include "polewright/jobs/design.hpp"
#include "polewright/jobs/retune.hpp"
#include "polewright/outputs/design_output.hpp"
#include "polewright/outputs/retune_output.hpp"
#include "polewright/requirements/spec_parse.hpp"

using namespace pw;
using nlohmann::json;

namespace {

// A kiln exhaust fan (our own scenario) with eight impeller variants and a settling limit out of
// reach under the effort limit: uninterrupted, both searches run every structure and end not met
// with candidates to show (measured through the CLI: 100 design candidates, 12 retune candidates).
Spec long_spec() {
  json j = json::parse(R"({"plant": {"numerator": [40], "denominator": [0.05, 1.2, 4], "variants": []},
    "requirements": {"overshoot_pct": {"max": 10}, "settling_time_s": {"max": 0.05},
                     "phase_margin_deg": {"min": 45}, "peak_effort": {"max": 6}},
    "stages": {"lead": 2, "lag": 2, "notch": 1, "integrator": "auto", "frequency_range_rad_s": [0.05, 300]},
    "current": {"gain": 0.6, "zeros": [-3], "poles": [0]},
    "search": {"seed": 1, "keep": 100, "max_evaluations": 100000000, "time_limit_s": 60}})");
  for (int k = 0; k < 8; ++k)
    j["plant"]["variants"].push_back({{"numerator", {40.0 * (0.8 + 0.05 * k)}},
                                      {"denominator", {0.05 * (0.6 + 0.1 * k), 1.2, 4.0}}});
  return parse_spec(j);
}

// 4/(s(s+2)) with a lead to find, and a current PI-free gain that misses (quick searches).
Spec quick_spec() {
  return parse_spec(json::parse(R"({"plant": {"gain": 4, "poles": [0, -2]},
    "requirements": {"damping_ratio": {"min": 0.48}, "natural_frequency_rad_s": {"min": 3.9}},
    "stages": {"lead": 1, "frequency_range_rad_s": [0.1, 100]},
    "current": {"gain": 1}})"));
}

// Sets `flag` after `ms` milliseconds on its own thread.
struct DelayedSet {
  std::thread t;
  DelayedSet(std::atomic<bool>& flag, int ms)
      : t([&flag, ms] {
          std::this_thread::sleep_for(std::chrono::milliseconds(ms));
          flag = true;
        }) {}
  ~DelayedSet() { t.join(); }
};

}  // namespace

TEST_CASE("a cancel flag that stays false leaves the design and the retune unchanged", "[jobs][design][retune][cancel]") {
  const Spec spec = quick_spec();
  std::atomic<bool> never{false};
  DesignOptions d = DesignOptions::FromSpec(spec);
  d.threads = 2;
  const std::string plain = design_report_json(run_design(spec, d), false).dump();
  d.cancel = &never;
  CHECK(design_report_json(run_design(spec, d), false).dump() == plain);
  RetuneOptions r = RetuneOptions::FromSpec(spec);
  r.threads = 2;
  const std::string rplain = retune_report_json(run_retune(spec, r), false).dump();
  r.cancel = &never;
  CHECK(retune_report_json(run_retune(spec, r), false).dump() == rplain);
}

TEST_CASE("a design stopped before it starts or while it runs returns no candidates", "[jobs][design][cancel]") {
  const Spec spec = long_spec();
  for (int delay_ms : {-1, 100}) {
    std::atomic<bool> stop{delay_ms < 0};
    DesignOptions o = DesignOptions::FromSpec(spec);
    o.threads = 2;
    o.cancel = &stop;
    DesignReport r;
    {
      std::optional<DelayedSet> later;
      if (delay_ms >= 0) later.emplace(stop, delay_ms);
      r = run_design(spec, o);
    }
    INFO("delay " << delay_ms << " ms");
    CHECK(r.candidates.empty());
    CHECK(r.binding.empty());
    CHECK_FALSE(r.summary.time_stop);
  }
}

TEST_CASE("a retune stopped before it starts or while it runs returns no candidates", "[jobs][retune][cancel]") {
  const Spec spec = long_spec();
  for (int delay_ms : {-1, 100}) {
    std::atomic<bool> stop{delay_ms < 0};
    RetuneOptions o = RetuneOptions::FromSpec(spec);
    o.threads = 2;
    o.allow_new_stages = true;
    o.cancel = &stop;
    RetuneReport r;
    {
      std::optional<DelayedSet> later;
      if (delay_ms >= 0) later.emplace(stop, delay_ms);
      r = run_retune(spec, o);
    }
    INFO("delay " << delay_ms << " ms");
    CHECK_FALSE(r.already_met);
    CHECK(r.candidates.empty());
  }
}
