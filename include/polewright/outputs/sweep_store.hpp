// A sweep's directory on disk:
//   sweep.json    header: the sweep file, the tool version, the shard, the start time (written once)
//   points.jsonl  one JSON line per point, appended in point order, synced in small batches
//   timings.jsonl one line per point with its wall time (kept out of the deterministic files)
//   summary.csv   one row per point (index, parameters, status, structure, metrics, message),
//                 rebuilt from points.jsonl at the end of every run
//   sweep.lock    held (flock) by the run writing the directory: its pid, host and start time
// A resumed run keeps every complete, valid line of this sweep and shard, drops and reports the rest
// (a torn last line, corrupt lines, indices outside the shard, identical repeats), so no point is
// lost or repeated.
#pragma once

#include <cstdio>
#include <functional>
#include <set>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "polewright/jobs/sweep.hpp"

namespace pw {

struct Shard {
  int k = 1, n = 1;
};

// The JSON line of one point (no timing), without the newline.
std::string point_line(const SweepFile& f, const SweepPointResult& r);

// The valid lines of a points file. A line that is not a point (bad JSON, no integer index or
// status) is skipped and counted, the lines after it are kept; a last line without its newline
// (cut short by a crash) is torn. good_bytes: the length before the torn line.
struct PointsScan {
  std::vector<nlohmann::json> points;
  size_t good_bytes = 0;
  bool torn = false;
  std::vector<long long> corrupt_lines;  // 1-based line numbers
};
PointsScan scan_points_file(const std::string& path);

// The same scan without keeping the points: `each` sees every valid line in file order (memory
// does not grow with the file).
PointsScan for_each_point(const std::string& path, const std::function<void(const nlohmann::json&)>& each);

// Is index a point of this sweep and shard?
bool in_shard(const SweepFile& f, Shard shard, long long index);

// One summary.csv row (with its newline) and the header line.
std::string summary_header(const SweepFile& f);
std::string summary_row(const SweepFile& f, const nlohmann::json& point);

// summary.csv text for the given point lines (sorted by index here; duplicates are an error).
std::string summary_csv(const SweepFile& f, std::vector<nlohmann::json> points);

class SweepStore {
 public:
  // A new sweep in `dir` (created if needed; an existing points file there is an error unless
  // `resume`). On resume the header must describe the same sweep and shard. The directory is
  // locked for the store's lifetime: a second store on it throws SpecError naming the holder.
  // Errors blame the argument `dir` (a message names the argument `resume` as `resume`).
  SweepStore(const std::string& dir, const SweepFile& f, Shard shard, bool resume);
  ~SweepStore();
  SweepStore(const SweepStore&) = delete;
  SweepStore& operator=(const SweepStore&) = delete;

  bool done(long long index) const { return index >= 0 && static_cast<size_t>(index) < done_.size() && done_[static_cast<size_t>(index)]; }
  long long done_count() const { return done_count_; }
  bool cut_torn_line() const { return torn_; }
  // What a resume repaired, one sentence each (empty when the file was clean).
  const std::vector<std::string>& repairs() const { return repairs_; }
  void append(const SweepPointResult& r);  // one line; a sync every `batch` lines or second
  // Syncs and writes summary.csv (atomically) from the whole points file, streamed when the file is
  // in index order (it is, unless a repair made points run again).
  void finish();

  int batch = 8;

 private:
  void sync();
  void open_locked(const SweepFile& f, Shard shard, bool resume);
  void close_all();
  std::string dir_;
  const SweepFile* file_;
  std::vector<bool> done_;
  long long done_count_ = 0;
  bool torn_ = false;
  std::vector<std::string> repairs_;
  int lock_fd_ = -1, points_fd_ = -1, timings_fd_ = -1;
  int unsynced_ = 0;
  double last_sync_ = 0.0;
};

// Merges shard directories: the summary of every point found, the number of points expected and
// the indices missing. Throws std::runtime_error when the directories hold different sweeps or
// disagree about a point.
struct MergeResult {
  std::string csv;
  long long expected = 0;
  std::vector<long long> missing;
  std::vector<std::string> dropped;  // per directory: lines not used (torn, corrupt, outside the sweep)
};
MergeResult merge_sweep_dirs(const std::vector<std::string>& dirs);

}  // namespace pw
