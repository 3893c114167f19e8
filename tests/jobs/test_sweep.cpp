#include <catch2/catch.hpp>

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
  CHECK(r.status == (r.top->meets ? "met" : "not_met"));
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
  CHECK(bad.status == "bad_point");
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
    CHECK((r.status == "met" || r.status == "not_met"));
    CHECK(r.status == (r.top->meets ? "met" : "not_met"));
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
