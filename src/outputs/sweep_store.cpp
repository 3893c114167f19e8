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

#include "polewright/outputs/atomic_file.hpp"
#include "polewright/outputs/check_output.hpp"
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
    nlohmann::json m = nlohmann::json::object(), unbounded = nlohmann::json::array();
    for (const MetricInfo& info : metric_table()) {
      const MetricValue& v = c.worst[static_cast<size_t>(info.id)];
      m[info.key] = json_number(v);
      if (v.infinite) unbounded.push_back(info.key);
    }
    j["metrics"] = m;
    j["unbounded"] = unbounded;
  }
  if (r.change_decades) j["change_decades"] = json_number(*r.change_decades);
  return j.dump();
}

PointsScan scan_points_file(const std::string& path) {
  PointsScan s;
  const std::string text = read_text(path);
  size_t pos = 0;
  while (pos < text.size()) {
    const size_t nl = text.find('\n', pos);
    if (nl == std::string::npos) {
      s.torn = true;  // a last line without its newline: cut short by a crash
      break;
    }
    nlohmann::json j = nlohmann::json::parse(text.begin() + static_cast<long>(pos), text.begin() + static_cast<long>(nl),
                                             nullptr, false);
    if (j.is_discarded() || !j.is_object() || !j.contains("index") || !j["index"].is_number_integer() ||
        !j.contains("status")) {
      s.torn = true;
      break;
    }
    s.points.push_back(std::move(j));
    pos = nl + 1;
    s.good_bytes = pos;
  }
  return s;
}

std::string summary_csv(const SweepFile& f, std::vector<nlohmann::json> points) {
  std::stable_sort(points.begin(), points.end(), [](const nlohmann::json& a, const nlohmann::json& b) {
    return a["index"].get<long long>() < b["index"].get<long long>();
  });
  std::string out = "index";
  for (const SweepParameter& p : f.parameters) out += "," + csv_field(p.name);
  out += ",status,structure";
  for (const MetricInfo& info : metric_table()) out += std::string(",") + info.key;
  out += ",change_decades,message\n";
  for (size_t i = 0; i < points.size(); ++i) {
    const nlohmann::json& p = points[i];
    if (i > 0 && points[i - 1]["index"] == p["index"])
      throw std::runtime_error("point " + p["index"].dump() + " appears twice");
    out += p["index"].dump();
    for (const SweepParameter& q : f.parameters) out += "," + csv_number(p["parameters"].value(q.name, nlohmann::json()));
    out += "," + csv_field(p.value("status", "")) + "," + csv_field(p.value("structure", ""));
    for (const MetricInfo& info : metric_table()) {
      const nlohmann::json v = p.contains("metrics") ? p["metrics"].value(info.key, nlohmann::json()) : nlohmann::json();
      const bool unbounded = p.contains("unbounded") && std::find(p["unbounded"].begin(), p["unbounded"].end(), info.key) != p["unbounded"].end();
      out += "," + (unbounded ? std::string("inf") : csv_number(v));
    }
    out += "," + csv_number(p.value("change_decades", nlohmann::json())) + "," + csv_field(p.value("message", "")) + "\n";
  }
  return out;
}

SweepStore::SweepStore(const std::string& dir, const SweepFile& f, Shard shard, bool resume) : dir_(dir), file_(&f) {
  namespace fs = std::filesystem;
  std::error_code ec;
  fs::create_directories(dir, ec);
  if (!fs::is_directory(dir)) throw std::runtime_error(dir + ": cannot create the output directory");
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
    const PointsScan scan = scan_points_file(points);
    torn_ = scan.torn;
    if (scan.torn && ::truncate(points.c_str(), static_cast<off_t>(scan.good_bytes)) != 0)
      throw std::runtime_error(points + ": cannot cut the torn last line: " + std::strerror(errno));
    for (const nlohmann::json& p : scan.points) done_.insert(p["index"].get<long long>());
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
  const PointsScan scan = scan_points_file(dir_ + "/points.jsonl");
  write_file_atomically(dir_ + "/summary.csv", summary_csv(*file_, scan.points));
}

MergeResult merge_sweep_dirs(const std::vector<std::string>& dirs) {
  if (dirs.empty()) throw SpecError("DIR", "merge needs at least one sweep directory");
  nlohmann::json sweep_doc;
  std::map<long long, nlohmann::json> points;
  for (const std::string& d : dirs) {
    const std::string header = d + "/sweep.json";
    if (!std::filesystem::exists(header)) throw SpecError(d, "is not a sweep directory (no sweep.json)");
    const nlohmann::json h = nlohmann::json::parse(read_text(header), nullptr, false);
    if (h.is_discarded() || !h.contains("sweep")) throw SpecError(header, "is not a sweep header");
    if (sweep_doc.is_null()) sweep_doc = h["sweep"];
    else if (h["sweep"] != sweep_doc) throw SpecError(d, "holds a different sweep from " + dirs.front());
    const PointsScan scan = scan_points_file(d + "/points.jsonl");
    for (const nlohmann::json& p : scan.points) {
      const long long i = p["index"].get<long long>();
      auto it = points.find(i);
      if (it != points.end() && it->second != p)
        throw std::runtime_error("point " + std::to_string(i) + " differs between directories");
      points.emplace(i, p);
    }
  }
  const SweepFile f = parse_sweep(sweep_doc);
  MergeResult m;
  m.expected = f.point_count();
  std::vector<nlohmann::json> list;
  list.reserve(points.size());
  for (auto& kv : points) list.push_back(kv.second);
  for (long long i = 0; i < m.expected; ++i)
    if (!points.count(i)) m.missing.push_back(i);
  m.csv = summary_csv(f, std::move(list));
  return m;
}

}  // namespace pw
