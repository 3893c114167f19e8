#include <cerrno>
#include <cstdio>
#include <cstdlib>
#include <iostream>

#include "commands.hpp"
#include "outputs/atomic_file.hpp"
#include "polewright/outputs/report.hpp"
#include "polewright/requirements/spec.hpp"
#include "polewright/requirements/spec_parse.hpp"

namespace pw::cli {

namespace {
std::function<int()>& selected() {
  static std::function<int()> f;
  return f;
}
}  // namespace

void select(std::function<int()> action) { selected() = std::move(action); }

int run_selected() { return selected() ? selected()() : kExitBadInput; }

int guarded(const std::string& file, const std::function<int()>& body) {
  try {
    return body();
  } catch (const SpecError& e) {
    std::fprintf(stderr, "polewright: %s: %s\n", file.c_str(), e.what());
    return kExitBadInput;
  } catch (const std::exception& e) {
    std::fprintf(stderr, "polewright: internal error: %s\n", e.what());
    return kExitInternal;
  }
}

bool parse_whole(const std::string& text, long long lo, long long hi, long long* value) {
  if (text.empty() || !(std::isdigit(static_cast<unsigned char>(text[0])) || text[0] == '-' || text[0] == '+')) return false;
  errno = 0;
  char* end = nullptr;
  const long long v = std::strtoll(text.c_str(), &end, 10);
  if (errno == ERANGE || end == text.c_str() || *end != '\0' || v < lo || v > hi) return false;
  *value = v;
  return true;
}

CLI::Validator whole_range(long long lo, long long hi) {
  const std::string range = std::to_string(lo) + ".." + std::to_string(hi);
  return CLI::Validator(
      [lo, hi, range](std::string& text) {
        long long v = 0;
        if (parse_whole(text, lo, hi, &v)) return std::string();
        return "\"" + text + "\" is not a whole number within " + range;
      },
      "INT in " + range);
}

void add_result_options(CLI::App* cmd, SearchArgs& a, const std::string& timing_help) {
  cmd->add_option("-o,--output", a.out, "write the result as JSON to this file (atomically)");
  cmd->add_flag("--json", a.json, "print the JSON result to stdout instead of the table");
  cmd->add_option("--report", a.report, "also write the HTML report to this file (atomically)");
  cmd->add_flag("--timing", a.timing, timing_help);
}

void add_search_options(CLI::App* cmd, SearchArgs& a, const std::string& seed_help) {
  cmd->add_option("--keep", a.keep, "number of candidates (overrides search.keep)")->check(whole_range(1, 100));
  cmd->add_option("--seed", a.seed, seed_help)->check(whole_range(0, 9007199254740991LL));  // the spec's search.seed range
  cmd->add_option("--budget-s", a.budget_s, "escalation budget when the first pass meets nothing, seconds at a nominal "
                                            "evaluation rate (counted in evaluations: deterministic; 0 = none; overrides search.budget_s)")
      ->check(CLI::Range(0.0, 1e7));
  cmd->add_option("--threads", a.threads, "worker threads, 0 = all cores (overrides search.threads)")->check(whole_range(0, 1024));
}

void write_result(const SearchArgs& a, const nlohmann::json& result, const std::function<std::string()>& text) {
  if (!a.out.empty()) emit(a.out, result.dump(1) + "\n");
  if (!a.report.empty()) emit(a.report, report_html(parse_result(result)));
  if (a.json) emit("-", result.dump(1) + "\n");
  else std::cout << text();
}

SpecError with_option_names(const SpecError& e, OptionNames options) {
  std::string path = e.path(), message = e.message();
  for (const auto& [name, option] : options) {
    if (path == name) path = option;
    const std::string quoted = std::string("`") + name + "`";
    for (size_t at = message.find(quoted); at != std::string::npos; at = message.find(quoted, at + 1))
      message.replace(at, quoted.size(), option);
  }
  return SpecError(path, message);
}

void emit(const std::string& path, const std::string& content) {
  if (path == "-") {
    std::cout << content;
    std::cout.flush();
    return;
  }
  try {
    write_file_atomically(path, content);
  } catch (const std::runtime_error& e) {
    // A missing folder, a read-only place, a full disk: the output named on the command line
    // cannot be written. That is the user's to fix (exit 2), not a fault of the program.
    throw SpecError(path, e.what());
  }
}

}  // namespace pw::cli
