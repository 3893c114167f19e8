// libFuzzer target: the readers of a sweep directory's points file. The input is written as
// points.jsonl of a fixed four-point check sweep, then scanned, merged, read for the report and
// resumed (the repair rewrites it and the summary is rebuilt): a result or a SpecError, never a
// crash.
#include <unistd.h>

#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <stdexcept>
#include <string>

#include "polewright/outputs/report_sweep.hpp"
#include "polewright/outputs/sweep_store.hpp"
#include "polewright/requirements/spec_parse.hpp"

namespace {
const pw::SweepFile& sweep() {
  static const pw::SweepFile f = pw::parse_sweep(nlohmann::json::parse(R"({
    "base": {"plant": {"numerator": ["k"], "denominator": [1, 1]}, "requirements": {"overshoot_pct": {"max": 20}},
             "current": {"gain": 1}},
    "parameters": {"k": {"values": [1, 2, 3, 4]}}, "job": "check"})"));
  return f;
}
// Made once and never destroyed (the exit handler that removes it runs after static destructors
// may have run).
const std::string& directory() {
  static const std::string* dir = [] {
    char tmpl[] = "/tmp/pw-fuzz-points-XXXXXX";
    const char* d = mkdtemp(tmpl);
    if (!d) std::abort();
    auto* out = new std::string(std::string(d) + "/run");
    { pw::SweepStore st(*out, sweep(), {}, false); }  // writes sweep.json
    std::atexit([] {
      std::error_code ec;
      std::filesystem::remove_all(std::filesystem::path(directory()).parent_path(), ec);
    });
    return out;
  }();
  return *dir;
}
}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const uint8_t* data, size_t size) {
  const std::string& dir = directory();
  const std::string points = dir + "/points.jsonl";
  { std::ofstream(points, std::ios::binary | std::ios::trunc).write(reinterpret_cast<const char*>(data), static_cast<std::streamsize>(size)); }
  (void)pw::scan_points_file(points);
  try {
    (void)pw::merge_sweep_dirs({dir});
  } catch (const pw::SpecError&) {
  } catch (const std::runtime_error&) {
    // two different lines for one point: reported as such (exit 3 names the point)
  }
  try {
    (void)pw::read_sweep_report({dir});
  } catch (const pw::SpecError&) {
  }
  try {
    pw::SweepStore st(dir, sweep(), {}, true);
    st.finish();
  } catch (const pw::SpecError&) {
  }
  return 0;
}
