#include <catch2/catch.hpp>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <regex>

#include "polewright/jobs/sweep.hpp"
#include "polewright/outputs/report_sweep.hpp"
#include "polewright/outputs/sweep_store.hpp"
#include "polewright/requirements/spec.hpp"
#include "outputs/report_sweep_map.hpp"
#include "report_test_helpers.hpp"

using namespace pw;
using namespace pw_test_report;

namespace {

// A small check sweep: 1 / (s (s + a)) under a gain g, over a (4 values, log), g (3) and the
// phase-margin limit pm (2): 24 points, 12 positions on the (a, g) map.
const char* const kSweep = R"({
  "name": "test sweep <a & g>",
  "base": { "plant": { "gain": 1, "poles": [0, "-a"] },
            "requirements": { "overshoot_pct": { "max": 25 }, "phase_margin_deg": { "min": "pm" } },
            "current": { "gain": "g" } },
  "parameters": { "a": { "from": 1, "to": 8, "count": 4, "scale": "log" },
                  "g": { "values": [0.5, 2, 8] },
                  "pm": { "values": [40, 60] } },
  "sample": { "method": "grid" }, "job": "check", "seed": 3 })";

std::string run_sweep_into(const std::string& json, const std::string& name, Shard shard = {1, 1}) {
  const std::string dir = (std::filesystem::temp_directory_path() / ("pw-test-report-sweep-" + name)).string();
  std::filesystem::remove_all(dir);
  const SweepFile f = parse_sweep(nlohmann::json::parse(json));
  SweepStore store(dir, f, shard, false);
  SweepRunOptions o;
  o.threads = 1;
  o.todo = shard_indices(f.point_count(), shard.k, shard.n);
  run_sweep(f, o, [&](const SweepPointResult& r) { store.append(r); });
  store.finish();
  return dir;
}

SweepReportPoint point(long long i, double x, double y, PointStatus status, std::optional<double> overshoot) {
  SweepReportPoint p;
  p.index = i;
  p.values = {x, y, 0.0};
  p.status = status;
  p.metrics[static_cast<size_t>(MetricId::Overshoot)] = overshoot;
  return p;
}

}  // namespace

TEST_CASE("sweep report: both maps drawn, one cell per grid position, table and counts", "[outputs][report][sweep]") {
  const std::string dir = run_sweep_into(kSweep, "grid");
  const ReportData d = prepare_sweep_report({dir});
  REQUIRE(d.sweep);
  const SweepReport& r = *d.sweep;
  CHECK(r.expected == 24);
  CHECK(r.points.size() == 24);
  CHECK(r.file.parameters[static_cast<size_t>(r.x)].name == "a");  // the defaults: first two varying
  CHECK(r.file.parameters[static_cast<size_t>(r.y)].name == "g");
  // r.metric: the requirement failing at the most points (checked against the closed form below).
  const std::vector<SweepCell> cells = sweep_cells(r);
  REQUIRE(cells.size() == 12);
  for (const SweepCell& c : cells) CHECK(c.points == 2);

  const std::string html = report_html(d);
  check_page(html, 2);
  CHECK(html.find("test sweep &lt;a &amp; g&gt;") != std::string::npos);
  const std::vector<std::string> maps = outer_svgs(report_sweep_map_section(d));
  REQUIRE(maps.size() == 2);
  // Every grid position is one cell on each map (4 x 3), drawn as one filled subpath.
  CHECK(filled_subpaths(maps[0]) == 12);
  CHECK(filled_subpaths(maps[1]) == 12);
  // Table: one row per point; counts sum to the points.
  const std::string table = report_sweep_points_section(d);
  size_t rows = 0;
  for (size_t p = table.find("<tr class=\"pw-point\">"); p != std::string::npos; p = table.find("<tr class=\"pw-point\">", p + 1)) ++rows;
  CHECK(rows == 24);
  CHECK(r.count(PointStatus::Met) + r.count(PointStatus::NotMet) + r.count(PointStatus::BadPoint) + r.count(PointStatus::Error) == 24);
  CHECK(report_html(prepare_sweep_report({dir})) == html);  // deterministic
  std::filesystem::remove_all(dir);
}

TEST_CASE("sweep report: the boundary is drawn when met and not-met cells meet", "[outputs][report][sweep]") {
  const std::string dir = run_sweep_into(kSweep, "boundary");
  const ReportData d = prepare_sweep_report({dir});
  const std::vector<MapPoint> pts = sweep_map_points(sweep_cells(*d.sweep));
  bool any_met = false, any_not = false;
  for (const MapPoint& p : pts) (p.feasible ? any_met : any_not) = true;
  const std::string map = report_sweep_map_section(d);
  // The closed loop s^2 + a s + g has damping a / (2 sqrt(g)) (worked by hand): a = 8, g = 0.5 is
  // overdamped and meets; a = 1, g = 8 (damping 0.18, about 57 % overshoot) misses the 25 % limit.
  REQUIRE(any_met);
  REQUIRE(any_not);
  // With both kinds present on a full grid some cell edge separates them.
  CHECK(map.find("boundary of the feasible area") != std::string::npos);
  std::filesystem::remove_all(dir);
}

TEST_CASE("sweep map verdicts agree with the closed-form loop figures", "[outputs][report][sweep]") {
  // L = g / (s (s + a)): crossover wc solves wc sqrt(wc^2 + a^2) = g, PM = 90 - atan(wc / a) deg;
  // the closed loop s^2 + a s + g has damping z = a / (2 sqrt g) and overshoot exp(-pi z / sqrt(1 - z^2))
  // (standard second-order results, worked by hand). A position holds pm = 40 and pm = 60, so it is
  // met only when PM >= 60 and the overshoot <= 25 %. Positions within 1 deg or 1 % of a limit are
  // skipped (the simulated figures may land either side).
  const std::string dir = run_sweep_into(kSweep, "analytic");
  const std::vector<SweepCell> cells = sweep_cells(*prepare_sweep_report({dir}).sweep);
  REQUIRE(cells.size() == 12);
  int compared = 0;
  for (const SweepCell& c : cells) {
    const double a = c.x, g = c.y;
    double lo = 0.0, hi = std::sqrt(g) + g;  // bisection on wc sqrt(wc^2 + a^2) - g (increasing)
    for (int i = 0; i < 200; ++i) {
      const double m = 0.5 * (lo + hi);
      (m * std::sqrt(m * m + a * a) > g ? hi : lo) = m;
    }
    const double pm = 90.0 - std::atan(lo / a) * 180.0 / 3.14159265358979323846;
    const double z = a / (2.0 * std::sqrt(g));
    const double os = z < 1.0 ? 100.0 * std::exp(-3.14159265358979323846 * z / std::sqrt(1.0 - z * z)) : 0.0;
    if (std::abs(pm - 60.0) < 1.0 || std::abs(os - 25.0) < 1.0) continue;
    const bool met = pm >= 60.0 && os <= 25.0;
    INFO("a = " << a << ", g = " << g << ", PM = " << pm << ", overshoot = " << os);
    CHECK(c.category == (met ? 0 : 1));
    ++compared;
  }
  CHECK(compared >= 10);
  std::filesystem::remove_all(dir);
}

TEST_CASE("sweep aggregation: met only when every point met; worst metric over the hidden parameters", "[outputs][report][sweep]") {
  SweepReport r;
  r.file = parse_sweep(nlohmann::json::parse(kSweep));
  r.x = 0;
  r.y = 1;
  r.metric = MetricId::Overshoot;
  r.worst_is_max = true;
  r.points = {point(0, 1, 1, PointStatus::Met, 5.0),     point(1, 1, 1, PointStatus::Met, 9.0),        // all met
              point(2, 2, 1, PointStatus::Met, 3.0),     point(3, 2, 1, PointStatus::NotMet, 30.0),   // one missed
              point(4, 1, 2, PointStatus::Met, 4.0),     point(5, 1, 2, PointStatus::BadPoint, {}),   // one could not run
              point(6, 2, 2, PointStatus::BadPoint, {}), point(7, 2, 2, PointStatus::NotMet, 12.0)};
  const std::vector<SweepCell> c = sweep_cells(r);
  REQUIRE(c.size() == 4);  // ascending (x, y): (1,1) (1,2) (2,1) (2,2)
  CHECK(c[0].category == 0);
  CHECK(*c[0].worst == 9.0);
  CHECK(c[1].category == 2);
  CHECK(*c[1].worst == 4.0);
  CHECK(c[2].category == 1);
  CHECK(*c[2].worst == 30.0);
  CHECK(c[3].category == 1);
  r.worst_is_max = false;  // a metric bounded from below: the smallest is the worst
  CHECK(*sweep_cells(r)[0].worst == 5.0);
  const std::vector<MapPoint> m = sweep_map_points(c);
  CHECK(m[0].feasible);
  CHECK_FALSE(m[2].feasible);
}

TEST_CASE("sweep report: Sobol points become markers, no boundary", "[outputs][report][sweep]") {
  nlohmann::json j = nlohmann::json::parse(kSweep);
  j["sample"] = {{"method", "sobol"}, {"count", 16}};
  const std::string dir = run_sweep_into(j.dump(), "sobol");
  const ReportData d = prepare_sweep_report({dir}, {"a", "pm", "phase_margin_deg"});
  CHECK(d.sweep->worst_is_max == false);  // phase margin has a "min" requirement
  const std::vector<std::string> maps = outer_svgs(report_sweep_map_section(d));
  REQUIRE(maps.size() == 2);
  for (const std::string& s : maps) {
    CHECK(has_drawn_data(s));
    CHECK(filled_subpaths(s) == 0);
    CHECK(s.find("boundary of the feasible area") == std::string::npos);
  }
  check_page(report_html(d), 2);
  std::filesystem::remove_all(dir);
}

TEST_CASE("sweep report: shard directories are merged by index; missing points counted", "[outputs][report][sweep]") {
  const std::string one = run_sweep_into(kSweep, "shard1", {1, 2}), two = run_sweep_into(kSweep, "shard2", {2, 2});
  const ReportData half = prepare_sweep_report({one});
  CHECK(half.sweep->points.size() == 12);
  CHECK_FALSE(half.sweep->all_met());
  const ReportData both = prepare_sweep_report({one, two});
  CHECK(both.sweep->points.size() == 24);
  CHECK(both.sweep->points.front().index == 0);
  CHECK(both.sweep->points.back().index == 23);
  const ReportData twice = prepare_sweep_report({one, two, one});  // a directory given twice agrees with itself
  CHECK(twice.sweep->points.size() == 24);
  std::filesystem::remove_all(one);
  std::filesystem::remove_all(two);
}

TEST_CASE("sweep report: bad options and directories name the options field or the directory", "[outputs][report][sweep]") {
  const std::string dir = run_sweep_into(kSweep, "bad");
  auto path_of = [&](const SweepReportOptions& o, const std::vector<std::string>& dirs) {
    try {
      prepare_sweep_report(dirs, o);
    } catch (const SpecError& e) {
      return e.path();
    }
    return std::string("no error");
  };
  CHECK(path_of({"Q", "", ""}, {dir}) == "x");
  CHECK(path_of({"", "Q", ""}, {dir}) == "y");
  CHECK(path_of({"a", "a", ""}, {dir}) == "y");
  CHECK(path_of({"", "", "speed"}, {dir}) == "metric");
  CHECK(path_of({}, {dir + "/none"}) == dir + "/none");
  CHECK(path_of({}, {}) == "dirs");
  // Only y given: the x axis defaults to the first varying parameter not on y.
  const SweepReport r = read_sweep_report({dir}, {"", "a", ""});
  CHECK(r.file.parameters[static_cast<size_t>(r.x)].name == "g");
  CHECK(r.file.parameters[static_cast<size_t>(r.y)].name == "a");
  std::filesystem::remove_all(dir);
}

TEST_CASE("sweep report: a torn last line is skipped and said so", "[outputs][report][sweep]") {
  const std::string dir = run_sweep_into(kSweep, "torn");
  {
    std::ofstream out(dir + "/points.jsonl", std::ios::app | std::ios::binary);
    out << "{\"index\": 24, \"status\": \"me";  // a write cut short by a crash
  }
  const ReportData d = prepare_sweep_report({dir});
  CHECK(d.sweep->points.size() == 24);
  REQUIRE(d.sweep->torn.size() == 1);
  CHECK(report_sweep_summary_section(d).find("torn or corrupt line") != std::string::npos);
  std::filesystem::remove_all(dir);
}

TEST_CASE("sweep report: an index outside the sweep is not a point, and said so", "[outputs][report][sweep]") {
  const std::string dir = run_sweep_into(kSweep, "outside");
  // Drop point 3, add an index past the end (the sweep has 24 points) and a negative one.
  std::ifstream in(dir + "/points.jsonl");
  std::string line, kept;
  for (int n = 0; std::getline(in, line); ++n)
    if (n != 3) kept += line + "\n";
  in.close();
  std::ofstream(dir + "/points.jsonl", std::ios::binary | std::ios::trunc)
      << kept << "{\"index\": 99, \"status\": \"met\"}\n{\"index\": -1, \"status\": \"met\"}\n";
  const ReportData d = prepare_sweep_report({dir});
  CHECK(d.sweep->points.size() == 23);  // 23 of 24: the missing point stays missing
  REQUIRE(d.sweep->torn.size() == 1);
  CHECK(report_sweep_summary_section(d).find("an index outside the sweep") != std::string::npos);
  std::filesystem::remove_all(dir);
}

TEST_CASE("sweep table is cut at kSweepTableRows with a note", "[outputs][report][sweep]") {
  auto r = std::make_shared<SweepReport>();
  r->file = parse_sweep(nlohmann::json::parse(kSweep));
  r->expected = 24;
  for (long long i = 0; i < static_cast<long long>(kSweepTableRows) + 7; ++i) r->points.push_back(point(i, 1.0 + i, 1, PointStatus::Met, 1.0));
  ReportData d;
  d.job = JobKind::Sweep;
  d.sweep = r;
  const std::string t = report_sweep_points_section(d);
  size_t rows = 0;
  for (size_t p = t.find("<tr class=\"pw-point\">"); p != std::string::npos; p = t.find("<tr class=\"pw-point\">", p + 1)) ++rows;
  CHECK(rows == kSweepTableRows);
  CHECK(t.find("first 500 of 507 points") != std::string::npos);
}

TEST_CASE("sweep map defaults to the failing requirement, ticks at the swept values, legends that differ",
          "[outputs][report][sweep]") {
  // Closed form as above: PM = 90 - atan(wc / a) with wc sqrt(wc^2 + a^2) = g, overshoot
  // exp(-pi z / sqrt(1 - z^2)), z = a / (2 sqrt g). Count, over the points that miss, how often each
  // requirement fails; the map must show the one failing most (ties: overshoot, first in table order).
  for (const char* pms : {"[40, 60]", "[60, 75]"}) {  // kSweep's limits (a tie), then stricter ones
    std::string text = kSweep;
    text.replace(text.find("[40, 60]"), 8, pms);
    const std::string dir = run_sweep_into(text, "default-metric");
    const ReportData d = prepare_sweep_report({dir});
    const SweepReport& r = *d.sweep;
    int os_fails = 0, pm_fails = 0;
    for (const SweepReportPoint& p : r.points) {
      const double a = p.values[0], g = p.values[1], pm_min = p.values[2];
      double lo = 0.0, hi = std::sqrt(g) + g;
      for (int i = 0; i < 200; ++i) {
        const double m = 0.5 * (lo + hi);
        (m * std::sqrt(m * m + a * a) > g ? hi : lo) = m;
      }
      const double pm = 90.0 - std::atan(lo / a) * 180.0 / 3.14159265358979323846;
      const double z = a / (2.0 * std::sqrt(g));
      const double os = z < 1.0 ? 100.0 * std::exp(-3.14159265358979323846 * z / std::sqrt(1.0 - z * z)) : 0.0;
      os_fails += os > 25.0;
      pm_fails += pm < pm_min;
    }
    INFO("phase-margin limits " << pms << ": overshoot fails at " << os_fails << ", phase margin at " << pm_fails);
    CHECK(r.metric == (pm_fails > os_fails ? MetricId::PhaseMargin : MetricId::Overshoot));
    CHECK(r.worst_is_max == (r.metric == MetricId::Overshoot));
    if (std::string(pms) == "[60, 75]") CHECK(pm_fails > os_fails);  // this case decides for the phase margin
    std::filesystem::remove_all(dir);
  }
  const std::string dir = run_sweep_into(kSweep, "ticks");
  const ReportData d = prepare_sweep_report({dir});
  // Ticks sit at the swept values: a = 1, 2, 4, 8 and g = 0.5, 2, 8 are labelled; 5 or 10 are not.
  const std::vector<std::string> maps = outer_svgs(report_sweep_map_section(d));
  REQUIRE(maps.size() == 2);
  for (const char* v : {">1<", ">2<", ">4<", ">8<", ">0.5<"}) CHECK(maps[0].find(v) != std::string::npos);
  for (const char* v : {">5<", ">10<", ">6<"}) CHECK(maps[0].find(v) == std::string::npos);
  // No legend entry reads "x to x".
  const std::regex same(">[^<]* ([-0-9.e]+) to \\1<");
  CHECK_FALSE(std::regex_search(maps[1], same));
  std::filesystem::remove_all(dir);
}

namespace {

// One parameter: 1 / (s (s + 2)) under the gain g (0.5, 2, 8, 32 on a log scale), overshoot <= 25 %.
const char* const kStripSweep = R"({
  "name": "gain strip",
  "base": { "plant": { "gain": 1, "poles": [0, -2] },
            "requirements": { "overshoot_pct": { "max": 25 } },
            "current": { "gain": "g" } },
  "parameters": { "g": { "from": 0.5, "to": 32, "count": 4, "scale": "log" } },
  "sample": { "method": "grid" }, "job": "check", "seed": 1 })";

// Square markers (one "M" each) in the marker path filled with `colour`.
size_t markers_filled(const std::string& svg, const std::string& colour) {
  size_t n = 0;
  for (size_t pos = svg.find("pw-data pw-markers\" fill=\"" + colour + "\""); pos != std::string::npos;
       pos = svg.find("pw-data pw-markers\" fill=\"" + colour + "\"", pos + 1)) {
    const size_t d = svg.find(" d=\"", pos), q = svg.find('"', d + 4);
    for (size_t i = d + 4; i < q; ++i) n += svg[i] == 'M';
  }
  return n;
}

}  // namespace

TEST_CASE("sweep report: a one-parameter sweep is drawn as a strip with the limit and the verdicts", "[outputs][report][sweep]") {
  // The closed loop s^2 + 2 s + g has damping z = 1 / sqrt(g) and overshoot exp(-pi z / sqrt(1 - z^2))
  // (standard second-order results, worked by hand): g = 0.5 overdamped (0 %), g = 2 4.3 %, g = 8
  // 30.5 %, g = 32 57 %. Met for g <= 2, not met for g >= 8 against the 25 % limit.
  const std::string dir = run_sweep_into(kStripSweep, "strip");
  const ReportData d = prepare_sweep_report({dir});
  const SweepReport& r = *d.sweep;
  CHECK(r.strip());
  CHECK(r.metric == MetricId::Overshoot);
  const std::vector<SweepCell> cells = sweep_cells(r);
  REQUIRE(cells.size() == 4);
  for (const SweepCell& c : cells) {
    const double z = 1.0 / std::sqrt(c.x);
    const double os = z < 1.0 ? 100.0 * std::exp(-3.14159265358979323846 * z / std::sqrt(1.0 - z * z)) : 0.0;
    INFO("g = " << c.x << ", overshoot by hand " << os << " %");
    CHECK(c.category == (os <= 25.0 ? 0 : 1));
    REQUIRE(c.worst);
    CHECK(*c.worst == Approx(os).margin(1.0));
  }
  const std::string html = report_html(d);
  check_page(html, 1);
  const std::vector<std::string> svgs = outer_svgs(report_sweep_map_section(d));
  REQUIRE(svgs.size() == 1);
  const std::string& s = svgs[0];
  CHECK(s.find("requirement limit") != std::string::npos);
  CHECK(s.find("at most 25 %") != std::string::npos);
  CHECK(markers_filled(s, "#2f7d55") == 2);  // met (colour::kMet)
  CHECK(markers_filled(s, "#b3261e") == 2);  // not met (colour::kNotMet)
  CHECK(s.find("bad point or error") == std::string::npos);  // no legend entry for a verdict absent
  CHECK(s.find("boundary of the feasible values") != std::string::npos);
  for (const char* v : {">0.5<", ">2<", ">8<", ">32<"}) CHECK(s.find(v) != std::string::npos);  // ticks at the swept values
  CHECK(report_sweep_summary_section(d).find("g across, overshoot") != std::string::npos);
  CHECK(report_html(prepare_sweep_report({dir})) == html);  // deterministic
  std::filesystem::remove_all(dir);
}

TEST_CASE("sweep report: a y option for a one-parameter sweep is an error naming y", "[outputs][report][sweep]") {
  const std::string dir = run_sweep_into(kStripSweep, "strip-y");
  auto path_of = [&](const SweepReportOptions& o) {
    try {
      prepare_sweep_report({dir}, o);
    } catch (const SpecError& e) {
      return e.path();
    }
    return std::string("no error");
  };
  CHECK(path_of({"", "g", ""}) == "y");
  CHECK(path_of({"g", "g", ""}) == "y");
  CHECK(path_of({"Q", "", ""}) == "x");
  CHECK(path_of({"g", "", ""}) == "no error");
  CHECK(path_of({"", "", "phase_margin_deg"}) == "no error");  // a metric with no requirement: no limit line
  const ReportData d = prepare_sweep_report({dir}, {"", "", "phase_margin_deg"});
  CHECK(report_sweep_map_section(d).find("requirement limit") == std::string::npos);
  std::filesystem::remove_all(dir);
}
