// A deterministic, speculative scheduler of jobs grouped in levels (design: one job per structure,
// a level per stage count). Every job is one preparation task that says how many work tasks follow
// (its local runs). Tasks are handed out lowest (level, job, kind, task) first from a shared queue,
// so a later level may start before an earlier one ends; the stopping rule is applied to whole
// levels, in order, and looks only at their results, so what is used never depends on the thread
// count or on timing. Tasks of levels past the stop are dropped, running ones are told to cancel.
#pragma once

#include <atomic>
#include <cstddef>
#include <functional>
#include <limits>
#include <vector>

namespace pw {

struct LevelJobs {
  std::vector<int> levels;  // level of each job, non-decreasing
  // Prepares job `job` and returns its number of work tasks.
  std::function<size_t(size_t job, const std::atomic<bool>& cancel)> prepare;
  // Runs work task `task` of job `job`.
  std::function<void(size_t job, size_t task, const std::atomic<bool>& cancel)> run;
  // Called (under the scheduler's lock) when a job's last task has finished.
  std::function<void(size_t job)> job_done;
  // Called in level order (under the lock) once every job of a level, [first, end), is done;
  // returns true to stop after this level.
  std::function<bool(size_t first, size_t end)> level_done;
  // Checked before each task; true skips it (its job then never completes) and marks the run late.
  std::function<bool()> out_of_time;
};

struct LevelRun {
  std::vector<bool> done;  // per job: every task ran
  int stop_level = std::numeric_limits<int>::max();  // the level after which the rule stopped
  bool out_of_time = false;
};

LevelRun run_levels(const LevelJobs& jobs, int threads);

}  // namespace pw
