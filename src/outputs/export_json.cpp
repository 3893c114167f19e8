#include <cmath>
#include <cstdio>

#include "polewright/outputs/export_output.hpp"
#include "polewright/outputs/json_values.hpp"

namespace pw {

namespace {

using json = nlohmann::json;

json metric_value_json(const MetricValue& v) { return v.infinite ? json("unbounded") : json_number(v); }

json metrics_json(const std::array<MetricValue, kMetricCount>& vals) {
  json j = json::object();
  for (const MetricInfo& info : metric_table()) {
    const MetricValue& v = vals[static_cast<size_t>(info.id)];
    if (metric_shown(info, v.known())) j[info.key] = metric_value_json(v);
  }
  return j;
}

json discrete_pole_json(const DiscretePole& p) {
  return {{"z", json_complex(p.z)},
          {"radius", json_number(std::abs(p.z))},
          {"s", json_complex(p.s)},
          {"damping", json_number(p.damping)},
          {"natural_frequency_rad_s", json_number(p.natural_frequency)},
          {"share", json_number(p.share)},
          {"matters", p.matters}};
}

}  // namespace

nlohmann::ordered_json export_json(const ExportReport& r) {
  nlohmann::ordered_json j;
  j["sample_time_s"] = json_number(r.options.sample_time_s);
  j["method"] = discrete_method_name(r.options.method);
  j["gain"] = json_number(r.cascade.gain);
  nlohmann::ordered_json secs = nlohmann::ordered_json::array();
  for (const Biquad& s : r.cascade.sections) {
    nlohmann::ordered_json sec;
    sec["b"] = {json_number(s.b[0]), json_number(s.b[1]), json_number(s.b[2])};
    sec["a"] = {json_number(s.a[0]), json_number(s.a[1]), json_number(s.a[2])};
    secs.push_back(sec);
  }
  j["sections"] = secs;
  j["tool"] = {{"name", "polewright"}, {"job", "export"}};
  j["design"] = {{"name", r.design_name}, {"source_job", job_kind_name(r.source_job)}, {"rank", r.rank}};
  j["warp_rad_s"] = r.warp_rad_s ? json_number(*r.warp_rad_s) : json(nullptr);
  j["compute_delay_samples"] = json_number(r.options.compute_delay_samples);
  j["continuous"] = json_zpk(r.continuous);
  j["continuous_pid_form"] = json_pid_form(r.continuous);
  const json dz = json_zpk(r.discrete);
  j["discrete"] = {{"gain", dz["gain"]}, {"zeros", dz["zeros"]}, {"poles", dz["poles"]}};
  json rad = json::array();
  for (size_t i = 0; i < r.cascade.sections.size(); ++i)
    rad.push_back({{"integrator", r.cascade.sections[i].integrator},
                   {"pole_radius", json_number(r.radii[i].double_radius)},
                   {"pole_radius_float", json_number(r.radii[i].float_radius)},
                   {"peak_gain", json_number(r.cascade.sections[i].peak_gain)},
                   {"peak_at_rad_s", json_number(r.cascade.sections[i].peak_at / r.options.sample_time_s)},
                   {"running_peak_gain", json_number(r.cascade.sections[i].running_peak)}});
  j["section_details"] = rad;
  json rv;
  rv["verified"] = r.verified;
  rv["status"] = !r.verified ? "not_verified" : (r.all_met ? "met" : "not_met");
  if (r.verified) {
    rv["stable"] = r.discrete_stable;
    json rows = json::array();
    for (const ExportOutcome& o : r.outcomes) {
      const MetricInfo& info = metric_info(o.requirement.metric);
      rows.push_back({{"requirement", info.key},
                      {"bound", o.requirement.sense == Sense::AtMost ? "max" : "min"},
                      {"limit", json_number(o.requirement.limit)},
                      {"continuous", metric_value_json(o.continuous)},
                      {"discrete", metric_value_json(o.discrete)},
                      {"met", o.met},
                      {"judged", o.judged},
                      {"worst_variant", o.worst_plant}});
    }
    rv["requirements"] = rows;
    rv["not_judged"] = r.not_judged;
    json vars = json::array();
    for (const ExportLoop& L : r.loops) {
      json poles = json::array();
      for (const DiscretePole& p : L.discrete_eval.poles) poles.push_back(discrete_pole_json(p));
      vars.push_back({{"name", L.plant_name},
                      {"continuous", metrics_json(L.continuous)},
                      {"discrete", metrics_json(L.discrete)},
                      {"discrete_stable", L.discrete_eval.stable},
                      {"closed_loop_poles_z", poles}});
    }
    rv["variants"] = vars;
    rv["crossover_rad_s"] = r.crossover_rad_s ? json_number(*r.crossover_rad_s) : json(nullptr);
  }
  j["reverification"] = rv;
  j["warnings"] = r.warnings;
  j["notes"] = r.notes;
  j["cautions"] = kCautions;
  return j;
}

std::string export_csv(const ExportReport& r) {
  auto g = [](double v) {
    char buf[64];
    std::snprintf(buf, sizeof buf, "%.17g", std::isfinite(v) ? v : 0.0);
    return std::string(buf);
  };
  std::string s;
  s += "# polewright export: " + r.design_name + ", method " + discrete_method_name(r.options.method) + ", sample time " +
       g(r.options.sample_time_s) + " s\n";
  s += "# H(z) = product of the rows' b(z^-1) / a(z^-1); row 0 is the gain\n";
  s += "# cautions: " + std::string(kCautions) + "\n";
  s += "section,b0,b1,b2,a0,a1,a2\n";
  s += "0," + g(r.cascade.gain) + ",0,0,1,0,0\n";
  for (size_t i = 0; i < r.cascade.sections.size(); ++i) {
    const Biquad& q = r.cascade.sections[i];
    s += std::to_string(i + 1) + "," + g(q.b[0]) + "," + g(q.b[1]) + "," + g(q.b[2]) + "," + g(q.a[0]) + "," + g(q.a[1]) +
         "," + g(q.a[2]) + "\n";
  }
  return s;
}

}  // namespace pw
