#include "polewright/requirements/spec_parse.hpp"

#include <algorithm>
#include <cmath>
#include <map>

#include "json_reader.hpp"

namespace pw {

using detail::describe;
using detail::index_path;
using detail::json;
using detail::key_path;
using detail::member;
using detail::read_integer;
using detail::read_number;

const char* objective_name(Objective o) {
  switch (o) {
    case Objective::LeastEffort: return "least_effort";
    case Objective::Fastest: return "fastest";
    case Objective::MostRobust: return "most_robust";
    case Objective::Simplest: return "simplest";
  }
  return "least_effort";
}

const std::vector<std::string>& known_keys(const std::string& kind) {
  static const std::map<std::string, std::vector<std::string>> table = {
      {"spec",
       {"$schema", "name", "plant", "requirements", "stages", "current", "search", "analysis", "implementation", "actuator"}},
      {"plant", {"numerator", "denominator", "zeros", "poles", "gain", "delay_s", "measured", "measured_loop", "variants"}},
      {"plant_core", {"numerator", "denominator", "zeros", "poles", "gain", "delay_s", "measured", "measured_loop"}},
      {"variant", {"numerator", "denominator", "zeros", "poles", "gain", "delay_s", "measured", "measured_loop", "name"}},
      {"measured", {"file", "frequency_unit", "magnitude_unit", "data", "fit"}},
      {"measured_data", {"frequency_rad_s", "magnitude_ratio", "phase_deg", "coherence"}},
      {"measured_fit", {"max_poles", "penalty", "estimate_delay", "delay_s", "allow_unstable"}},
      {"compensator", {"numerator", "denominator", "zeros", "poles", "gain"}},
      {"requirements",
       {"overshoot_pct", "settling_time_s", "rise_time_s", "steady_state_error", "phase_margin_deg", "gain_margin_db",
        "crossover_rad_s", "bandwidth_rad_s", "peak_effort", "peak_sensitivity", "gain_tolerance_pct", "damping_ratio",
        "natural_frequency_rad_s", "delay_margin_s", "load_peak", "load_recovery_s", "load_iae", "output_peak",
        "output_recovery_s", "output_iae", "noise_effort_peak", "controller_hf_gain", "saturated_overshoot_pct",
        "saturated_settling_time_s", "saturated_rise_time_s", "saturated_load_peak", "saturated_load_recovery_s", "disturbance_step", "recovery_band_pct"}},
      {"stages", {"lead", "lag", "notch", "integrator", "pid", "frequency_range_rad_s"}},
      {"search", {"seed", "keep", "objective", "threads", "max_evaluations", "time_limit_s", "budget_s", "margin_pct"}},
      {"analysis", {"pade_order", "samples", "horizon_s", "residue_share_pct"}},
      {"implementation", implementation_keys()},
      {"actuator", {"min", "max", "rate_limit", "anti_windup", "tracking_time_s", "reference_step", "operating_reference"}},
      {"settling_time_s", {"max", "band_pct"}},
      {"steady_state_error", {"max", "input"}},
      {"controller_hf_gain", {"max", "frequency_rad_s"}},
      {"max_only", {"max"}},
      {"min_only", {"min"}},
      {"min_or_max", {"min", "max"}},
  };
  static const std::vector<std::string> none;
  auto it = table.find(kind);
  return it == table.end() ? none : it->second;
}

namespace {

// Where each key table lives in a spec, for a key written at the wrong level.
const char* table_place(const std::string& kind) {
  static const std::map<std::string, const char*> place = {
      {"spec", "at the top level of the spec"}, {"plant", "in $.plant"},
      {"requirements", "in $.requirements"},    {"stages", "in $.stages"},
      {"search", "in $.search"},                {"analysis", "in $.analysis"},
      {"actuator", "in $.actuator"},
      {"settling_time_s", "in $.requirements.settling_time_s"},
      {"steady_state_error", "in $.requirements.steady_state_error"},
  };
  auto it = place.find(kind);
  return it == place.end() ? nullptr : it->second;
}

// The place of another table that holds `key` ("" for none; min and max are everywhere).
std::string misplaced_key_hint(const std::string& key, const std::string& kind) {
  if (key == "min" || key == "max") return "";
  for (const char* other : {"spec", "plant", "requirements", "stages", "search", "analysis", "settling_time_s",
                            "steady_state_error"}) {
    if (kind == other) continue;
    const std::vector<std::string>& keys = known_keys(other);
    if (std::find(keys.begin(), keys.end(), key) != keys.end()) return table_place(other);
  }
  return "";
}

// expect_object for a spec table, which also names the level where a misplaced key belongs
// ("band_pct" written directly under requirements belongs in $.requirements.settling_time_s).
void expect_known(const json& j, const std::string& path, const std::string& kind) {
  const std::vector<std::string>& allowed = known_keys(kind);
  if (j.is_object())
    for (auto it = j.begin(); it != j.end(); ++it) {
      if (std::find(allowed.begin(), allowed.end(), it.key()) != allowed.end()) continue;
      const std::string place = misplaced_key_hint(it.key(), kind);
      if (!place.empty())
        throw SpecError(key_path(path, it.key()), "unknown key here (it belongs " + place + ")");
    }
  detail::expect_object(j, path, allowed);
}

// Per-requirement value rules: the open or closed interval a limit must lie in.
struct LimitRule {
  double lo;
  bool lo_open;
  double hi;  // INFINITY for none
  bool hi_open;
};

LimitRule rule_for(MetricId id) {
  switch (id) {
    case MetricId::Overshoot:
    case MetricId::SaturatedOvershoot: return {0.0, true, 100.0, true};
    case MetricId::SteadyStateError: return {0.0, false, INFINITY, true};
    case MetricId::PhaseMargin: return {0.0, true, 180.0, true};
    case MetricId::PeakSensitivity: return {1.0, false, INFINITY, true};
    case MetricId::GainTolerance: return {0.0, true, 100.0, true};
    case MetricId::DampingRatio: return {0.0, true, 1.0, false};
    default: return {0.0, true, INFINITY, true};
  }
}

std::string rule_text(const LimitRule& r) {
  auto num = [](double v) {
    char b[32];
    std::snprintf(b, sizeof b, "%g", v);
    return std::string(b);
  };
  std::string s = r.lo_open ? "> " + num(r.lo) : ">= " + num(r.lo);
  if (std::isfinite(r.hi)) s += r.hi_open ? " and < " + num(r.hi) : " and <= " + num(r.hi);
  return s;
}

double read_limit(const json& j, const std::string& path, MetricId id) {
  const double v = read_number(j, path);
  const LimitRule r = rule_for(id);
  const bool lo_ok = r.lo_open ? v > r.lo : v >= r.lo;
  const bool hi_ok = r.hi_open ? v < r.hi : v <= r.hi;
  if (!lo_ok || !hi_ok) throw SpecError(path, "must be " + rule_text(r) + " (got " + describe(j) + ")");
  return v;
}

RequirementSet parse_requirements(const json& j, const std::string& path) {
  expect_known(j, path, "requirements");
  RequirementSet set;
  for (const MetricInfo& info : metric_table()) {
    const json* r = member(j, info.key);
    if (!r) continue;
    const std::string rp = key_path(path, info.key);
    const char* kind = info.bounds == BoundKind::MaxOnly ? "max_only" : (info.bounds == BoundKind::MinOnly ? "min_only" : "min_or_max");
    if (info.id == MetricId::SettlingTime) kind = "settling_time_s";
    if (info.id == MetricId::SteadyStateError) kind = "steady_state_error";
    if (info.id == MetricId::ControllerHighFrequencyGain) kind = "controller_hf_gain";
    expect_known(*r, rp, kind);
    const json* mn = member(*r, "min");
    const json* mx = member(*r, "max");
    if (!mn && !mx)
      throw SpecError(rp, info.bounds == BoundKind::MinOnly ? "needs a \"min\"" : (info.bounds == BoundKind::MaxOnly ? "needs a \"max\"" : "needs a \"min\" or a \"max\""));
    std::optional<double> lo, hi;
    if (mn) lo = read_limit(*mn, key_path(rp, "min"), info.id);
    if (mx) hi = read_limit(*mx, key_path(rp, "max"), info.id);
    if (lo && hi && !(*lo < *hi)) throw SpecError(key_path(rp, "min"), "must be below max");
    if (lo) set.items.push_back({info.id, Sense::AtLeast, *lo});
    if (hi) set.items.push_back({info.id, Sense::AtMost, *hi});
    if (info.id == MetricId::SettlingTime) {
      if (const json* b = member(*r, "band_pct")) {
        const double band = read_number(*b, key_path(rp, "band_pct"));
        if (!(band > 0.0 && band < 100.0))
          throw SpecError(key_path(rp, "band_pct"), "must be > 0 and < 100 (got " + describe(*b) + ")");
        set.settling_band = band / 100.0;
      }
    }
    if (info.id == MetricId::ControllerHighFrequencyGain) {
      if (const json* f = member(*r, "frequency_rad_s")) {
        const std::string fp = key_path(rp, "frequency_rad_s");
        const double w = read_number(*f, fp, 1e12);
        if (!(w > 0.0)) throw SpecError(fp, "must be > 0 (got " + describe(*f) + ")");
        set.controller_gain_at_rad_s = w;
      }
    }
    if (info.id == MetricId::SteadyStateError) {
      if (const json* in = member(*r, "input")) {
        const std::string ip = key_path(rp, "input");
        if (!in->is_string()) throw SpecError(ip, "must be \"step\", \"ramp\" or \"parabola\"");
        const std::string s = in->get<std::string>();
        if (s == "step") set.error_signal = TestSignal::Step;
        else if (s == "ramp") set.error_signal = TestSignal::Ramp;
        else if (s == "parabola") set.error_signal = TestSignal::Parabola;
        else throw SpecError(ip, "must be \"step\", \"ramp\" or \"parabola\" (got " + describe(*in) + ")");
      }
    }
  }
  if (const json* d = member(j, "disturbance_step")) {
    const std::string dp = key_path(path, "disturbance_step");
    const double v = read_number(*d, dp);
    // Signed: with actuator limits the direction of a load decides the headroom it meets.
    if (v == 0.0) throw SpecError(dp, "must not be 0 (its sign is the direction of the step)");
    set.disturbance_step = v;
  }
  if (const json* b = member(j, "recovery_band_pct")) {
    const std::string bp = key_path(path, "recovery_band_pct");
    const double band = read_number(*b, bp);
    if (!(band > 0.0 && band < 100.0)) throw SpecError(bp, "must be > 0 and < 100 (got " + describe(*b) + ")");
    set.recovery_band = band / 100.0;
  }
  return set;
}

// $.actuator: the limits of the actuator, its anti-windup and the reference step it is judged on.
ActuatorLimits parse_actuator(const json& j, const std::string& path, double* reference_step,
                              std::optional<double>* operating_reference) {
  expect_known(j, path, "actuator");
  ActuatorLimits a;
  const json* mn = member(j, "min");
  const json* mx = member(j, "max");
  if (!mn) throw SpecError(key_path(path, "min"), "is missing: the actuator needs its lower limit");
  if (!mx) throw SpecError(key_path(path, "max"), "is missing: the actuator needs its upper limit");
  a.minimum = read_number(*mn, key_path(path, "min"));
  a.maximum = read_number(*mx, key_path(path, "max"));
  if (!(a.minimum < a.maximum)) throw SpecError(key_path(path, "min"), "must be below max");
  if (const json* r = member(j, "rate_limit")) {
    const double v = read_number(*r, key_path(path, "rate_limit"));
    if (!(v > 0.0)) throw SpecError(key_path(path, "rate_limit"), "must be > 0 (got " + describe(*r) + ")");
    a.rate_limit = v;
  }
  if (const json* w = member(j, "anti_windup")) {
    const std::string wp = key_path(path, "anti_windup");
    const std::string name = w->is_string() ? w->get<std::string>() : "";
    bool known = false;
    for (AntiWindup m : {AntiWindup::None, AntiWindup::BackCalculation, AntiWindup::Conditional})
      if (name == anti_windup_name(m)) {
        a.anti_windup = m;
        known = true;
      }
    if (!known)
      throw SpecError(wp, "must be \"none\", \"back_calculation\" or \"conditional\" (got " + describe(*w) + ")");
  }
  const std::string tp = key_path(path, "tracking_time_s");
  if (const json* t = member(j, "tracking_time_s")) {
    if (a.anti_windup != AntiWindup::BackCalculation)
      throw SpecError(tp, "is used by back_calculation only: set \"anti_windup\": \"back_calculation\" or leave it out");
    a.tracking_time_s = read_number(*t, tp);
    if (!(a.tracking_time_s > 0.0)) throw SpecError(tp, "must be > 0 (got " + describe(*t) + ")");
  } else if (a.anti_windup == AntiWindup::BackCalculation) {
    throw SpecError(tp, "is missing: back_calculation needs a tracking time (common practice: about the integral time)");
  }
  if (const json* s = member(j, "reference_step")) {
    const double v = read_number(*s, key_path(path, "reference_step"));
    if (v == 0.0) throw SpecError(key_path(path, "reference_step"), "must not be 0");
    *reference_step = v;
  }
  if (const json* o = member(j, "operating_reference")) *operating_reference = read_number(*o, key_path(path, "operating_reference"));
  return a;
}

StageSettings parse_stages(const json& j, const std::string& path) {
  expect_known(j, path, "stages");
  StageSettings s;
  if (const json* v = member(j, "lead")) s.lead = static_cast<int>(read_integer(*v, key_path(path, "lead"), 0, 4));
  if (const json* v = member(j, "lag")) s.lag = static_cast<int>(read_integer(*v, key_path(path, "lag"), 0, 4));
  if (const json* v = member(j, "notch")) s.notch = static_cast<int>(read_integer(*v, key_path(path, "notch"), 0, 4));
  if (const json* v = member(j, "integrator")) {
    const std::string ip = key_path(path, "integrator");
    if (v->is_boolean()) s.integrator = v->get<bool>() ? IntegratorChoice::On : IntegratorChoice::Off;
    else if (v->is_string() && v->get<std::string>() == "auto") s.integrator = IntegratorChoice::Auto;
    else throw SpecError(ip, "must be \"auto\", true or false (got " + describe(*v) + ")");
  }
  if (const json* v = member(j, "frequency_range_rad_s")) {
    const std::string fp = key_path(path, "frequency_range_rad_s");
    if (!v->is_array() || v->size() != 2) throw SpecError(fp, "must be [lo, hi] (got " + describe(*v) + ")");
    const double lo = read_number((*v)[0], index_path(fp, 0), 1e9);
    const double hi = read_number((*v)[1], index_path(fp, 1), 1e9);
    if (!(lo > 0.0)) throw SpecError(index_path(fp, 0), "must be > 0");
    if (!(hi > lo)) throw SpecError(index_path(fp, 1), "must be above lo (an empty or inverted range)");
    s.frequency_range_rad_s = std::make_pair(lo, hi);
  }
  if (const json* v = member(j, "pid")) {
    const std::string pp = key_path(path, "pid");
    if (!v->is_boolean()) throw SpecError(pp, "must be true or false (got " + describe(*v) + ")");
    s.pid = v->get<bool>();
    if (s.pid) {
      for (const char* k : {"lead", "lag", "integrator"})
        if (member(j, k))
          throw SpecError(key_path(path, k), "cannot be given with \"pid\": true (a PID with its filter is exactly an integrator "
                                             "and one lead; only notches may be added)");
      s.integrator = IntegratorChoice::On;
      s.lead = 1;
    }
  }
  if (s.notch > 0 && !s.frequency_range_rad_s)
    throw SpecError(key_path(path, "frequency_range_rad_s"), "is needed: a notch needs a frequency range to go in");
  return s;
}

SearchSettings parse_search(const json& j, const std::string& path) {
  expect_known(j, path, "search");
  SearchSettings s;
  if (const json* v = member(j, "seed")) s.seed = static_cast<unsigned long long>(read_integer(*v, key_path(path, "seed"), 0, 9007199254740991LL));
  if (const json* v = member(j, "keep")) s.keep = static_cast<int>(read_integer(*v, key_path(path, "keep"), 1, 100));
  if (const json* v = member(j, "threads")) s.threads = static_cast<int>(read_integer(*v, key_path(path, "threads"), 0, 1024));
  if (const json* v = member(j, "max_evaluations"))
    s.max_evaluations = read_integer(*v, key_path(path, "max_evaluations"), 1, 1000000000000LL);
  if (const json* v = member(j, "time_limit_s")) {
    s.time_limit_s = read_number(*v, key_path(path, "time_limit_s"), 1e7);
    if (!(s.time_limit_s > 0.0)) throw SpecError(key_path(path, "time_limit_s"), "must be > 0");
  }
  if (const json* v = member(j, "budget_s")) {
    s.budget_s = read_number(*v, key_path(path, "budget_s"), 1e7);
    if (!(s.budget_s >= 0.0)) throw SpecError(key_path(path, "budget_s"), "must be >= 0");
  }
  if (const json* v = member(j, "margin_pct")) {
    s.margin_pct = read_number(*v, key_path(path, "margin_pct"), 1e7);
    if (!(s.margin_pct >= 0.0 && s.margin_pct <= 50.0))
      throw SpecError(key_path(path, "margin_pct"), "must be within 0..50 (got " + describe(*v) + ")");
  }
  if (const json* v = member(j, "objective")) {
    const std::string op = key_path(path, "objective");
    const std::string name = v->is_string() ? v->get<std::string>() : "";
    bool found = false;
    for (Objective o : {Objective::LeastEffort, Objective::Fastest, Objective::MostRobust, Objective::Simplest})
      if (name == objective_name(o)) { s.objective = o; found = true; }
    if (!found) throw SpecError(op, "must be least_effort, fastest, most_robust or simplest (got " + describe(*v) + ")");
  }
  return s;
}

AnalysisOptions parse_analysis(const json& j, const std::string& path) {
  expect_known(j, path, "analysis");
  AnalysisOptions a;
  if (const json* v = member(j, "pade_order")) a.pade_order = static_cast<int>(read_integer(*v, key_path(path, "pade_order"), 1, kMaxPadeOrder));
  if (const json* v = member(j, "samples")) a.step.samples = static_cast<int>(read_integer(*v, key_path(path, "samples"), 100, 100000));
  if (const json* v = member(j, "horizon_s")) {
    a.step.horizon_s = read_number(*v, key_path(path, "horizon_s"), 1e9);
    if (!(a.step.horizon_s > 0.0)) throw SpecError(key_path(path, "horizon_s"), "must be > 0");
  }
  if (const json* v = member(j, "residue_share_pct")) {
    const double p = read_number(*v, key_path(path, "residue_share_pct"));
    if (!(p > 0.0 && p < 100.0)) throw SpecError(key_path(path, "residue_share_pct"), "must be > 0 and < 100");
    a.residue_share = p / 100.0;
  }
  return a;
}

std::vector<Plant> parse_plants(const json& j, const std::string& path, const Zpk* current) {
  expect_known(j, path, "plant");
  json core = j;
  core.erase("variants");
  std::vector<Plant> plants = {parse_plant_object(core, path, false, current)};
  if (const json* vs = member(j, "variants")) {
    const std::string vp = key_path(path, "variants");
    if (!vs->is_array()) throw SpecError(vp, "must be an array of plant objects");
    for (size_t i = 0; i < vs->size(); ++i) {
      const std::string ip = index_path(vp, i);
      const json& v = (*vs)[i];
      detail::expect_object(v, ip, known_keys("variant"));
      json merged = core;
      // A variant that names its own kind of plant (a measurement, or a transfer function) takes
      // nothing of the other kind from the nominal plant.
      const bool own_tf = member(v, "numerator") || member(v, "denominator") || member(v, "zeros") || member(v, "poles");
      if (member(v, "measured"))
        for (const char* k : {"numerator", "denominator", "zeros", "poles", "gain", "delay_s"}) merged.erase(k);
      else if (own_tf)
        for (const char* k : {"measured", "measured_loop"}) merged.erase(k);
      for (auto it = v.begin(); it != v.end(); ++it) merged[it.key()] = it.value();
      Plant p = parse_plant_object(merged, ip, true, current);
      if (!member(v, "name")) p.name = "variant " + std::to_string(i + 1);
      plants.push_back(p);
    }
  }
  return plants;
}

}  // namespace

Spec parse_spec(const json& doc) {
  expect_known(doc, "$", "spec");
  Spec s;
  if (const json* v = member(doc, "$schema"))
    if (!v->is_string()) throw SpecError("$.$schema", "must be a string");
  if (const json* v = member(doc, "name")) {
    if (!v->is_string()) throw SpecError("$.name", "must be a string");
    s.name = v->get<std::string>();
  }
  const json* plant = member(doc, "plant");
  if (!plant) throw SpecError("$.plant", "is missing: a spec needs a plant");
  // The compensator in service first: a measured loop (measured_loop: true) is divided by it.
  if (const json* v = member(doc, "current")) s.current = parse_compensator(*v, "$.current");
  s.plants = parse_plants(*plant, "$.plant", s.current ? &*s.current : nullptr);
  const json* req = member(doc, "requirements");
  if (!req) throw SpecError("$.requirements", "is missing: a spec needs requirements (an empty object checks nothing)");
  s.requirements = parse_requirements(*req, "$.requirements");
  if (const json* v = member(doc, "actuator"))
    s.requirements.actuator =
        parse_actuator(*v, "$.actuator", &s.requirements.reference_step, &s.requirements.operating_reference);
  for (const MetricInfo& m : metric_table())
    if (is_actuator_metric(m.id) && s.requirements.has(m.id) && !s.requirements.actuator)
      throw SpecError(key_path("$.requirements", m.key), "needs $.actuator: the limits the loop is simulated with");
  if (const json* v = member(doc, "stages")) s.stages = parse_stages(*v, "$.stages");
  if (const json* v = member(doc, "search")) s.search = parse_search(*v, "$.search");
  if (const json* v = member(doc, "analysis")) s.analysis = parse_analysis(*v, "$.analysis");
  if (const json* v = member(doc, "implementation")) s.implementation = parse_implementation(*v, "$.implementation");
  // The disturbance and noise figures (the on-request metrics) have no sampled-loop evaluation
  // yet: with an implementation block they would read as missing and fail. Refused, named.
  if (s.implementation)
    for (const Requirement& r : s.requirements.items)
      if (metric_info(r.metric).on_request)
        throw SpecError(key_path("$.requirements", metric_info(r.metric).key),
                        "is not judged on the sampled loop yet: with $.implementation, leave it out (or check it "
                        "on the continuous loop, without the block)");
  // The sampled loop of a measured plant would need the data's frequency response through the hold
  // and the sampler (aliasing included), which the points cannot give: refused, named.
  if (s.implementation)
    for (size_t i = 0; i < s.plants.size(); ++i)
      if (s.plants[i].measured)
        throw SpecError(i == 0 ? std::string("$.plant.measured") : index_path("$.plant.variants", i - 1) + ".measured",
                        "is not judged on the sampled loop yet: with $.implementation, give a transfer function (or check "
                        "the measured plant on the continuous loop, without the block)");
  s.analysis.step.band = s.requirements.settling_band;
  s.document = doc;
  return s;
}

}  // namespace pw
