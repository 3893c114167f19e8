#include <catch2/catch.hpp>

#include <chrono>
#include <thread>

#include "polewright/jobs/check.hpp"
#include "polewright/requirements/spec_parse.hpp"
#include "polewright/jobs/sweep.hpp"

using namespace pw;
using nlohmann::json;

namespace {
// A heated plate (our own demo): gain k over a first-order lag tau, checked with a PI in service.
SweepFile small_sweep(const char* job = "check") {
  json j = json::parse(R"({
    "base": {"plant": {"numerator": ["k"], "denominator": ["tau", 1]},
             "requirements": {"overshoot_pct": {"max": 20}, "steady_state_error": {"max": 0, "input": "step"}},
             "current": {"gain": 0.5, "zeros": [-0.2], "poles": [0]},
             "stages": {"lag": 1, "integrator": true, "frequency_range_rad_s": [0.001, 10]}},
    "parameters": {"k": {"values": [0.5, 2, 8]}, "tau": {"from": 5, "to": 50, "count": 3, "scale": "log"}}})");
  j["job"] = job;
  return parse_sweep(j);
}
}  // namespace

TEST_CASE("shards are disjoint and cover every point", "[jobs][sweep]") {
  std::vector<int> seen(10, 0);
  for (int k = 1; k <= 3; ++k)
    for (long long i : shard_indices(10, k, 3)) ++seen[static_cast<size_t>(i)];
  for (int s : seen) CHECK(s == 1);
  CHECK(shard_indices(10, 1, 3) == std::vector<long long>{0, 3, 6, 9});
  CHECK(shard_indices(10, 4, 3).empty());
}

TEST_CASE("points are delivered in order on any thread count", "[jobs][sweep]") {
  const SweepFile f = small_sweep();
  for (int threads : {1, 2, 3}) {
    SweepRunOptions o;
    o.threads = threads;
    for (long long i = 0; i < f.point_count(); ++i) o.todo.push_back(i);
    std::vector<long long> order;
    const SweepRunSummary s = run_sweep(f, o, [&](const SweepPointResult& r) { order.push_back(r.index); });
    CHECK(s.ran == 9);
    CHECK_FALSE(s.stopped);
    CHECK(order == o.todo);
  }
}

TEST_CASE("a check point is met or not by the current compensator's verdict", "[jobs][sweep]") {
  const SweepFile f = small_sweep();
  const SweepPoints pts(f);
  const SweepPointResult r = run_sweep_point(f, pts, 0);
  REQUIRE(r.top);
  CHECK(r.structure == "current");
  CHECK(r.status == (r.top->meets ? PointStatus::Met : PointStatus::NotMet));
  CHECK(r.values == std::vector<double>{0.5, 5.0});
}

TEST_CASE("a stop request ends the run after the points in flight", "[jobs][sweep]") {
  const SweepFile f = small_sweep();
  std::atomic<bool> stop{false};
  SweepRunOptions o;
  o.threads = 1;
  o.stop = &stop;
  for (long long i = 0; i < f.point_count(); ++i) o.todo.push_back(i);
  const SweepRunSummary s = run_sweep(f, o, [&](const SweepPointResult& r) {
    if (r.index == 2) stop = true;
  });
  CHECK(s.stopped);
  CHECK(s.ran == 3);
}

TEST_CASE("a point whose spec is invalid is reported, not fatal", "[jobs][sweep]") {
  json j = small_sweep().document;
  j["parameters"]["tau"] = {{"values", {5, 0}}};  // tau = 0: the plant loses its pole
  j["base"]["plant"]["denominator"] = {"tau", "tau"};
  const SweepFile f = parse_sweep(j);
  const SweepPoints pts(f);
  const SweepPointResult bad = run_sweep_point(f, pts, 1);
  CHECK(bad.status == PointStatus::BadPoint);
  CHECK_THAT(bad.message, Catch::StartsWith("$.plant.denominator"));
  CHECK_FALSE(bad.top);
}

TEST_CASE("retune and design points carry their top candidate", "[jobs][sweep]") {
  for (const char* job : {"retune", "design"}) {
    const SweepFile f = small_sweep(job);
    const SweepPoints pts(f);
    const SweepPointResult r = run_sweep_point(f, pts, 4);
    INFO(job << ": " << r.message);
    REQUIRE(r.top);
    CHECK((r.status == PointStatus::Met || r.status == PointStatus::NotMet));
    CHECK(r.status == (r.top->meets ? PointStatus::Met : PointStatus::NotMet));
    if (std::string(job) == "retune") {
      CHECK(r.structure.rfind("current", 0) == 0);
      REQUIRE(r.change_decades);
      CHECK(*r.change_decades >= 0.0);
    } else {
      CHECK_FALSE(r.change_decades);
    }
    // The same point twice gives the same answer (its seed comes from the sweep seed and index).
    const SweepPointResult again = run_sweep_point(f, pts, 4);
    CHECK(again.top->compensator.gain == r.top->compensator.gain);
  }
}

TEST_CASE("the per-point evaluation limit records a cut search as a bad point (deterministic)", "[jobs][sweep]") {
  // Zero ramp error needs a type-2 loop (final value theorem, from memory); one integrator on this
  // type-0 plant cannot give it, so no search meets the requirement: a full search is not_met, a
  // search cut by the limit is a bad point.
  json j = small_sweep("design").document;
  j["base"]["requirements"]["steady_state_error"]["input"] = "ramp";
  j["point_limit"] = {{"evaluations", 1}};
  const SweepFile f = parse_sweep(j);
  const SweepPoints pts(f);
  for (int run = 0; run < 2; ++run) {
    const SweepPointResult r = run_sweep_point(f, pts, 4);
    CHECK(r.status == PointStatus::BadPoint);
    CHECK_THAT(r.message, Catch::StartsWith("stopped by the per-point evaluation limit (point_limit.evaluations = 1)"));
  }
  // Without the limit the same point is judged.
  j.erase("point_limit");
  const SweepFile free = parse_sweep(j);
  const SweepPoints fp(free);
  const SweepPointResult r = run_sweep_point(free, fp, 4);
  CHECK(r.status == PointStatus::NotMet);
  CHECK(r.message.empty());
}

TEST_CASE("the per-point wall-clock cap stops a long point and says so", "[jobs][sweep]") {
  json j = small_sweep("design").document;
  j["point_limit"] = {{"seconds", 1e-6}};
  const SweepFile f = parse_sweep(j);
  SweepRunOptions o;
  o.threads = 2;
  o.poll_s = 0.001;
  for (long long i = 0; i < 3; ++i) o.todo.push_back(i);
  std::vector<SweepPointResult> got;
  const SweepRunSummary s = run_sweep(f, o, [&](const SweepPointResult& r) { got.push_back(r); });
  REQUIRE(got.size() == 3);
  CHECK(s.time_limited == 3);
  for (const SweepPointResult& r : got) {
    CHECK(r.status == PointStatus::BadPoint);
    CHECK_THAT(r.message, Catch::StartsWith("stopped by the per-point time limit (point_limit.seconds = 1e-06; wall clock"));
    CHECK_FALSE(r.top);
  }
  CHECK(std::string(point_status_name(PointStatus::BadPoint)) == "bad_point");
  CHECK(std::string(point_status_name(PointStatus::NotMet)) == "not_met");
}

TEST_CASE("point status names: the four of the points file (docs/manual.md), read back to the same status", "[jobs][sweep]") {
  const std::pair<PointStatus, const char*> documented[] = {
      {PointStatus::Met, "met"}, {PointStatus::NotMet, "not_met"}, {PointStatus::BadPoint, "bad_point"}, {PointStatus::Error, "error"}};
  for (const auto& [status, name] : documented) {
    CHECK(std::string(point_status_name(status)) == name);
    CHECK(point_status_from_name(name) == status);
  }
  CHECK_FALSE(point_status_from_name("met "));
  CHECK_FALSE(point_status_from_name("bad point"));
  CHECK_FALSE(point_status_from_name(""));
}

TEST_CASE("a stop request cancels the points in flight; they are not delivered", "[jobs][sweep]") {
  const SweepFile f = small_sweep("design");
  std::atomic<bool> stop{false};
  SweepRunOptions o;
  o.threads = 2;
  o.poll_s = 0.001;
  o.stop = &stop;
  for (long long i = 0; i < f.point_count(); ++i) o.todo.push_back(i);
  std::vector<long long> delivered;
  // Raised as the first point starts: both workers are inside a design search.
  std::thread raise([&] {
    std::this_thread::sleep_for(std::chrono::milliseconds(5));
    stop = true;
  });
  const SweepRunSummary s = run_sweep(f, o, [&](const SweepPointResult& r) { delivered.push_back(r.index); });
  raise.join();
  CHECK(s.stopped);
  CHECK(s.abandoned >= 1);
  CHECK(s.ran == static_cast<long long>(delivered.size()));
  CHECK(s.ran + s.abandoned <= 2 + static_cast<long long>(delivered.size()));
  for (size_t i = 0; i < delivered.size(); ++i) CHECK(delivered[i] == static_cast<long long>(i));  // an in-order prefix
}

TEST_CASE("a design point with an implementation designs on the sampled loop; the sample time can vary",
          "[jobs][sweep][implementation]") {
  // 1 / (s (s + 1)) with the implementation's sample time a parameter: at T = 0.5 s a zero-order hold
  // makes K = 1 overshoot beyond 20 % (tests/jobs/test_check.cpp), so a point must be designed on its
  // sampled loop; `method` stays a word in the base (no expression).
  const SweepFile f = parse_sweep(json::parse(R"({
    "base": {"plant": {"numerator": [1], "denominator": [1, 1, 0]},
             "requirements": {"overshoot_pct": {"max": 20}, "phase_margin_deg": {"min": 30}, "settling_time_s": {"max": 12}},
             "stages": {"lead": 1, "frequency_range_rad_s": [0.05, 50]},
             "search": {"keep": 1},
             "implementation": {"sample_time_s": "T", "method": "zoh"}},
    "parameters": {"T": {"values": [0.5, 0.05]}},
    "job": "design"})"));
  const SweepPoints pts(f);
  REQUIRE(pts.size() == 2);
  for (long long i = 0; i < pts.size(); ++i) {
    const SweepPointResult r = run_sweep_point(f, pts, i);
    INFO("point " << i << ": " << r.message);
    REQUIRE(r.top);
    REQUIRE(r.top->continuous);  // verified on the sampled loop, the continuous figures beside
    const Spec spec = parse_spec(point_spec(f, pts.at(i), 1));
    REQUIRE(spec.implementation);
    CHECK(spec.implementation->sample_time_s == pts.at(i)[0]);
    const CheckReport k = run_check(spec, r.top->compensator);
    REQUIRE(k.sampled);
    CHECK(k.evaluation.all_met == r.top->meets);
    CHECK(r.status == (r.top->meets ? PointStatus::Met : PointStatus::NotMet));
  }
}
