#include "polewright/outputs/sweep_store.hpp"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <chrono>
#include <cstring>
#include <cmath>
#include <ctime>
#include <filesystem>
#include <fstream>
#include <map>
#include <sstream>
#include <stdexcept>

#include "atomic_file.hpp"
#include "polewright/outputs/check_output.hpp"
#include "polewright/outputs/design_output.hpp"
#include "polewright/outputs/json_values.hpp"
#include "polewright/requirements/metric.hpp"
#include "polewright/requirements/spec.hpp"

namespace pw {

namespace {

double now_s() {
  return std::chrono::duration<double>(std::chrono::steady_clock::now().time_since_epoch()).count();
}

std::string utc_now() {
  const std::time_t t = std::time(nullptr);
  std::tm tm{};
  gmtime_r(&t, &tm);
  char buf[32];
  std::strftime(buf, sizeof buf, "%Y-%m-%dT%H:%M:%SZ", &tm);
  return buf;
}

void write_all(int fd, const std::string& s, const std::string& path) {
  size_t off = 0;
  while (off < s.size()) {
    const ssize_t n = ::write(fd, s.data() + off, s.size() - off);
    if (n < 0) throw std::runtime_error(path + ": cannot write: " + std::strerror(errno));
    off += static_cast<size_t>(n);
  }
}

std::string read_text(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream ss;
  ss << in.rdbuf();
  return ss.str();
}

std::string csv_field(const std::string& s) {
  if (s.find_first_of(",\"\n\r") == std::string::npos) return s;
  std::string out = "\"";
  for (char c : s) out += c == '"' ? std::string("\"\"") : std::string(1, c);
  return out + "\"";
}

std::string csv_number(const nlohmann::json& v) {
  if (!v.is_number()) return "";
  const double d = v.get<double>();
  if (!std::isfinite(d)) return "";
  char buf[40];
  std::snprintf(buf, sizeof buf, "%.10g", d);
  return buf;
}

nlohmann::json header_json(const SweepFile& f, Shard shard) {
  return {{"tool", {{"name", "polewright"}, {"version", kToolVersion}, {"job", "sweep"}}},
          {"sweep", f.document},
          {"shard", {{"k", shard.k}, {"n", shard.n}}},
          {"points_total", f.point_count()},
          {"started_utc", utc_now()}};
}

}  // namespace

std::string point_line(const SweepFile& f, const SweepPointResult& r) {
  nlohmann::json j;
  j["index"] = r.index;
  nlohmann::json params = nlohmann::json::object();
  for (size_t i = 0; i < f.parameters.size() && i < r.values.size(); ++i) params[f.parameters[i].name] = json_number(r.values[i]);
  j["parameters"] = params;
  j["status"] = r.status;
  if (!r.message.empty()) j["message"] = r.message;
  if (r.top) {
    const Candidate& c = *r.top;
    j["structure"] = r.structure;
    j["meets"] = c.meets;
    j["compensator"] = json_zpk(c.compensator);
    add_metrics(j, c.worst);
  }
  if (r.change_decades) j["change_decades"] = json_number(*r.change_decades);
  return j.dump();
}

PointsScan for_each_point(const std::string& path, const std::function<void(const nlohmann::json&)>& each) {
  PointsScan s;
  std::ifstream in(path, std::ios::binary);
  std::string line;
  while (std::getline(in, line)) {
    if (in.eof()) {
      s.torn = true;  // a last line without its newline: cut short by a crash
      break;
    }
    const nlohmann::json j = nlohmann::json::parse(line, nullptr, false);
    if (j.is_discarded() || !j.is_object() || !j.contains("index") || !j["index"].is_number_integer() ||
        !j.contains("status")) {
      s.torn = true;  // corrupt: it and everything after it are redone
      break;
    }
    each(j);
    s.good_bytes += line.size() + 1;
  }
  return s;
}

PointsScan scan_points_file(const std::string& path) {
  std::vector<nlohmann::json> points;
  PointsScan s = for_each_point(path, [&](const nlohmann::json& j) { points.push_back(j); });
  s.points = std::move(points);
  return s;
}

std::string summary_header(const SweepFile& f) {
  std::string out = "index";
  for (const SweepParameter& p : f.parameters) out += "," + csv_field(p.name);
  out += ",status,structure";
  for (const MetricInfo& info : metric_table()) out += std::string(",") + info.key;
  return out + ",change_decades,message\n";
}

std::string summary_row(const SweepFile& f, const nlohmann::json& p) {
  std::string out = p["index"].dump();
  const nlohmann::json none;
  const nlohmann::json& params = p.contains("parameters") ? p["parameters"] : none;
  for (const SweepParameter& q : f.parameters) out += "," + csv_number(params.is_object() ? params.value(q.name, none) : none);
  out += "," + csv_field(p.value("status", "")) + "," + csv_field(p.value("structure", ""));
  for (const MetricInfo& info : metric_table()) {
    const nlohmann::json v = p.contains("metrics") && p["metrics"].is_object() ? p["metrics"].value(info.key, none) : none;
    const bool unbounded = p.contains("unbounded") && p["unbounded"].is_array() &&
                           std::find(p["unbounded"].begin(), p["unbounded"].end(), info.key) != p["unbounded"].end();
    out += "," + (unbounded ? std::string("inf") : csv_number(v));
  }
  return out + "," + csv_number(p.value("change_decades", none)) + "," + csv_field(p.value("message", "")) + "\n";
}

namespace {
// Rows sorted by index; a repeated index is an error.
std::string assemble(const SweepFile& f, std::vector<std::pair<long long, std::string>>& rows) {
  std::stable_sort(rows.begin(), rows.end(), [](const auto& a, const auto& b) { return a.first < b.first; });
  std::string out = summary_header(f);
  for (size_t i = 0; i < rows.size(); ++i) {
    if (i > 0 && rows[i - 1].first == rows[i].first)
      throw std::runtime_error("point " + std::to_string(rows[i].first) + " appears twice");
    out += rows[i].second;
  }
  return out;
}
}  // namespace

std::string summary_csv(const SweepFile& f, std::vector<nlohmann::json> points) {
  std::vector<std::pair<long long, std::string>> rows;
  for (const nlohmann::json& p : points) rows.emplace_back(p["index"].get<long long>(), summary_row(f, p));
  return assemble(f, rows);
}

SweepStore::SweepStore(const std::string& dir, const SweepFile& f, Shard shard, bool resume) : dir_(dir), file_(&f) {
  namespace fs = std::filesystem;
  std::error_code ec;
  fs::create_directories(dir, ec);
  if (!fs::is_directory(dir)) throw SpecError("--out", dir + " is not a directory and cannot be created");
  const std::string header = dir + "/sweep.json", points = dir + "/points.jsonl";
  const bool has_points = fs::exists(points) && fs::file_size(points) > 0;
  if (fs::exists(header)) {
    const nlohmann::json h = nlohmann::json::parse(read_text(header), nullptr, false);
    const bool same = !h.is_discarded() && h.contains("sweep") && h["sweep"] == f.document && h.contains("shard") &&
                      h["shard"].value("k", 0) == shard.k && h["shard"].value("n", 0) == shard.n;
    if (!same) throw SpecError("--out", dir + " holds a different sweep or shard; use another directory");
    if (!resume && has_points) throw SpecError("--out", dir + " already holds results of this sweep: add --resume to continue it");
  } else {
    if (has_points) throw SpecError("--out", dir + " holds points but no sweep.json: use another directory");
    write_file_atomically(header, header_json(f, shard).dump(1) + "\n");
  }
  if (has_points) {
    const PointsScan scan = for_each_point(points, [&](const nlohmann::json& p) { done_.insert(p["index"].get<long long>()); });
    torn_ = scan.torn;
    if (scan.torn && ::truncate(points.c_str(), static_cast<off_t>(scan.good_bytes)) != 0)
      throw std::runtime_error(points + ": cannot cut the torn last line: " + std::strerror(errno));
  }
  points_fd_ = ::open(points.c_str(), O_WRONLY | O_CREAT | O_APPEND | O_CLOEXEC, 0644);
  timings_fd_ = ::open((dir + "/timings.jsonl").c_str(), O_WRONLY | O_CREAT | O_APPEND | O_CLOEXEC, 0644);
  if (points_fd_ < 0 || timings_fd_ < 0) throw std::runtime_error(dir + ": cannot open the result files");
  last_sync_ = now_s();
}

SweepStore::~SweepStore() {
  if (points_fd_ >= 0) {
    ::fdatasync(points_fd_);
    ::close(points_fd_);
  }
  if (timings_fd_ >= 0) ::close(timings_fd_);
}

void SweepStore::append(const SweepPointResult& r) {
  // One write per line: a crash leaves whole lines and at most one torn last line.
  write_all(points_fd_, point_line(*file_, r) + "\n", dir_ + "/points.jsonl");
  char buf[96];
  std::snprintf(buf, sizeof buf, "{\"index\":%lld,\"seconds\":%.6f}\n", r.index, r.seconds);
  write_all(timings_fd_, buf, dir_ + "/timings.jsonl");
  done_.insert(r.index);
  if (++unsynced_ >= batch || now_s() - last_sync_ > 1.0) sync();
}

void SweepStore::sync() {
  ::fdatasync(points_fd_);
  ::fdatasync(timings_fd_);
  unsynced_ = 0;
  last_sync_ = now_s();
}

void SweepStore::finish() {
  sync();
  std::vector<std::pair<long long, std::string>> rows;
  for_each_point(dir_ + "/points.jsonl",
                 [&](const nlohmann::json& p) { rows.emplace_back(p["index"].get<long long>(), summary_row(*file_, p)); });
  write_file_atomically(dir_ + "/summary.csv", assemble(*file_, rows));
}

MergeResult merge_sweep_dirs(const std::vector<std::string>& dirs) {
  if (dirs.empty()) throw SpecError("DIR", "merge needs at least one sweep directory");
  nlohmann::json sweep_doc;
  for (const std::string& d : dirs) {
    const std::string header = d + "/sweep.json";
    if (!std::filesystem::exists(header)) throw SpecError(d, "is not a sweep directory (no sweep.json)");
    const nlohmann::json h = nlohmann::json::parse(read_text(header), nullptr, false);
    if (h.is_discarded() || !h.contains("sweep")) throw SpecError(header, "is not a sweep header");
    if (sweep_doc.is_null()) sweep_doc = h["sweep"];
    else if (h["sweep"] != sweep_doc) throw SpecError(d, "holds a different sweep from " + dirs.front());
  }
  const SweepFile f = parse_sweep(sweep_doc);
  // Rows by index; a point found in two directories must agree.
  std::map<long long, std::string> rows;
  for (const std::string& d : dirs)
    for_each_point(d + "/points.jsonl", [&](const nlohmann::json& p) {
      const long long i = p["index"].get<long long>();
      std::string row = summary_row(f, p);
      auto it = rows.find(i);
      if (it != rows.end() && it->second != row)
        throw std::runtime_error("point " + std::to_string(i) + " differs between directories");
      rows.emplace(i, std::move(row));
    });
  MergeResult m;
  m.expected = f.point_count();
  m.csv = summary_header(f);
  for (const auto& kv : rows) m.csv += kv.second;
  for (long long i = 0; i < m.expected; ++i)
    if (!rows.count(i)) m.missing.push_back(i);
  return m;
}

}  // namespace pw
