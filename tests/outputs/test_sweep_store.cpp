#include <catch2/catch.hpp>

#include <unistd.h>

#include <cstdio>
#include <filesystem>
#include <fstream>

#include "polewright/outputs/sweep_store.hpp"

using namespace pw;
using nlohmann::json;

namespace {
SweepFile sweep() {
  return parse_sweep(json::parse(R"({
    "base": {"plant": {"numerator": ["k"], "denominator": [1, 1]}, "requirements": {"overshoot_pct": {"max": 20}},
             "current": {"gain": 1}},
    "parameters": {"k": {"values": [1, 2, 3, 4]}}, "job": "check"})"));
}
std::string temp_dir() {
  char tmpl[] = "/tmp/pw-store-XXXXXX";
  return mkdtemp(tmpl);
}
void write(const std::string& path, const std::string& text) { std::ofstream(path, std::ios::binary) << text; }
}  // namespace

TEST_CASE("scanning a points file stops at a torn or corrupt line", "[outputs][sweep_store]") {
  const std::string dir = temp_dir();
  const std::string p = dir + "/points.jsonl";
  write(p, "{\"index\":0,\"status\":\"met\"}\n{\"index\":1,\"status\":\"met\"}\n{\"index\":2,\"sta");
  PointsScan s = scan_points_file(p);
  CHECK(s.points.size() == 2);
  CHECK(s.torn);
  CHECK(s.good_bytes == 2 * std::string("{\"index\":0,\"status\":\"met\"}\n").size());
  write(p, "{\"index\":0,\"status\":\"met\"}\nnot json\n{\"index\":2,\"status\":\"met\"}\n");
  s = scan_points_file(p);
  CHECK(s.points.size() == 1);
  CHECK(s.torn);
  write(p, "{\"index\":0,\"status\":\"met\"}\n");
  s = scan_points_file(p);
  CHECK_FALSE(s.torn);
  std::filesystem::remove_all(dir);
}

TEST_CASE("the store resumes: the torn line is cut, done points are known", "[outputs][sweep_store]") {
  const SweepFile f = sweep();
  const std::string dir = temp_dir() + "/run";
  const SweepPoints pts(f);
  {
    SweepStore st(dir, f, {}, false);
    st.append(run_sweep_point(f, pts, 0));
    st.append(run_sweep_point(f, pts, 1));
  }
  { std::ofstream(dir + "/points.jsonl", std::ios::app) << "{\"index\":2,"; }
  // Without --resume the directory is refused; with it, two points are done and the tail is cut.
  CHECK_THROWS_WITH(SweepStore(dir, f, {}, false), Catch::Contains("--resume"));
  SweepStore st(dir, f, {}, true);
  CHECK(st.cut_torn_line());
  CHECK(st.done() == std::set<long long>{0, 1});
  st.append(run_sweep_point(f, pts, 2));
  st.append(run_sweep_point(f, pts, 3));
  st.finish();
  const PointsScan s = scan_points_file(dir + "/points.jsonl");
  CHECK_FALSE(s.torn);
  REQUIRE(s.points.size() == 4);
  // A different shard or sweep in the same directory is refused.
  CHECK_THROWS_WITH(SweepStore(dir, f, {2, 3}, true), Catch::Contains("different sweep"));
  std::filesystem::remove_all(std::filesystem::path(dir).parent_path());
}

TEST_CASE("summary rows are sorted by index, one column per parameter and metric", "[outputs][sweep_store]") {
  const SweepFile f = sweep();
  const SweepPoints pts(f);
  std::vector<json> lines;
  for (long long i : {3, 1, 0, 2}) lines.push_back(json::parse(point_line(f, run_sweep_point(f, pts, i))));
  const std::string csv = summary_csv(f, lines);
  CHECK(csv.rfind("index,k,status,structure,overshoot_pct,", 0) == 0);
  size_t row = 0, pos = csv.find('\n') + 1;
  while (pos < csv.size()) {
    CHECK(csv.compare(pos, 2, std::to_string(row) + ",") == 0);
    pos = csv.find('\n', pos) + 1;
    ++row;
  }
  CHECK(row == 4);
  lines.push_back(lines.front());
  CHECK_THROWS_WITH(summary_csv(f, lines), Catch::Contains("twice"));
}
