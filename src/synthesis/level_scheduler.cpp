#include "polewright/synthesis/level_scheduler.hpp"

#include <condition_variable>
#include <memory>
#include <mutex>
#include <set>

#include "polewright/synthesis/parallel.hpp"

namespace pw {

namespace {

struct Task {
  int level = 0;
  size_t job = 0;
  int kind = 0;  // 0 prepare, 1 work
  size_t index = 0;
  bool operator<(const Task& o) const {
    if (level != o.level) return level < o.level;
    if (job != o.job) return job < o.job;
    if (kind != o.kind) return kind < o.kind;
    return index < o.index;
  }
};

}  // namespace

LevelRun run_levels(const LevelJobs& jobs, int threads) {
  const size_t n = jobs.levels.size();
  LevelRun out;
  out.done.assign(n, false);
  std::unique_ptr<std::atomic<bool>[]> cancel(new std::atomic<bool>[n]);
  for (size_t i = 0; i < n; ++i) cancel[i] = false;
  std::mutex mutex;
  std::condition_variable wake;
  size_t resolved = 0;  // jobs [0, resolved) belong to levels already judged
  std::vector<long long> pending(n, -1);
  std::set<Task> queue;
  for (size_t i = 0; i < n; ++i) queue.insert({jobs.levels[i], i, 0, 0});
  int running = 0;
  // Applies the stopping rule to every level that is complete, in order (under the mutex).
  auto judge = [&] {
    while (resolved < n && out.stop_level == std::numeric_limits<int>::max()) {
      size_t end = resolved;
      while (end < n && jobs.levels[end] == jobs.levels[resolved]) ++end;
      for (size_t i = resolved; i < end; ++i)
        if (!out.done[i]) return;
      const bool stop = jobs.level_done(resolved, end);
      const int level = jobs.levels[resolved];
      resolved = end;
      if (stop) {
        out.stop_level = level;
        for (size_t i = resolved; i < n; ++i) cancel[i] = true;  // speculative work past the stop
      }
    }
  };
  parallel_for(static_cast<size_t>(std::max(1, threads)), threads, [&](size_t) {
    std::unique_lock<std::mutex> lock(mutex);
    for (;;) {
      while (!queue.empty() && queue.begin()->level > out.stop_level) queue.erase(queue.begin());
      if (queue.empty()) {
        if (running == 0) {
          wake.notify_all();
          return;
        }
        wake.wait(lock);
        continue;
      }
      const Task task = *queue.begin();
      queue.erase(queue.begin());
      ++running;
      lock.unlock();
      const bool late = jobs.out_of_time && jobs.out_of_time();
      size_t made = 0;
      if (!late) {
        if (task.kind == 0) made = jobs.prepare(task.job, cancel[task.job]);
        else jobs.run(task.job, task.index, cancel[task.job]);
      }
      lock.lock();
      --running;
      if (late) {
        out.out_of_time = true;
      } else {
        if (task.kind == 0) {
          pending[task.job] = static_cast<long long>(made);
          for (size_t k = 0; k < made; ++k) queue.insert({task.level, task.job, 1, k});
        } else {
          --pending[task.job];
        }
        if (pending[task.job] == 0) {
          out.done[task.job] = true;
          if (jobs.job_done) jobs.job_done(task.job);
          judge();
        }
      }
      wake.notify_all();
    }
  });
  return out;
}

}  // namespace pw
