// Subcommand registration and the shared exit-code handling of the CLI.
#pragma once

#include <functional>
#include <initializer_list>
#include <string>
#include <utility>

#include <CLI/CLI.hpp>
#include <nlohmann/json_fwd.hpp>

#include "polewright/outputs/check_output.hpp"
#include "polewright/requirements/spec.hpp"

namespace pw::cli {

constexpr int kExitMet = 0;
constexpr int kExitNotMet = 1;
constexpr int kExitBadInput = 2;
constexpr int kExitInternal = 3;
constexpr int kExitStopped = 4;  // sweep: stopped by SIGINT/SIGTERM after the points in flight (resume it)

void register_validate(CLI::App& app);
void register_check(CLI::App& app);
void register_design(CLI::App& app);
void register_retune(CLI::App& app);
void register_sweep(CLI::App& app);  // sweep and merge
void register_report(CLI::App& app);
void register_export(CLI::App& app);

// Sets the action of the subcommand that was parsed.
void select(std::function<int()> action);
int run_selected();

// Runs `body` and maps exceptions to exit codes with one line on stderr naming the file.
int guarded(const std::string& file, const std::function<int()>& body);

// A whole number within [lo, hi], read without wrapping or saturating (strtoll with its range
// error checked); false for anything else.
bool parse_whole(const std::string& text, long long lo, long long hi, long long* value);

// A CLI11 check for an integer option: the text is a whole number within [lo, hi] (applied to the
// text before CLI11 converts it, so "2^63" or "4294967297" is refused, not wrapped).
CLI::Validator whole_range(long long lo, long long hi);

// The library blames a bad setting on the field or argument that holds it (ExportOptions'
// sample_time_s, SweepStore's dir, ...) and names other ones in its messages as `name`; the
// command line names the option that sets each. `options` maps name -> option; paths and names
// not in it (JSON paths, files) pass unchanged.
using OptionNames = std::initializer_list<std::pair<const char*, const char*>>;
SpecError with_option_names(const SpecError& e, OptionNames options);

// Runs `body` with its SpecError renamed by with_option_names.
template <class Body>
auto naming_options(OptionNames options, Body&& body) -> decltype(body()) {
  try {
    return body();
  } catch (const SpecError& e) {
    throw with_option_names(e, options);
  }
}

// The options design and retune share: where the result goes, and the search settings that
// override the spec's search block when given (-1 = not given).
struct SearchArgs {
  std::string out, report;
  bool json = false, timing = false;
  int keep = -1, threads = -1;
  long long seed = -1;
  double budget_s = -1.0;
};
// -o/--output, --json, --report and --timing (its help says what the timings do to the JSON).
void add_result_options(CLI::App* cmd, SearchArgs& a, const std::string& timing_help);
// --keep, --seed (its help says which starts the seed shifts), --budget-s and --threads.
void add_search_options(CLI::App* cmd, SearchArgs& a, const std::string& seed_help);

// The given search settings onto DesignOptions or RetuneOptions, then their check ($.search).
template <class Options>
void apply_search_args(const SearchArgs& a, Options& o) {
  if (a.keep > 0) o.keep = a.keep;
  if (a.threads >= 0) o.threads = a.threads;
  if (a.seed >= 0) o.seed = static_cast<unsigned long long>(a.seed);
  if (a.budget_s >= 0.0) o.budget_s = a.budget_s;
}
template <class Options>
void require_valid(const Options& o) {
  std::string err;
  if (!o.IsValid(&err)) throw SpecError("$.search", err);
}

// The result JSON to -o and --report; to stdout with --json, else `text()` (the table).
void write_result(const SearchArgs& a, const nlohmann::json& result, const std::function<std::string()>& text);

// Writes to `path` atomically, or to stdout when path is "-".
void emit(const std::string& path, const std::string& content);

}  // namespace pw::cli
