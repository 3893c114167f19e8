#include "polewright/outputs/sweep_store.hpp"

#include <fcntl.h>
#include <sys/file.h>
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
#include <vector>

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

// A file written whole or not at all, streamed: a temporary file in the same folder, synced, renamed.
class AtomicWriter {
 public:
  explicit AtomicWriter(const std::string& path) : path_(path) {
    std::string tmpl = path + ".tmp-XXXXXX";
    std::vector<char> name(tmpl.begin(), tmpl.end());
    name.push_back('\0');
    fd_ = ::mkstemp(name.data());
    if (fd_ < 0) throw std::runtime_error("cannot write " + path + ": " + std::strerror(errno));
    tmp_ = name.data();
  }
  ~AtomicWriter() {
    if (fd_ >= 0) {
      ::close(fd_);
      ::unlink(tmp_.c_str());
    }
  }
  void write(const std::string& s) {
    buffer_ += s;
    if (buffer_.size() >= (1u << 16)) flush();
  }
  void commit() {
    flush();
    if (::fchmod(fd_, 0644) != 0 || ::fsync(fd_) != 0) throw std::runtime_error("cannot write " + path_ + ": " + std::strerror(errno));
    const int fd = fd_;
    fd_ = -1;
    if (::close(fd) != 0 || ::rename(tmp_.c_str(), path_.c_str()) != 0) {
      const int err = errno;
      ::unlink(tmp_.c_str());
      throw std::runtime_error("cannot write " + path_ + ": " + std::strerror(err));
    }
  }

 private:
  void flush() {
    write_all(fd_, buffer_, path_);
    buffer_.clear();
  }
  std::string path_, tmp_, buffer_;
  int fd_ = -1;
};

// Every line of a points file: `each(line_number, text, point)` with point null for a line that is
// not a point. Returns the scan's counts (torn last line, corrupt lines).
PointsScan scan_lines(const std::string& path,
                      const std::function<void(long long, const std::string&, const nlohmann::json*)>& each) {
  PointsScan s;
  std::ifstream in(path, std::ios::binary);
  std::string line;
  long long number = 0;
  while (std::getline(in, line)) {
    ++number;
    if (in.eof()) {
      s.torn = true;  // a last line without its newline: cut short by a crash
      break;
    }
    s.good_bytes += line.size() + 1;
    const nlohmann::json j = nlohmann::json::parse(line, nullptr, false);
    if (j.is_discarded() || !j.is_object() || !j.contains("index") || !j["index"].is_number_integer() ||
        !j.contains("status") || !j["status"].is_string()) {
      s.corrupt_lines.push_back(number);
      each(number, line, nullptr);
      continue;
    }
    each(number, line, &j);
  }
  return s;
}

std::string line_list(const std::vector<long long>& lines) {
  std::string out;
  for (size_t i = 0; i < lines.size() && i < 5; ++i) out += (i ? ", " : "") + std::to_string(lines[i]);
  if (lines.size() > 5) out += ", ...";
  return out;
}

unsigned long long fnv1a(const std::string& s) {
  unsigned long long h = 0xcbf29ce484222325ULL;
  for (unsigned char c : s) h = (h ^ c) * 0x100000001b3ULL;
  return h;
}

std::string host_name() {
  char buf[256] = {0};
  if (::gethostname(buf, sizeof buf - 1) != 0) return "unknown host";
  return buf;
}

}  // namespace

bool in_shard(const SweepFile& f, Shard shard, long long index) {
  return index >= 0 && index < f.point_count() && shard.n >= 1 && index % shard.n == shard.k - 1;
}

std::string point_line(const SweepFile& f, const SweepPointResult& r) {
  nlohmann::json j;
  j["index"] = r.index;
  nlohmann::json params = nlohmann::json::object();
  for (size_t i = 0; i < f.parameters.size() && i < r.values.size(); ++i) params[f.parameters[i].name] = json_number(r.values[i]);
  j["parameters"] = params;
  j["status"] = point_status_name(r.status);
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
  return scan_lines(path, [&](long long, const std::string&, const nlohmann::json* j) {
    if (j) each(*j);
  });
}

PointsScan scan_points_file(const std::string& path) {
  std::vector<nlohmann::json> points;
  PointsScan s = for_each_point(path, [&](const nlohmann::json& j) { points.push_back(j); });
  s.points = std::move(points);
  return s;
}

// The metric columns: every metric, the on-request ones (disturbance, noise) only when the base
// spec's requirements name them.
static std::vector<const MetricInfo*> summary_metrics(const SweepFile& f) {
  std::vector<const MetricInfo*> out;
  const nlohmann::json& b = f.base;
  const bool has_req = b.is_object() && b.contains("requirements") && b["requirements"].is_object();
  for (const MetricInfo& info : metric_table())
    if (!info.on_request || (has_req && b["requirements"].contains(info.key))) out.push_back(&info);
  return out;
}

std::string summary_header(const SweepFile& f) {
  std::string out = "index";
  for (const SweepParameter& p : f.parameters) out += "," + csv_field(p.name);
  out += ",status,structure";
  for (const MetricInfo* info : summary_metrics(f)) out += std::string(",") + info->key;
  return out + ",change_decades,message\n";
}

std::string summary_row(const SweepFile& f, const nlohmann::json& p) {
  std::string out = p["index"].dump();
  const nlohmann::json none;
  const nlohmann::json& params = p.contains("parameters") ? p["parameters"] : none;
  for (const SweepParameter& q : f.parameters) out += "," + csv_number(params.is_object() ? params.value(q.name, none) : none);
  // Lines are read back from disk: a value of the wrong type is left empty, never an exception.
  auto text = [&](const char* key) { return p.contains(key) && p[key].is_string() ? p[key].get<std::string>() : std::string(); };
  out += "," + csv_field(text("status")) + "," + csv_field(text("structure"));
  for (const MetricInfo* mi : summary_metrics(f)) {
    const MetricInfo& info = *mi;
    const nlohmann::json v = p.contains("metrics") && p["metrics"].is_object() ? p["metrics"].value(info.key, none) : none;
    const bool unbounded = p.contains("unbounded") && p["unbounded"].is_array() &&
                           std::find(p["unbounded"].begin(), p["unbounded"].end(), info.key) != p["unbounded"].end();
    out += "," + (unbounded ? std::string("inf") : csv_number(v));
  }
  return out + "," + csv_number(p.value("change_decades", none)) + "," + csv_field(text("message")) + "\n";
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
  if (!fs::is_directory(dir)) {
    if (fs::exists(dir)) throw SpecError("dir", dir + " is not a directory");
    throw SpecError("dir", dir + " cannot be created: " + (ec ? ec.message() : std::string("unknown error")));
  }
  if (::access(dir.c_str(), W_OK) != 0)
    throw SpecError("dir", dir + " is not writable: " + std::strerror(errno));
  // One writer per directory: an exclusive lock held until the store closes (the kernel drops it
  // when the process dies, so a killed run never leaves a stale lock).
  const std::string lock = dir + "/sweep.lock";
  lock_fd_ = ::open(lock.c_str(), O_RDWR | O_CREAT | O_CLOEXEC, 0644);
  if (lock_fd_ < 0) throw SpecError("dir", lock + ": cannot open: " + std::strerror(errno));
  if (::flock(lock_fd_, LOCK_EX | LOCK_NB) != 0) {
    const int err = errno;
    std::string holder = read_text(lock);
    while (!holder.empty() && (holder.back() == '\n' || holder.back() == '\r')) holder.pop_back();
    ::close(lock_fd_);
    lock_fd_ = -1;
    if (err == EWOULDBLOCK)
      throw SpecError("dir", dir + " is in use by another sweep run (" + (holder.empty() ? "holder unknown" : holder) +
                                   "); wait for it to end or use another directory");
    throw SpecError("dir", lock + ": cannot lock: " + std::strerror(err));
  }
  try {
    open_locked(f, shard, resume);
  } catch (...) {
    close_all();  // a constructor that throws runs no destructor: release the lock here
    throw;
  }
}

void SweepStore::close_all() {
  for (int* fd : {&points_fd_, &timings_fd_, &lock_fd_})
    if (*fd >= 0) {
      ::close(*fd);
      *fd = -1;
    }
}

void SweepStore::open_locked(const SweepFile& f, Shard shard, bool resume) {
  namespace fs = std::filesystem;
  const std::string& dir = dir_;
  const std::string lock = dir + "/sweep.lock";
  {
    char buf[400];
    std::snprintf(buf, sizeof buf, "pid %ld on host %s since %s\n", static_cast<long>(::getpid()), host_name().c_str(),
                  utc_now().c_str());
    if (::ftruncate(lock_fd_, 0) == 0) write_all(lock_fd_, buf, lock);
  }
  const std::string header = dir + "/sweep.json", points = dir + "/points.jsonl";
  const bool has_points = fs::exists(points) && fs::file_size(points) > 0;
  if (fs::exists(header)) {
    const nlohmann::json h = nlohmann::json::parse(read_text(header), nullptr, false);
    const bool same = !h.is_discarded() && h.contains("sweep") && h["sweep"] == f.document && h.contains("shard") &&
                      h["shard"].value("k", 0) == shard.k && h["shard"].value("n", 0) == shard.n;
    if (!same) throw SpecError("dir", dir + " holds a different sweep or shard; use another directory");
    if (!resume && has_points) throw SpecError("dir", dir + " already holds results of this sweep: use `resume` to continue it");
  } else {
    if (has_points) throw SpecError("dir", dir + " holds points but no sweep.json: use another directory");
    write_file_atomically(header, header_json(f, shard).dump(1) + "\n");
  }
  const long long total = f.point_count();
  done_.assign(static_cast<size_t>(total), false);
  if (has_points) {
    // Keep every valid line of this shard once; everything else is dropped and reported.
    std::vector<unsigned long long> hash_of;  // per index, of its kept line (for repeats)
    std::vector<long long> outside, outside_index;
    long long repeats = 0;
    bool rewrite = false;
    const PointsScan scan = scan_lines(points, [&](long long number, const std::string& text, const nlohmann::json* p) {
      if (!p) {
        rewrite = true;
        return;
      }
      const long long i = (*p)["index"].get<long long>();
      if (!in_shard(f, shard, i)) {
        outside.push_back(number);
        outside_index.push_back(i);
        rewrite = true;
        return;
      }
      if (hash_of.empty()) hash_of.assign(static_cast<size_t>(total), 0);
      const unsigned long long h = fnv1a(text) | 1;  // never 0, which means "not seen"
      unsigned long long& seen = hash_of[static_cast<size_t>(i)];
      if (seen != 0) {
        if (seen != h)
          throw SpecError("dir", points + ": point " + std::to_string(i) + " appears twice with different results (line " +
                                       std::to_string(number) + "); the directory was written by two runs: use another one");
        ++repeats;
        rewrite = true;
        return;
      }
      seen = h;
      done_[static_cast<size_t>(i)] = true;
      ++done_count_;
    });
    torn_ = scan.torn;
    if (rewrite) {
      // Rewrite the file with the kept lines only (atomically: the old one stays until the new one is whole).
      std::vector<bool> written(static_cast<size_t>(total), false);
      AtomicWriter out(points);
      scan_lines(points, [&](long long, const std::string& text, const nlohmann::json* p) {
        if (!p) return;
        const long long i = (*p)["index"].get<long long>();
        if (!in_shard(f, shard, i) || written[static_cast<size_t>(i)]) return;
        written[static_cast<size_t>(i)] = true;
        out.write(text + "\n");
      });
      out.commit();
    } else if (scan.torn && ::truncate(points.c_str(), static_cast<off_t>(scan.good_bytes)) != 0) {
      throw std::runtime_error(points + ": cannot cut the torn last line: " + std::strerror(errno));
    }
    const std::string where = points + ": ";
    if (scan.torn) repairs_.push_back(where + "cut a torn last line; that point runs again");
    if (!scan.corrupt_lines.empty())
      repairs_.push_back(where + "dropped " + std::to_string(scan.corrupt_lines.size()) + " corrupt line(s) (line " +
                         line_list(scan.corrupt_lines) + "); those points run again");
    if (!outside.empty()) {
      std::string idx;
      for (size_t k = 0; k < outside.size() && k < 5; ++k)
        idx += (k ? ", " : "") + std::to_string(outside[k]) + " (index " + std::to_string(outside_index[k]) + ")";
      if (outside.size() > 5) idx += ", ...";
      repairs_.push_back(where + "dropped " + std::to_string(outside.size()) + " line(s) whose index is outside this sweep" +
                         (shard.n > 1 ? " shard" : "") + ": line " + idx);
    }
    if (repeats > 0)
      repairs_.push_back(where + "dropped " + std::to_string(repeats) + " repeated identical line(s) (kept one of each)");
  }
  points_fd_ = ::open(points.c_str(), O_WRONLY | O_CREAT | O_APPEND | O_CLOEXEC, 0644);
  timings_fd_ = ::open((dir + "/timings.jsonl").c_str(), O_WRONLY | O_CREAT | O_APPEND | O_CLOEXEC, 0644);
  if (points_fd_ < 0 || timings_fd_ < 0) throw SpecError("dir", dir + ": cannot open the result files: " + std::strerror(errno));
  last_sync_ = now_s();
}

SweepStore::~SweepStore() {
  if (points_fd_ >= 0) ::fdatasync(points_fd_);
  close_all();  // closing the lock file releases the lock
}

void SweepStore::append(const SweepPointResult& r) {
  // One write per line: a crash leaves whole lines and at most one torn last line.
  write_all(points_fd_, point_line(*file_, r) + "\n", dir_ + "/points.jsonl");
  char buf[96];
  std::snprintf(buf, sizeof buf, "{\"index\":%lld,\"seconds\":%.6f}\n", r.index, r.seconds);
  write_all(timings_fd_, buf, dir_ + "/timings.jsonl");
  if (r.index >= 0 && static_cast<size_t>(r.index) < done_.size() && !done_[static_cast<size_t>(r.index)]) {
    done_[static_cast<size_t>(r.index)] = true;
    ++done_count_;
  }
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
  const std::string points = dir_ + "/points.jsonl";
  // Streamed: rows go straight to the file while the indices ascend (memory stays flat); a file out
  // of order (points rerun after a repair) is sorted in memory instead.
  {
    AtomicWriter out(dir_ + "/summary.csv");
    out.write(summary_header(*file_));
    long long last = -1;
    bool ordered = true;
    for_each_point(points, [&](const nlohmann::json& p) {
      if (!ordered) return;
      const long long i = p["index"].get<long long>();
      if (i == last) throw std::runtime_error("point " + std::to_string(i) + " appears twice");
      if (i < last) {
        ordered = false;
        return;
      }
      last = i;
      out.write(summary_row(*file_, p));
    });
    if (ordered) {
      out.commit();
      return;
    }
  }
  std::vector<std::pair<long long, std::string>> rows;
  for_each_point(points, [&](const nlohmann::json& p) { rows.emplace_back(p["index"].get<long long>(), summary_row(*file_, p)); });
  write_file_atomically(dir_ + "/summary.csv", assemble(*file_, rows));
}

MergeResult merge_sweep_dirs(const std::vector<std::string>& dirs) {
  if (dirs.empty()) throw SpecError("dirs", "merge needs at least one sweep directory");
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
  MergeResult m;
  m.expected = f.point_count();
  // Rows by index; a point found in two directories must agree. Lines that are not points of this
  // sweep are not used, and said so.
  std::map<long long, std::string> rows;
  for (const std::string& d : dirs) {
    std::vector<long long> outside;
    const PointsScan scan = for_each_point(d + "/points.jsonl", [&](const nlohmann::json& p) {
      const long long i = p["index"].get<long long>();
      if (i < 0 || i >= m.expected) {
        outside.push_back(i);
        return;
      }
      std::string row = summary_row(f, p);
      auto it = rows.find(i);
      if (it != rows.end() && it->second != row)
        throw std::runtime_error("point " + std::to_string(i) + " differs between directories");
      rows.emplace(i, std::move(row));
    });
    std::string note;
    if (scan.torn) note += "a torn last line";
    if (!scan.corrupt_lines.empty())
      note += (note.empty() ? "" : "; ") + std::to_string(scan.corrupt_lines.size()) + " corrupt line(s) (line " +
              line_list(scan.corrupt_lines) + ")";
    if (!outside.empty())
      note += (note.empty() ? "" : "; ") + std::to_string(outside.size()) + " line(s) with an index outside the sweep (index " +
              line_list(outside) + ")";
    if (!note.empty()) m.dropped.push_back(d + "/points.jsonl: not used: " + note);
  }
  m.csv = summary_header(f);
  for (const auto& kv : rows) m.csv += kv.second;
  for (long long i = 0; i < m.expected; ++i)
    if (!rows.count(i)) m.missing.push_back(i);
  return m;
}

}  // namespace pw
