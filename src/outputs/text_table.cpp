#include "text_table.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>

namespace pw {

std::string TextTable::render(const std::string& indent) const {
  std::vector<size_t> width(header_.size(), 0);
  auto measure = [&](const std::vector<std::string>& r) {
    for (size_t i = 0; i < r.size() && i < width.size(); ++i) width[i] = std::max(width[i], r[i].size());
  };
  measure(header_);
  for (const auto& r : rows_) measure(r);
  auto line = [&](const std::vector<std::string>& r) {
    std::string s = indent;
    for (size_t i = 0; i < width.size(); ++i) {
      const std::string cell = i < r.size() ? r[i] : "";
      s += cell;
      if (i + 1 < width.size()) s += std::string(width[i] - cell.size() + 2, ' ');
    }
    while (!s.empty() && s.back() == ' ') s.pop_back();
    return s + "\n";
  };
  std::string out = line(header_);
  std::vector<std::string> rule;
  for (size_t w : width) rule.push_back(std::string(w, '-'));
  out += line(rule);
  for (const auto& r : rows_) out += line(r);
  return out;
}

std::string fmt_number(double v, int digits) {
  if (!std::isfinite(v)) return "-";
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.*g", digits, v);
  return buf;
}

std::string fmt_number(const std::optional<double>& v, int digits) { return v ? fmt_number(*v, digits) : "-"; }

std::string fmt_against_limit(double value, double limit, bool misses, int digits) {
  std::string s = fmt_number(value, digits);
  if (!misses || !std::isfinite(value) || !std::isfinite(limit) || value == limit) return s;
  for (int d = digits; d <= 17; ++d) {
    s = fmt_number(value, d);
    if (s != fmt_number(limit, d)) break;
  }
  return s;
}

std::string fmt_metric_against(const MetricValue& value, MetricId metric, const std::vector<RequirementOutcome>& outcomes,
                               int digits) {
  if (value.infinite) return "unbounded";
  if (!value.value) return "-";
  std::string best = fmt_number(*value.value, digits);
  for (const RequirementOutcome& o : outcomes) {
    if (o.requirement.metric != metric || requirement_met(o.requirement, value)) continue;
    const std::string s = fmt_against_limit(*value.value, o.requirement.limit, true, digits);
    if (s.size() > best.size()) best = s;
  }
  return best;
}

std::string fmt_margin(const Requirement& r, double value, int digits) {
  const double m = requirement_margin(r, value);
  if (std::abs(m) <= requirement_tolerance(r, value)) return "0";
  return fmt_number(m, digits);
}

}  // namespace pw
