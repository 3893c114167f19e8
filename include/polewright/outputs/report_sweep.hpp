// The HTML report of a sweep directory (or of several shard directories of one sweep): the points
// read back from points.jsonl, gathered onto two chosen parameter axes, and the sections of the
// page (summary, maps by status and by a metric with the feasible boundary, the table of points).
//
// Aggregation: points that differ only in the other (hidden) parameters land on the same (x, y).
// Such a cell is "met" only when every point in it is met; "not met" when at least one of its
// points ran and missed a requirement; otherwise (no point missed, but some could not run) "bad
// point or error". The metric shown is the worst over the cell's points: the largest for a metric
// bounded from above (overshoot, settling time, ...), the smallest for one bounded from below
// (margins, damping), as the base spec's requirement on it says.
#pragma once

#include <array>
#include <optional>
#include <string>
#include <vector>

#include "polewright/jobs/sweep.hpp"
#include "polewright/outputs/report.hpp"
#include "polewright/requirements/metric.hpp"
#include "polewright/requirements/sweep_parse.hpp"

namespace pw {

struct SweepReportPoint {
  long long index = 0;
  std::vector<double> values;  // parameter order; NaN when missing
  PointStatus status = PointStatus::Error;  // a status the file does not know reads as error
  std::string structure, message;
  std::array<std::optional<double>, kMetricCount> metrics{};  // worst over the plants; unbounded: +inf
  std::optional<double> change_decades;                        // retune sweeps
};

// One (x, y) of the map: the points there, aggregated as described above.
struct SweepCell {
  double x = 0.0, y = 0.0;
  int points = 0, met = 0, not_met = 0, failed = 0;  // failed: bad_point or error
  int category = 0;                                  // 0 met, 1 not met, 2 bad point or error
  std::optional<double> worst;                       // the chosen metric; +inf when unbounded
};

struct SweepReport {
  std::vector<std::string> dirs;
  SweepFile file;
  std::vector<SweepReportPoint> points;  // ascending index, each once (shards merged by index)
  long long expected = 0;                // points of the whole sweep
  int x = 0, y = 1;                      // parameter indices of the map axes; y = -1: a one-parameter sweep (a strip)
  MetricId metric = MetricId::Overshoot;
  bool worst_is_max = true;              // how the metric is aggregated
  std::vector<std::string> torn;         // directories whose points file ended in a torn line (skipped)
  long long count(PointStatus status) const;
  bool all_met() const { return expected > 0 && count(PointStatus::Met) == expected; }
  bool strip() const { return y < 0; }
};

struct SweepReportOptions {
  std::string x, y, metric;  // "" = the defaults
};

// Reads the directories (one sweep; points merged by index, a point found twice must agree).
// Defaults: the first two parameters with more than one value, and the metric of the base spec's
// requirement that fails at the most points that missed (ties and all-met sweeps: the first
// requirement in metric table order). A sweep of one parameter has no y axis (y = -1, strip()):
// the report draws the metric over the parameter instead of a map, and a y option is an error.
// Throws SpecError naming the directory, `dirs` (none given) or the SweepReportOptions field
// (x, y, metric) on bad input.
SweepReport read_sweep_report(const std::vector<std::string>& dirs, const SweepReportOptions& options = {});

// The points gathered onto (x, y), in ascending (x, y); y = 0 for every cell of a strip.
std::vector<SweepCell> sweep_cells(const SweepReport& r);

// The report data of a sweep (job "sweep") and its page.
ReportData prepare_sweep_report(const std::vector<std::string>& dirs, const SweepReportOptions& options = {});

std::string report_sweep_summary_section(const ReportData& d);
std::string report_sweep_map_section(const ReportData& d);
std::string report_sweep_points_section(const ReportData& d);

// Rows of the table of points before it is cut (the rest is in summary.csv).
constexpr size_t kSweepTableRows = 500;

}  // namespace pw
