// The sweep job: a job (design, check or retune) at every point of a sweep file, in parallel over
// points (each point on one thread, with a seed derived from the sweep seed and its index), with
// results delivered in point order so that what is written does not depend on the thread count.
#pragma once

#include <atomic>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "polewright/jobs/design.hpp"
#include "polewright/requirements/sweep_parse.hpp"

namespace pw {

// How a point ended. BadPoint: its spec is invalid, or it hit a per-point limit (the message says
// which); Error: an unexpected failure.
enum class PointStatus { Met, NotMet, BadPoint, Error };
const char* point_status_name(PointStatus s);  // "met", "not_met", "bad_point", "error" (the points file)
std::optional<PointStatus> point_status_from_name(const std::string& name);  // the inverse; nullopt for others

struct SweepPointResult {
  long long index = 0;
  std::vector<double> values;      // parameter values, in the sweep file's parameter order
  PointStatus status = PointStatus::Error;
  std::string message;             // why, for bad_point and error
  std::optional<Candidate> top;    // the top candidate (design, retune) or the checked compensator
  std::string structure;           // "lead+notch", "current", "current + lead/lag"
  std::optional<double> change_decades;  // retune: the top candidate's change
  double seconds = 0.0;            // wall time of the point (kept out of the deterministic outputs)
};

struct SweepRunOptions {
  int threads = 0;                 // 0 = all cores; results do not depend on it
  std::vector<long long> todo;     // the points to run, ascending
  // When set: no new point starts, the points in flight are cancelled (their searches stop at the
  // next task or evaluation) and are not delivered: a resumed run does them again.
  const std::atomic<bool>* stop = nullptr;
  double poll_s = 0.02;            // how often the watchdog looks at the stop flag and the clock
  bool IsValid(std::string* error) const;
};

struct SweepRunSummary {
  long long ran = 0;               // points delivered
  long long abandoned = 0;         // points cancelled by the stop flag (not delivered)
  long long time_limited = 0;      // points stopped by the per-point wall-clock cap (delivered as bad_point)
  bool stopped = false;            // the stop flag ended the run before the last point
  double seconds = 0.0;
};

// Runs one point (never throws for a bad point: it becomes status bad_point). `cancel` stops its
// search early (the caller decides what a cancelled point means); the per-point evaluation limit
// of the sweep file applies here.
SweepPointResult run_sweep_point(const SweepFile& file, const SweepPoints& points, long long index,
                                 const std::atomic<bool>* cancel = nullptr);

// Runs the points of options.todo; `deliver` is called on the calling thread's behalf (serialised)
// for each finished point, in todo order: a point is delivered only after all points before it.
SweepRunSummary run_sweep(const SweepFile& file, const SweepRunOptions& options,
                          const std::function<void(const SweepPointResult&)>& deliver);

// The indices of shard k of n (1 <= k <= n): every n-th point starting at k - 1.
std::vector<long long> shard_indices(long long total, int k, int n);

}  // namespace pw
