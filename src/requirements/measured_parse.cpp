// The `measured` plant entry: file inlining, point checks with JSON paths, and the fit.
#include "polewright/requirements/measured_parse.hpp"

#include <cmath>

#include "json_reader.hpp"
#include "polewright/requirements/spec_parse.hpp"

namespace pw {

using detail::describe;
using detail::index_path;
using detail::json;
using detail::key_path;
using detail::member;
using detail::read_number;

namespace {

constexpr int kMinMeasuredPoints = 8;
constexpr double kMaxPhaseStepDeg = 150.0;  // as MeasuredReadOptions: a larger step cannot be unwrapped

std::string folder_of(const std::string& path) {
  const size_t at = path.find_last_of('/');
  return at == std::string::npos ? std::string(".") : (at == 0 ? std::string("/") : path.substr(0, at));
}

std::string read_unit(const json& m, const char* key, const std::string& path) {
  const json* v = member(m, key);
  if (!v) return "";
  if (!v->is_string()) throw SpecError(key_path(path, key), "must be a string");
  return v->get<std::string>();
}

void inline_one(json& plant, const std::string& plant_path, const std::string& base_dir) {
  if (!plant.is_object()) return;  // the parser reports the wrong type
  auto it = plant.find("measured");
  if (it == plant.end() || !it->is_object()) return;
  json& m = *it;
  const std::string mp = key_path(plant_path, "measured");
  if (m.contains("data") || !m.contains("file")) return;
  if (!m["file"].is_string()) throw SpecError(key_path(mp, "file"), "must be a string (a CSV path relative to the spec)");
  const std::string file = m["file"].get<std::string>();
  if (file.empty()) throw SpecError(key_path(mp, "file"), "must not be empty");
  const std::string full = file[0] == '/' ? file : base_dir + "/" + file;
  MeasuredReadOptions ro;
  ro.frequency_unit = read_unit(m, "frequency_unit", mp);
  ro.magnitude_unit = read_unit(m, "magnitude_unit", mp);
  ro.min_points = kMinMeasuredPoints;
  ro.max_phase_step_deg = kMaxPhaseStepDeg;
  MeasuredResponse r;
  try {
    r = read_measured_file(full, ro);
  } catch (const MeasuredDataError& e) {
    throw SpecError(key_path(mp, "file"), e.what());
  }
  json w = json::array(), mag = json::array(), ph = json::array(), coh = json::array();
  for (size_t i = 0; i < r.size(); ++i) {
    w.push_back(r.w_rad_s[i]);
    mag.push_back(std::exp(r.log_mag[i]));
    ph.push_back(r.phase_rad[i] * 180.0 / M_PI);
  }
  for (double c : r.coherence) coh.push_back(c);
  json data = {{"frequency_rad_s", w}, {"magnitude_ratio", mag}, {"phase_deg", ph}};
  if (!r.coherence.empty()) data["coherence"] = coh;
  m["data"] = std::move(data);
}

std::vector<double> read_column(const json& d, const char* key, const std::string& path, bool required) {
  const json* c = member(d, key);
  const std::string cp = key_path(path, key);
  if (!c) {
    if (required) throw SpecError(cp, "is missing");
    return {};
  }
  if (!c->is_array()) throw SpecError(cp, "must be an array of numbers (got " + describe(*c) + ")");
  std::vector<double> out;
  for (size_t i = 0; i < c->size(); ++i) out.push_back(read_number((*c)[i], index_path(cp, i)));
  return out;
}

MeasuredResponse read_data(const json& d, const std::string& path, const std::string& source) {
  detail::expect_object(d, path, known_keys("measured_data"));
  const std::vector<double> w = read_column(d, "frequency_rad_s", path, true);
  const std::vector<double> mag = read_column(d, "magnitude_ratio", path, true);
  std::vector<double> ph = read_column(d, "phase_deg", path, true);
  const std::vector<double> coh = read_column(d, "coherence", path, false);
  if (w.size() < static_cast<size_t>(kMinMeasuredPoints))
    throw SpecError(key_path(path, "frequency_rad_s"),
                    std::to_string(w.size()) + " points, fewer than the " + std::to_string(kMinMeasuredPoints) + " needed");
  for (const auto& [col, key] : {std::pair<const std::vector<double>*, const char*>{&mag, "magnitude_ratio"}, {&ph, "phase_deg"}, {&coh, "coherence"}})
    if (!(col->empty() && std::string(key) == "coherence") && col->size() != w.size())
      throw SpecError(key_path(path, key), std::to_string(col->size()) + " values where frequency_rad_s has " + std::to_string(w.size()));
  for (size_t i = 0; i < w.size(); ++i) {
    if (!(w[i] > 0.0)) throw SpecError(index_path(key_path(path, "frequency_rad_s"), i), "must be positive");
    if (i > 0 && !(w[i] > w[i - 1])) throw SpecError(index_path(key_path(path, "frequency_rad_s"), i), "does not increase");
    if (!(mag[i] > 0.0)) throw SpecError(index_path(key_path(path, "magnitude_ratio"), i), "must be positive");
    if (!coh.empty() && !(coh[i] >= 0.0 && coh[i] <= 1.0))
      throw SpecError(index_path(key_path(path, "coherence"), i), "must lie within 0..1");
  }
  const int bad = unwrap_phase_deg(ph, kMaxPhaseStepDeg);
  if (bad >= 0)
    throw SpecError(index_path(key_path(path, "phase_deg"), static_cast<size_t>(bad)),
                    "changes by more than 150 deg from the previous point even after unwrapping: the sweep is too coarse "
                    "here to tell which way the phase turns");
  MeasuredResponse r;
  r.source = source;
  r.w_rad_s = w;
  for (double m : mag) r.log_mag.push_back(std::log(m));
  for (double p : ph) r.phase_rad.push_back(p * M_PI / 180.0);
  r.coherence = coh;
  return r;
}

FitOptions read_fit(const json* f, const std::string& path) {
  FitOptions o;
  if (!f) return o;
  detail::expect_object(*f, path, known_keys("measured_fit"));
  if (const json* v = member(*f, "max_poles")) o.max_poles = static_cast<int>(detail::read_integer(*v, key_path(path, "max_poles"), 1, 12));
  if (const json* v = member(*f, "penalty")) {
    o.penalty = read_number(*v, key_path(path, "penalty"), 1e6);
    if (!(o.penalty >= 0.0)) throw SpecError(key_path(path, "penalty"), "must be >= 0");
  }
  if (const json* v = member(*f, "estimate_delay")) {
    if (!v->is_boolean()) throw SpecError(key_path(path, "estimate_delay"), "must be true or false");
    o.estimate_delay = v->get<bool>();
  }
  if (const json* v = member(*f, "delay_s")) {
    if (o.estimate_delay) throw SpecError(key_path(path, "delay_s"), "conflicts with estimate_delay: true (give one of them)");
    o.delay_s = read_number(*v, key_path(path, "delay_s"), 1e9);
    if (!(o.delay_s >= 0.0)) throw SpecError(key_path(path, "delay_s"), "must be >= 0");
  }
  if (const json* v = member(*f, "allow_unstable")) {
    if (!v->is_boolean()) throw SpecError(key_path(path, "allow_unstable"), "must be true or false");
    o.enforce_stable = !v->get<bool>();
  }
  return o;
}

}  // namespace

void inline_measured_files(json& doc, const std::string& base_dir, const std::string& root) {
  if (!doc.is_object()) return;
  auto p = doc.find("plant");
  if (p == doc.end() || !p->is_object()) return;
  const std::string pp = key_path(root, "plant");
  inline_one(*p, pp, base_dir);
  auto vs = p->find("variants");
  if (vs == p->end() || !vs->is_array()) return;
  for (size_t i = 0; i < vs->size(); ++i) inline_one((*vs)[i], index_path(key_path(pp, "variants"), i), base_dir);
}

json read_spec_file(const std::string& path) {
  json doc = read_json_file(path);
  inline_measured_files(doc, folder_of(path));
  return doc;
}

json read_sweep_file(const std::string& path) {
  json doc = read_json_file(path);
  if (doc.is_object() && doc.contains("base")) inline_measured_files(doc["base"], folder_of(path), "$.base");
  return doc;
}

std::shared_ptr<const MeasuredPlant> parse_measured(const json& j, const std::string& path, const Zpk* current, bool from_loop) {
  detail::expect_object(j, path, known_keys("measured"));
  auto out = std::make_shared<MeasuredPlant>();
  if (const json* f = member(j, "file")) {
    if (!f->is_string()) throw SpecError(key_path(path, "file"), "must be a string (a CSV path relative to the spec)");
    out->file = f->get<std::string>();
  }
  (void)read_unit(j, "frequency_unit", path);
  (void)read_unit(j, "magnitude_unit", path);
  const json* d = member(j, "data");
  if (!d) {
    if (!out->file.empty())
      throw SpecError(key_path(path, "file"), "was not read: the spec was given as JSON text, not as a file beside its data");
    throw SpecError(path, "needs a file (a CSV path relative to the spec) or data");
  }
  MeasuredResponse r = read_data(*d, key_path(path, "data"), out->file.empty() ? key_path(path, "data") : out->file);
  if (from_loop) {
    if (!current) throw SpecError(path, "is a measured loop (measured_loop: true), which needs the compensator in service in $.current");
    try {
      r = measured_divide(r, *current);
    } catch (const MeasuredDataError& e) {
      throw SpecError(path, e.what());
    }
    out->from_loop = true;
  }
  const FitOptions fo = read_fit(member(j, "fit"), key_path(path, "fit"));
  out->fit = fit_rational(r, fo);
  out->data = std::move(r);
  return out;
}

}  // namespace pw
