// A parsed, validated spec file.
#pragma once

#include <algorithm>
#include <optional>
#include <stdexcept>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "polewright/analysis/analysis_options.hpp"
#include "polewright/model/plant.hpp"
#include "polewright/requirements/implementation.hpp"
#include "polewright/requirements/requirement_set.hpp"

namespace pw {

// Bad input: `path` is a JSON path ("$.plant.denominator[0]"); what() is the one-line message.
class SpecError : public std::runtime_error {
 public:
  SpecError(std::string path, const std::string& message)
      : std::runtime_error(path + ": " + message), path_(std::move(path)) {}
  const std::string& path() const { return path_; }
  // What is wrong, without the path in front.
  std::string message() const {
    const std::string w = what();
    return w.substr(std::min(w.size(), path_.size() + 2));
  }

 private:
  std::string path_;
};

enum class IntegratorChoice { Off, On, Auto };
enum class Objective { LeastEffort, Fastest, MostRobust, Simplest };

struct StageSettings {
  int lead = 0;
  int lag = 0;
  int notch = 0;
  IntegratorChoice integrator = IntegratorChoice::Off;
  std::optional<std::pair<double, double>> frequency_range_rad_s;
  // "pid": true: exactly a PID with its derivative filter (an integrator and one lead: two real
  // zeros and a filter pole), with up to `notch` notches; parsing sets integrator On and lead 1.
  bool pid = false;
};

struct SearchSettings {
  unsigned long long seed = 1;
  int keep = 5;
  Objective objective = Objective::LeastEffort;
  int threads = 0;  // 0 = all cores
  long long max_evaluations = 200000;
  double time_limit_s = 30.0;
  double budget_s = 10.0;  // escalation budget when the first pass finds nothing (jobs/design.hpp)
  // Design margin in percent of each limit: the search aims inside every limit tightened by it
  // (synthesis/problem.hpp, with_design_margin); verdicts stay against the stated limits.
  double margin_pct = 3.0;
};

struct Spec {
  std::string name;
  std::vector<Plant> plants;  // plants[0] is the nominal plant, then the variants
  RequirementSet requirements;
  StageSettings stages;
  std::optional<Zpk> current;
  SearchSettings search;
  AnalysisOptions analysis;
  std::optional<Implementation> implementation;  // how the compensator runs; check then judges the sampled loop
  nlohmann::json document;  // the spec as given (results embed it so they can be re-checked exactly)
};

const char* objective_name(Objective o);

}  // namespace pw
