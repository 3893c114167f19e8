// Sweep files: a base spec whose numbers may be expressions of named parameters (muparser), the
// parameters (value lists, or linear or logarithmic ranges), how points are sampled, the job run
// at every point and the sweep seed. Everything is checked before any point runs.
#pragma once

#include <memory>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

namespace pw {

struct SweepParameter {
  std::string name;
  std::vector<double> values;  // a list; empty for a range
  double from = 0.0, to = 0.0;
  int count = 0;               // points of a range on the grid
  bool log = false;
  bool is_range() const { return values.empty(); }
  int grid_count() const { return is_range() ? count : static_cast<int>(values.size()); }
  // The value at u in [0, 1] (ranges) or the list entry floor(u n) (lists).
  double at_unit(double u) const;
  // The k-th grid value.
  double at_grid(int k) const;
};

enum class SweepSample { Grid, Sobol, Latin };
enum class SweepJob { Design, Check, Retune };
const char* sweep_job_name(SweepJob j);

// A compiled expression site: the JSON path inside the base spec and the expression.
struct ExpressionSite {
  nlohmann::json::json_pointer pointer;  // into the base spec
  std::string path;                      // "$.base.plant.denominator[0]"
  std::string text;
};

struct SweepFile {
  nlohmann::json document;                // the sweep file as given
  nlohmann::json base;
  std::vector<SweepParameter> parameters;  // alphabetical (the first varies slowest on the grid)
  std::vector<ExpressionSite> expressions;
  SweepSample sample = SweepSample::Grid;
  long long sample_count = 0;             // sobol and latin
  SweepJob job = SweepJob::Design;
  unsigned long long seed = 1;
  long long point_count() const;
};

// Largest number of points a sweep may have: a grid, and a Sobol or Latin sample (whose unit
// points are held in memory: at most 1e6 x 40 coordinates).
constexpr long long kMaxSweepPoints = 10'000'000;
constexpr long long kMaxSampledPoints = 1'000'000;

// Throws SpecError naming the field. Every expression is compiled and evaluated once (at the first
// grid point) so that syntax errors and unknown names are reported before any point runs.
SweepFile parse_sweep(const nlohmann::json& doc);

// The parameter values of point `index` (0-based), in parameter order. Grid points in nested-loop
// order (last parameter fastest); Sobol points (GSL) shifted by a rotation drawn from the seed;
// Latin hypercube strata permuted by the seed. Deterministic on every platform.
class SweepPoints {
 public:
  explicit SweepPoints(const SweepFile& f);
  std::vector<double> at(long long index) const;
  long long size() const { return count_; }

 private:
  const SweepFile* file_;
  long long count_ = 0;
  std::vector<std::vector<double>> unit_;  // sobol / latin: unit-cube coordinates per point
};

// The point's spec document: the base with every expression replaced by its value, and the
// search seed replaced by `point_seed`. Throws SpecError (path of the expression) when a value is
// not finite.
nlohmann::json point_spec(const SweepFile& f, const std::vector<double>& values, unsigned long long point_seed);

// The seed of point `index`: a SplitMix64 hash of the sweep seed and the index, below 2^53.
unsigned long long point_seed(unsigned long long sweep_seed, long long index);

}  // namespace pw
