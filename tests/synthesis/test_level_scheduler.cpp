#include <catch2/catch.hpp>

#include <mutex>
#include <vector>

#include "polewright/synthesis/level_scheduler.hpp"

using namespace pw;

namespace {
// Six jobs in three levels (0, 0, 1, 1, 2, 2), job j with j + 1 tasks; the rule stops after the
// first level whose jobs' tasks sum to at least `enough`.
struct Outcome {
  std::vector<bool> done;
  int stop_level;
  std::vector<int> judged;
};
Outcome run(int threads, int enough) {
  std::vector<int> sums(6, 0);
  std::vector<int> judged;
  int total = 0;
  std::mutex m;
  LevelJobs lj;
  lj.levels = {0, 0, 1, 1, 2, 2};
  lj.prepare = [](size_t j, const std::atomic<bool>&) { return j + 1; };
  lj.run = [&](size_t j, size_t, const std::atomic<bool>&) {
    std::lock_guard<std::mutex> g(m);
    sums[j] += 1;
  };
  lj.level_done = [&](size_t first, size_t end) {
    for (size_t j = first; j < end; ++j) total += sums[j];
    judged.push_back(static_cast<int>(first));
    return total >= enough;
  };
  const LevelRun r = run_levels(lj, threads);
  return {r.done, r.stop_level, judged};
}
}  // namespace

TEST_CASE("the level scheduler judges whole levels in order, the same on any thread count", "[synthesis][level_scheduler]") {
  // Level 0 has 1 + 2 = 3 tasks, level 1 adds 3 + 4: a threshold of 5 stops after level 1.
  const Outcome one = run(1, 5);
  CHECK(one.stop_level == 1);
  CHECK(one.judged == std::vector<int>{0, 2});
  for (size_t j = 0; j < 4; ++j) CHECK(one.done[j]);
  for (int t : {2, 4}) {
    const Outcome many = run(t, 5);
    CHECK(many.stop_level == one.stop_level);
    CHECK(many.judged == one.judged);
    for (size_t j = 0; j < 4; ++j) CHECK(many.done[j]);
  }
  // No stop: every level judged, every job done.
  const Outcome all = run(2, 1000);
  CHECK(all.judged == std::vector<int>{0, 2, 4});
  CHECK(all.stop_level == std::numeric_limits<int>::max());
  for (bool d : all.done) CHECK(d);
}

TEST_CASE("the level scheduler skips tasks once out of time", "[synthesis][level_scheduler]") {
  LevelJobs lj;
  lj.levels = {0, 1};
  int prepared = 0;
  lj.prepare = [&](size_t, const std::atomic<bool>&) { ++prepared; return size_t{2}; };
  lj.run = [](size_t, size_t, const std::atomic<bool>&) {};
  lj.level_done = [](size_t, size_t) { return false; };
  lj.out_of_time = [] { return true; };
  const LevelRun r = run_levels(lj, 1);
  CHECK(r.out_of_time);
  CHECK(prepared == 0);
  CHECK_FALSE(r.done[0]);
}
