#include <algorithm>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <limits>
#include <map>
#include <sstream>

#include "polewright/outputs/report_sweep.hpp"
#include "svg_palette.hpp"
#include "report_sweep_map.hpp"
#include "polewright/outputs/sweep_store.hpp"
#include "polewright/requirements/spec.hpp"

namespace pw {

namespace {

nlohmann::json read_header(const std::string& dir) {
  const std::string path = dir + "/sweep.json";
  if (!std::filesystem::is_regular_file(path)) throw SpecError(dir, "is a directory, but not a sweep directory (no sweep.json) nor a result file");
  std::ifstream in(path, std::ios::binary);
  std::stringstream ss;
  ss << in.rdbuf();
  const nlohmann::json h = nlohmann::json::parse(ss.str(), nullptr, false);
  if (h.is_discarded() || !h.is_object() || !h.contains("sweep")) throw SpecError(path, "is not a sweep header");
  return h;
}

SweepReportPoint point_of(const SweepFile& f, const nlohmann::json& p) {
  SweepReportPoint q;
  q.index = p["index"].get<long long>();
  const nlohmann::json none;
  const nlohmann::json& params = p.contains("parameters") && p["parameters"].is_object() ? p["parameters"] : none;
  for (const SweepParameter& s : f.parameters) {
    const nlohmann::json v = params.is_object() ? params.value(s.name, none) : none;
    q.values.push_back(v.is_number() ? v.get<double>() : NAN);
  }
  if (p["status"].is_string()) q.status = point_status_from_name(p["status"].get<std::string>()).value_or(PointStatus::Error);
  if (p.contains("structure") && p["structure"].is_string()) q.structure = p["structure"].get<std::string>();
  if (p.contains("message") && p["message"].is_string()) q.message = p["message"].get<std::string>();
  const bool has_metrics = p.contains("metrics") && p["metrics"].is_object();
  for (const MetricInfo& info : metric_table()) {
    const size_t k = static_cast<size_t>(info.id);
    const bool unbounded = p.contains("unbounded") && p["unbounded"].is_array() &&
                           std::find(p["unbounded"].begin(), p["unbounded"].end(), info.key) != p["unbounded"].end();
    if (unbounded) {
      q.metrics[k] = std::numeric_limits<double>::infinity();
    } else if (has_metrics && p["metrics"].contains(info.key) && p["metrics"][info.key].is_number()) {
      const double v = p["metrics"][info.key].get<double>();
      if (std::isfinite(v)) q.metrics[k] = v;
    }
  }
  if (p.contains("change_decades") && p["change_decades"].is_number()) q.change_decades = p["change_decades"].get<double>();
  return q;
}

std::string names_of(const SweepFile& f) {
  std::string s;
  for (const SweepParameter& p : f.parameters) s += (s.empty() ? "" : ", ") + p.name;
  return s;
}

int parameter_index(const SweepFile& f, const std::string& name, const std::string& field) {
  for (size_t i = 0; i < f.parameters.size(); ++i)
    if (f.parameters[i].name == name) return static_cast<int>(i);
  throw SpecError(field, "\"" + name + "\" is not a parameter of the sweep (" + names_of(f) + ")");
}

bool varies(const SweepFile& f, const SweepParameter& p) {
  if (f.sample == SweepSample::Grid) return p.grid_count() > 1;
  return p.is_range() || p.values.size() > 1;
}

// "runs/joint/" -> "joint".
std::string dir_name(const std::string& dir) {
  std::filesystem::path p = std::filesystem::path(dir).lexically_normal();
  if (p.filename().empty()) p = p.parent_path();
  return p.filename().string();
}

// The default metric of the map: the base requirement that fails at the most points that missed
// (limits written as expressions are evaluated at each point; at most kMaxVotes points are asked),
// ties and a sweep where nothing missed to the first requirement in metric table order.
MetricId default_map_metric(const SweepReport& r, const nlohmann::json& req) {
  constexpr long long kMaxVotes = 20000;
  std::vector<MetricId> ids;
  for (const MetricInfo& info : metric_table())
    if (req.contains(info.key)) ids.push_back(info.id);
  if (ids.empty()) return MetricId::Overshoot;
  std::vector<long long> fails(ids.size(), 0);
  long long asked = 0;
  for (const SweepReportPoint& p : r.points) {
    if (p.status != PointStatus::NotMet) continue;
    if (++asked > kMaxVotes) break;
    std::optional<nlohmann::json> spec;  // the point's own spec, made only when a limit needs it
    for (size_t i = 0; i < ids.size(); ++i) {
      const MetricInfo& info = metric_info(ids[i]);
      const nlohmann::json& rq = req[info.key];
      if (!rq.is_object()) continue;
      const std::optional<double>& v = p.metrics[static_cast<size_t>(info.id)];
      bool failed = false;
      for (const char* bound : {"max", "min"}) {
        if (!rq.contains(bound)) continue;
        double limit = NAN;
        if (rq[bound].is_number()) limit = rq[bound].get<double>();
        else {
          try {
            if (!spec) spec = point_spec(r.file, p.values, point_seed(r.file.seed, p.index));
            const nlohmann::json& q = (*spec)["requirements"][info.key][bound];
            if (q.is_number()) limit = q.get<double>();
          } catch (const std::exception&) {
          }
        }
        if (!std::isfinite(limit)) continue;
        const bool at_most = std::string(bound) == "max";
        failed = failed || !v || (at_most ? *v > limit : *v < limit);
      }
      fails[i] += failed ? 1 : 0;
    }
  }
  size_t best = 0;
  for (size_t i = 1; i < ids.size(); ++i)
    if (fails[i] > fails[best]) best = i;
  return ids[best];
}

}  // namespace

long long SweepReport::count(PointStatus status) const {
  long long n = 0;
  for (const SweepReportPoint& p : points) n += p.status == status;
  return n;
}

SweepReport read_sweep_report(const std::vector<std::string>& dirs, const SweepReportOptions& o) {
  if (dirs.empty()) throw SpecError("dirs", "the report needs a sweep directory");
  SweepReport r;
  r.dirs = dirs;
  nlohmann::json doc;
  for (const std::string& d : dirs) {
    const nlohmann::json h = read_header(d);
    if (doc.is_null()) doc = h["sweep"];
    else if (h["sweep"] != doc) throw SpecError(d, "holds a different sweep from " + dirs.front());
  }
  r.file = parse_sweep(doc);
  r.expected = r.file.point_count();
  const SweepFile& f = r.file;

  // Axes and metric.
  if (f.parameters.size() == 1) {  // a strip: the parameter across, the metric up; no y parameter
    if (!o.y.empty())
      throw SpecError("y", "the sweep has one parameter (" + f.parameters[0].name + "); its report is a strip (the metric up) and takes no y parameter");
    r.x = 0;
    r.y = -1;
  }
  std::vector<int> varying;
  for (size_t i = 0; i < f.parameters.size() && r.y >= 0; ++i)
    if (varies(f, f.parameters[i])) varying.push_back(static_cast<int>(i));
  for (size_t i = 0; i < f.parameters.size() && varying.size() < 2 && r.y >= 0; ++i)
    if (std::find(varying.begin(), varying.end(), static_cast<int>(i)) == varying.end()) varying.push_back(static_cast<int>(i));
  // An axis left to its default takes the first varying parameter the other axis does not use.
  const int given_x = o.x.empty() ? -1 : parameter_index(f, o.x, "x");
  const int given_y = o.y.empty() ? -1 : parameter_index(f, o.y, "y");
  auto first_other = [&](int used) { return varying[0] == used ? varying[1] : varying[0]; };
  if (r.y >= 0) {
    r.x = given_x >= 0 ? given_x : first_other(given_y);
    r.y = given_y >= 0 ? given_y : first_other(r.x);
  }
  if (r.x == r.y) throw SpecError(o.y.empty() ? "x" : "y", "\"" + f.parameters[static_cast<size_t>(r.x)].name + "\" is on both axes: choose two different parameters");
  const nlohmann::json req = f.base.contains("requirements") && f.base["requirements"].is_object() ? f.base["requirements"] : nlohmann::json::object();
  if (!o.metric.empty()) {
    bool found = false;
    std::string keys;
    for (const MetricInfo& info : metric_table()) {
      keys += (keys.empty() ? "" : ", ") + std::string(info.key);
      if (o.metric == info.key) {
        r.metric = info.id;
        found = true;
      }
    }
    if (!found) throw SpecError("metric", "\"" + o.metric + "\" is not a metric (one of " + keys + ")");
  }

  // Points, merged by index.
  std::map<long long, std::pair<std::string, SweepReportPoint>> by_index;
  for (const std::string& d : dirs) {
    const std::string path = d + "/points.jsonl";
    if (!std::filesystem::is_regular_file(path)) throw SpecError(d, "holds no points.jsonl");
    long long outside = 0;
    const PointsScan scan = for_each_point(path, [&](const nlohmann::json& p) {
      const long long i = p["index"].get<long long>();
      if (i < 0 || i >= r.expected) {  // not a point of this sweep: never counted as one
        ++outside;
        return;
      }
      std::string text = p.dump();
      auto it = by_index.find(i);
      if (it != by_index.end()) {
        if (it->second.first != text) throw SpecError(d, "point " + std::to_string(i) + " differs from the same point in another directory");
        return;
      }
      by_index.emplace(i, std::make_pair(std::move(text), point_of(f, p)));
    });
    if (scan.torn || !scan.corrupt_lines.empty() || outside > 0) r.torn.push_back(d);
  }
  for (auto& kv : by_index) r.points.push_back(std::move(kv.second.second));
  if (o.metric.empty()) r.metric = default_map_metric(r, req);
  const MetricInfo& mi = metric_info(r.metric);
  const nlohmann::json* rq = req.contains(mi.key) ? &req[mi.key] : nullptr;
  if (rq && rq->is_object() && rq->contains("min") && !rq->contains("max")) r.worst_is_max = false;
  else if (rq && rq->is_object() && rq->contains("max")) r.worst_is_max = true;
  else r.worst_is_max = mi.bounds != BoundKind::MinOnly;
  return r;
}

std::vector<SweepCell> sweep_cells(const SweepReport& r) {
  std::map<std::pair<double, double>, SweepCell> cells;
  const size_t m = static_cast<size_t>(r.metric);
  for (const SweepReportPoint& p : r.points) {
    const double x = p.values[static_cast<size_t>(r.x)], y = r.strip() ? 0.0 : p.values[static_cast<size_t>(r.y)];
    if (!std::isfinite(x) || !std::isfinite(y)) continue;
    SweepCell& c = cells[{x, y}];
    c.x = x;
    c.y = y;
    ++c.points;
    if (p.status == PointStatus::Met) ++c.met;
    else if (p.status == PointStatus::NotMet) ++c.not_met;
    else ++c.failed;
    if (p.metrics[m]) {
      const double v = *p.metrics[m];
      if (!c.worst) c.worst = v;
      else c.worst = r.worst_is_max ? std::max(*c.worst, v) : std::min(*c.worst, v);
    }
  }
  std::vector<SweepCell> out;
  for (auto& kv : cells) {
    SweepCell& c = kv.second;
    c.category = c.met == c.points ? 0 : c.not_met > 0 ? 1 : 2;
    out.push_back(c);
  }
  return out;
}

std::vector<MapPoint> sweep_map_points(const std::vector<SweepCell>& cells) {
  std::vector<MapPoint> out;
  for (const SweepCell& c : cells) {
    MapPoint p;
    p.x = c.x;
    p.y = c.y;
    p.category = c.category;
    if (c.worst && std::isfinite(*c.worst)) p.value = *c.worst;
    p.feasible = c.category == 0;
    out.push_back(p);
  }
  return out;
}

ReportData prepare_sweep_report(const std::vector<std::string>& dirs, const SweepReportOptions& options) {
  ReportData d;
  d.job = JobKind::Sweep;
  auto s = std::make_shared<SweepReport>(read_sweep_report(dirs, options));
  d.name = s->file.document.contains("name") && s->file.document["name"].is_string() ? s->file.document["name"].get<std::string>()
                                                                                       : dir_name(dirs.front());
  d.document = s->file.document;
  d.sweep = std::move(s);
  return d;
}

}  // namespace pw
