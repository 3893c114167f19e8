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

TEST_CASE("scanning a points file: a torn last line, corrupt lines skipped and counted", "[outputs][sweep_store]") {
  const std::string dir = temp_dir();
  const std::string p = dir + "/points.jsonl";
  write(p, "{\"index\":0,\"status\":\"met\"}\n{\"index\":1,\"status\":\"met\"}\n{\"index\":2,\"sta");
  PointsScan s = scan_points_file(p);
  CHECK(s.points.size() == 2);
  CHECK(s.torn);
  CHECK(s.good_bytes == 2 * std::string("{\"index\":0,\"status\":\"met\"}\n").size());
  // A corrupt middle line costs that line only, not every line after it.
  write(p, "{\"index\":0,\"status\":\"met\"}\nnot json\n{\"index\":2,\"status\":\"met\"}\n{\"index\":\"3\",\"status\":\"met\"}\n");
  s = scan_points_file(p);
  CHECK(s.points.size() == 2);
  CHECK_FALSE(s.torn);
  CHECK(s.corrupt_lines == std::vector<long long>{2, 4});
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
  // Without resume the directory is refused (the message names the argument `resume`, which the
  // CLI turns into its option); with it, two points are done and the tail is cut.
  CHECK_THROWS_WITH(SweepStore(dir, f, {}, false), Catch::Contains("use `resume` to continue it"));
  SweepStore st(dir, f, {}, true);
  REQUIRE(st.repairs().size() == 1);
  CHECK_THAT(st.repairs()[0], Catch::Contains("cut a torn last line"));
  CHECK(st.cut_torn_line());
  CHECK(st.done(0));
  CHECK(st.done(1));
  CHECK_FALSE(st.done(2));
  CHECK(st.done_count() == 2);
  st.append(run_sweep_point(f, pts, 2));
  st.append(run_sweep_point(f, pts, 3));
  st.finish();
  const PointsScan s = scan_points_file(dir + "/points.jsonl");
  CHECK_FALSE(s.torn);
  REQUIRE(s.points.size() == 4);
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

namespace {
std::string lines_of(const SweepFile& f, const SweepPoints& pts, std::initializer_list<long long> which) {
  std::string out;
  for (long long i : which) out += point_line(f, run_sweep_point(f, pts, i)) + "\n";
  return out;
}
std::string error_of_store(const std::string& dir, const SweepFile& f, Shard shard, bool resume) {
  try {
    SweepStore st(dir, f, shard, resume);
  } catch (const SpecError& e) {
    return e.what();
  }
  return "";
}
}  // namespace

TEST_CASE("one writer per sweep directory: a second store is refused naming the holder", "[outputs][sweep_store]") {
  const SweepFile f = sweep();
  const std::string dir = temp_dir() + "/run";
  {
    SweepStore first(dir, f, {}, false);
    const std::string e = error_of_store(dir, f, {}, true);
    CHECK_THAT(e, Catch::StartsWith("dir: " + dir + " is in use by another sweep run (pid " + std::to_string(getpid()) + " on host "));
    CHECK_THAT(e, Catch::Contains("use another directory"));
    // A different shard or sweep is refused too (the lock is asked first).
    CHECK_THAT(error_of_store(dir, f, {2, 3}, true), Catch::Contains("in use"));
  }
  // Released when the store closes (and by the kernel when a process dies).
  CHECK(error_of_store(dir, f, {}, true).empty());
  CHECK_THAT(error_of_store(dir, f, {2, 3}, true), Catch::Contains("different sweep"));
  std::filesystem::remove_all(std::filesystem::path(dir).parent_path());
}

TEST_CASE("resume repairs a damaged points file and says exactly what it dropped", "[outputs][sweep_store]") {
  const SweepFile f = sweep();  // 4 points
  const SweepPoints pts(f);
  const std::string dir = temp_dir() + "/run";
  { SweepStore st(dir, f, {}, false); }
  const std::string p = dir + "/points.jsonl";
  // Point 0, a corrupt line, point 1 twice (identical: two runs wrote it), an index outside the
  // sweep, point 2, and a torn last line.
  const std::string l0 = lines_of(f, pts, {0}), l1 = lines_of(f, pts, {1}), l2 = lines_of(f, pts, {2});
  write(p, l0 + "{\"index\": 3, garbage\n" + l1 + l1 + "{\"index\":999,\"status\":\"met\"}\n" + l2 + "{\"index\":3,");
  {
    SweepStore st(dir, f, {}, true);
    CHECK(st.done_count() == 3);
    CHECK_FALSE(st.done(3));
    std::string all;
    for (const std::string& r : st.repairs()) all += r + "\n";
    CHECK_THAT(all, Catch::Contains("cut a torn last line"));
    CHECK_THAT(all, Catch::Contains("dropped 1 corrupt line(s) (line 2)"));
    CHECK_THAT(all, Catch::Contains("dropped 1 line(s) whose index is outside this sweep: line 5 (index 999)"));
    CHECK_THAT(all, Catch::Contains("dropped 1 repeated identical line(s)"));
    CHECK(st.repairs().size() == 4);
    st.append(run_sweep_point(f, pts, 3));
    st.finish();
  }
  // The file now holds each point once, in order.
  const PointsScan s = scan_points_file(p);
  CHECK(s.corrupt_lines.empty());
  CHECK_FALSE(s.torn);
  REQUIRE(s.points.size() == 4);
  for (size_t i = 0; i < 4; ++i) CHECK(s.points[i]["index"] == i);
  std::ifstream csv(dir + "/summary.csv");
  std::string line;
  int rows = -1;
  while (std::getline(csv, line)) ++rows;
  CHECK(rows == 4);
  // Two different results for one point cannot be repaired: refused, naming the point.
  write(p, l0 + l1 + "{\"index\":1,\"status\":\"not_met\"}\n");
  CHECK_THAT(error_of_store(dir, f, {}, true), Catch::Contains("point 1 appears twice with different results (line 3)"));
  std::filesystem::remove_all(std::filesystem::path(dir).parent_path());
}

TEST_CASE("a shard's directory keeps only its own points", "[outputs][sweep_store]") {
  const SweepFile f = sweep();
  const SweepPoints pts(f);
  CHECK(in_shard(f, {2, 2}, 1));
  CHECK_FALSE(in_shard(f, {2, 2}, 2));
  CHECK_FALSE(in_shard(f, {1, 1}, 4));
  CHECK_FALSE(in_shard(f, {1, 1}, -1));
  const std::string dir = temp_dir() + "/run";
  { SweepStore st(dir, f, {2, 2}, false); }
  write(dir + "/points.jsonl", lines_of(f, pts, {1, 2, 3}));
  SweepStore st(dir, f, {2, 2}, true);
  CHECK(st.done_count() == 2);
  REQUIRE(st.repairs().size() == 1);
  CHECK_THAT(st.repairs()[0], Catch::Contains("outside this sweep shard: line 2 (index 2)"));
  std::filesystem::remove_all(std::filesystem::path(dir).parent_path());
}

TEST_CASE("merge leaves out and reports lines that are not points of the sweep", "[outputs][sweep_store]") {
  const SweepFile f = sweep();
  const SweepPoints pts(f);
  const std::string dir = temp_dir() + "/run";
  { SweepStore st(dir, f, {}, false); }
  write(dir + "/points.jsonl", lines_of(f, pts, {0}) + "oops\n" + lines_of(f, pts, {1}) + "{\"index\":7,\"status\":\"met\"}\n" +
                                   lines_of(f, pts, {3}) + "{\"ind");
  const MergeResult m = merge_sweep_dirs({dir});
  CHECK(m.expected == 4);
  CHECK(m.missing == std::vector<long long>{2});  // index 7 does not hide that point 2 is missing
  REQUIRE(m.dropped.size() == 1);
  CHECK_THAT(m.dropped[0], Catch::Contains("a torn last line; 1 corrupt line(s) (line 2); 1 line(s) with an index outside the sweep (index 7)"));
  // No directory at all: the argument is blamed by its own name (the CLI names its DIR).
  CHECK_THROWS_WITH(merge_sweep_dirs({}), Catch::StartsWith("dirs: "));
  std::filesystem::remove_all(std::filesystem::path(dir).parent_path());
}

TEST_CASE("a sweep directory that cannot be written says why", "[outputs][sweep_store]") {
  const SweepFile f = sweep();
  const std::string dir = temp_dir();
  std::filesystem::permissions(dir, std::filesystem::perms::owner_read | std::filesystem::perms::owner_exec);
  if (::access(dir.c_str(), W_OK) != 0) {  // root writes anywhere: the check applies to other users
    CHECK_THAT(error_of_store(dir + "/run", f, {}, false), Catch::Contains("cannot be created: Permission denied"));
    CHECK_THAT(error_of_store(dir, f, {}, false), Catch::Contains("is not writable"));
  }
  std::filesystem::permissions(dir, std::filesystem::perms::owner_all);
  write(dir + "/file", "x");
  CHECK_THAT(error_of_store(dir + "/file", f, {}, false), Catch::Contains("is not a directory"));
  std::filesystem::remove_all(dir);
}
