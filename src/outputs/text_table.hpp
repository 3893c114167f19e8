// Plain-text tables with aligned columns.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "polewright/requirements/evaluate.hpp"

namespace pw {

class TextTable {
 public:
  explicit TextTable(std::vector<std::string> header) : header_(std::move(header)) {}
  void add(std::vector<std::string> row) { rows_.push_back(std::move(row)); }
  std::string render(const std::string& indent = "  ") const;

 private:
  std::vector<std::string> header_;
  std::vector<std::vector<std::string>> rows_;
};

// %.4g-style numbers; "-" for a missing value.
std::string fmt_number(double v, int digits = 4);
std::string fmt_number(const std::optional<double>& v, int digits = 4);

// A figure set against its limit. A value that misses the limit never prints as equal to it:
// the digits grow from `digits` (up to 17) until the printed value differs from the printed
// limit (20.0003 against 20, not "20 > 20"). A value that meets prints with `digits`.
std::string fmt_against_limit(double value, double limit, bool misses, int digits = 4);

// The same for a metric value in a table of metrics: `value` with the digits that show how it
// misses the tightest requirement on `metric` it misses in `outcomes` (any not met), "unbounded"
// for an infinite value, "-" for a missing one.
std::string fmt_metric_against(const MetricValue& value, MetricId metric, const std::vector<RequirementOutcome>& outcomes,
                               int digits = 4);

// A requirement's margin: "0" when it is within the comparison tolerance of the limit (met by
// requirement_tolerance, which a printed -2.8e-17 would contradict), else %.{digits}g.
std::string fmt_margin(const Requirement& r, double value, int digits = 4);

}  // namespace pw
