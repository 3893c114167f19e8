// Plain-text tables with aligned columns.
#pragma once

#include <optional>
#include <string>
#include <vector>

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

}  // namespace pw
