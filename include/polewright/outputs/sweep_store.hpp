// A sweep's directory on disk:
//   sweep.json    header: the sweep file, the tool version, the shard, the start time (written once)
//   points.jsonl  one JSON line per point, appended in point order, synced in small batches
//   timings.jsonl one line per point with its wall time (kept out of the deterministic files)
//   summary.csv   one row per point (index, parameters, status, structure, metrics, message),
//                 rebuilt from points.jsonl at the end of every run
// A resumed run keeps every complete line and cuts a torn last line, so no point is lost or repeated.
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

// The complete, valid lines of a points file, and the length of that good prefix in bytes; a torn
// or corrupt line ends the good prefix (it and everything after it are redone).
struct PointsScan {
  std::vector<nlohmann::json> points;
  size_t good_bytes = 0;
  bool torn = false;
};
PointsScan scan_points_file(const std::string& path);

// The same scan without keeping the points: `each` sees every good line in file order. Returns the
// good prefix's length and whether a torn line followed it (memory does not grow with the file).
PointsScan for_each_point(const std::string& path, const std::function<void(const nlohmann::json&)>& each);

// One summary.csv row (with its newline) and the header line.
std::string summary_header(const SweepFile& f);
std::string summary_row(const SweepFile& f, const nlohmann::json& point);

// summary.csv text for the given point lines (sorted by index here; duplicates are an error).
std::string summary_csv(const SweepFile& f, std::vector<nlohmann::json> points);

class SweepStore {
 public:
  // A new sweep in `dir` (created if needed; an existing points file there is an error unless
  // `resume`). On resume the header must describe the same sweep and shard.
  SweepStore(const std::string& dir, const SweepFile& f, Shard shard, bool resume);
  ~SweepStore();
  SweepStore(const SweepStore&) = delete;
  SweepStore& operator=(const SweepStore&) = delete;

  const std::set<long long>& done() const { return done_; }
  bool cut_torn_line() const { return torn_; }
  void append(const SweepPointResult& r);  // one line; a sync every `batch` lines or second
  // Syncs and writes summary.csv (atomically) from the whole points file.
  void finish();

  int batch = 8;

 private:
  void sync();
  std::string dir_;
  const SweepFile* file_;
  std::set<long long> done_;
  bool torn_ = false;
  int points_fd_ = -1, timings_fd_ = -1;
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
};
MergeResult merge_sweep_dirs(const std::vector<std::string>& dirs);

}  // namespace pw
