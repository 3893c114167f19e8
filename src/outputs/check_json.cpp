#include <cmath>

#include "polewright/outputs/check_output.hpp"
#include "polewright/outputs/measured_output.hpp"
#include "polewright/outputs/json_values.hpp"

namespace pw {

namespace {

const char* bound_name(Sense s) { return s == Sense::AtMost ? "max" : "min"; }

}  // namespace

nlohmann::json pole_list_json(const PoleAnalysis& pa) {
  nlohmann::json a = nlohmann::json::array();
  for (const PoleInfo& p : pa.poles)
    a.push_back({{"re", json_number(p.pole.real())},
                 {"im", json_number(p.pole.imag())},
                 {"damping_ratio", json_number(p.damping)},
                 {"natural_frequency_rad_s", json_number(p.natural_frequency)},
                 {"step_share", json_number(p.share)},
                 {"matters", p.matters}});
  return a;
}

nlohmann::json gain_interval_json(const GainToleranceResult& g) {
  return g.lo ? nlohmann::json{json_number(g.lo), json_number(g.hi)} : nlohmann::json(nullptr);
}

namespace {

nlohmann::json number_list(const std::vector<double>& v) {
  nlohmann::json a = nlohmann::json::array();
  for (double x : v) a.push_back(json_number(x));
  return a;
}

nlohmann::json interval_json(const GainInterval& g) { return {json_number(g.lo), json_number(g.hi)}; }

}  // namespace

nlohmann::json region_json(const Region& r) {
  return {{"min_damping_ratio", json_number(r.min_damping)},
          {"min_decay_rate_per_s", json_number(r.min_decay)},
          {"min_natural_frequency_rad_s", json_number(r.min_frequency)},
          {"max_natural_frequency_rad_s", r.max_frequency > 0.0 ? json_number(r.max_frequency) : nlohmann::json(nullptr)},
          {"derivations", r.derivations}};
}

nlohmann::json loop_evaluation_json(const LoopEvaluation& e) {
  nlohmann::json j;
  j["plant"] = e.plant_name;
  j["well_posed"] = e.well_posed;
  j["stable"] = e.stable;
  j["poles_in_region"] = e.region_ok;
  nlohmann::json metrics = nlohmann::json::object();
  nlohmann::json unbounded = nlohmann::json::array();
  for (const MetricInfo& info : metric_table()) {
    const MetricValue& v = e.values[static_cast<size_t>(info.id)];
    if (!metric_shown(info, v.known())) continue;
    metrics[info.key] = json_number(v);
    if (v.infinite) unbounded.push_back(info.key);
  }
  if (e.step) {
    metrics["final_value"] = json_number(e.step->final_value);
    metrics["peak_time_s"] = json_number(e.step->peak_time_s);
    metrics["undershoot_pct"] = json_number(e.step->undershoot_pct);
  }
  const FrequencyMetrics& f = e.frequency;
  metrics["gain_increase_db"] = json_number(f.gain_increase_db);
  metrics["gain_reduction_db"] = json_number(f.gain_reduction_db);
  metrics["peak_complementary_sensitivity"] = json_number(f.peak_complementary);
  j["metrics"] = metrics;
  j["unbounded"] = unbounded;
  if (e.frequency_from_data || !e.data_notes.empty()) {
    j["frequency_figures_from"] = e.frequency_from_data ? "data" : "model";
    j["data_notes"] = e.data_notes;
  }
  j["closed_loop_poles"] = pole_list_json(e.poles);
  j["residues_reliable"] = e.poles.residues_reliable;
  j["frequency"] = {{"gain_crossovers_rad_s", number_list(f.gain_crossovers_rad_s)},
                    {"phase_margins_deg", number_list(f.phase_margins_deg)},
                    {"phase_crossovers_rad_s", number_list(f.phase_crossovers_rad_s)},
                    {"critical_gains", number_list(f.critical_gains)},
                    {"phase_margin_at_rad_s", json_number(f.phase_margin_at_rad_s)},
                    {"gain_margin_at_rad_s", json_number(f.gain_margin_at_rad_s)},
                    {"peak_sensitivity_at_rad_s", json_number(f.peak_sensitivity_at_rad_s)},
                    {"grid_rad_s", {json_number(f.grid_min_rad_s), json_number(f.grid_max_rad_s)}}};
  j["steady_state"] = {{"loop_type", e.steady_state.loop_type},
                       {"error_constant", json_number(e.steady_state.error_constant)}};
  if (e.step) j["step"] = {{"horizon_s", json_number(e.step->horizon_s)}, {"samples", e.step->samples}};
  j["gain_interval"] = gain_interval_json(e.gain);
  j["gain_interval_at_scan_limit"] = {e.gain.lo_at_limit, e.gain.hi_at_limit};
  return j;
}

nlohmann::json locus_json(const Locus& l) {
  nlohmann::json j;
  j["gains"] = number_list(l.gains);
  nlohmann::json branches = nlohmann::json::array();
  for (const auto& b : l.branches) {
    nlohmann::json pts = nlohmann::json::array();
    for (const Complex& c : b) pts.push_back({json_number(c.real()), json_number(c.imag())});
    branches.push_back(pts);
  }
  j["branches"] = branches;
  auto roots = [](const Roots& rs) {
    nlohmann::json a = nlohmann::json::array();
    for (const Complex& c : rs) a.push_back(json_complex(c));
    return a;
  };
  j["open_loop_poles"] = roots(l.open_loop_poles);
  j["open_loop_zeros"] = roots(l.open_loop_zeros);
  j["asymptote_centroid"] = json_number(l.asymptote_centroid);
  j["asymptote_angles_deg"] = number_list(l.asymptote_angles_deg);
  j["breakaway_points"] = nlohmann::json::array();
  for (const LocusLandmark& b : l.breakaways)
    j["breakaway_points"].push_back({{"s", json_number(b.s.real())}, {"gain_scale", json_number(b.gain)}});
  j["axis_crossings"] = nlohmann::json::array();
  for (const LocusLandmark& c : l.axis_crossings)
    j["axis_crossings"].push_back({{"omega_rad_s", json_number(c.s.imag())}, {"gain_scale", json_number(c.gain)}});
  j["stable_gain_intervals"] = nlohmann::json::array();
  for (const GainInterval& g : l.stable_intervals) j["stable_gain_intervals"].push_back(interval_json(g));
  return j;
}

namespace {

// The requirement rows, the worst case and the per-plant figures of one evaluation.
void add_outcomes_json(nlohmann::json& j, const Evaluation& ev) {
  nlohmann::json rows = nlohmann::json::array();
  nlohmann::json wm = nlohmann::json::object(), wmet = nlohmann::json::object(), wmargin = nlohmann::json::object(),
                 wvar = nlohmann::json::object();
  std::vector<double> best_key(kMetricCount, -INFINITY);
  for (const RequirementOutcome& o : ev.outcomes) {
    const MetricInfo& info = metric_info(o.requirement.metric);
    nlohmann::json margin = nullptr;
    if (o.worst.value) margin = json_number(requirement_margin(o.requirement, *o.worst.value));
    rows.push_back({{"requirement", info.key},
                    {"bound", bound_name(o.requirement.sense)},
                    {"limit", json_number(o.requirement.limit)},
                    {"value", json_number(o.worst)},
                    {"unbounded", o.worst.infinite},
                    {"margin", margin},
                    {"met", o.met},
                    {"worst_variant", o.worst_plant}});
    // The per-key summary keeps the bound that is closest to failing.
    const double key = o.violation > 0.0 ? o.violation : (margin.is_number() ? -margin.get<double>() * 1e-9 : -INFINITY);
    double& bk = best_key[static_cast<size_t>(o.requirement.metric)];
    if (!wm.contains(info.key) || key > bk) {
      bk = key;
      wm[info.key] = json_number(o.worst);
      wmargin[info.key] = margin;
      wvar[info.key] = o.worst_plant;
    }
    wmet[info.key] = wmet.contains(info.key) ? (wmet[info.key].get<bool>() && o.met) : o.met;
  }
  j["requirements"] = rows;
  j["worst"] = {{"metrics", wm}, {"met", wmet}, {"margins", wmargin}, {"variant", wvar}, {"plant", ev.worst_plant}};
  nlohmann::json variants = nlohmann::json::array();
  for (const LoopEvaluation& e : ev.plants) variants.push_back(loop_evaluation_json(e));
  j["variants"] = variants;
}

nlohmann::json roots_json(const Roots& rs) {
  nlohmann::json a = nlohmann::json::array();
  for (const Complex& c : rs) a.push_back(json_complex(c));
  return a;
}

// The implementation and the z-plane view of the sampled loop.
nlohmann::json sampled_json(const SampledEvaluation& s) {
  const Implementation& im = s.implementation;
  nlohmann::json j;
  j["label"] = sampled_label(im);
  j["sample_time_s"] = json_number(im.sample_time_s);
  j["method"] = discrete_method_name(im.method);
  j["warp_rad_s"] = s.compensator.warp_rad_s ? json_number(*s.compensator.warp_rad_s) : nlohmann::json(nullptr);
  j["compute_delay_samples"] = json_number(im.compute_delay_samples);
  j["word_length"] = word_length_name(im.word_length);
  j["nyquist_rad_s"] = json_number(M_PI / im.sample_time_s);
  j["discrete_compensator"] = {{"gain", json_number(s.compensator.discrete.gain)},
                               {"zeros_z", roots_json(s.compensator.discrete.zeros)},
                               {"poles_z", roots_json(s.compensator.discrete.poles)}};
  j["figures"] = "requirements, worst, variants and closed_loop_poles are of the sampled loop (closed-loop poles as "
                 "s = ln(z) / T; step figures of the continuous output between the samples); continuous holds the "
                 "continuous loop's";
  nlohmann::json loops = nlohmann::json::array();
  for (const SampledLoopEvaluation& l : s.loops) {
    nlohmann::json z = nlohmann::json::array();
    for (const DiscretePole& p : l.analysis.poles)
      z.push_back({{"re", json_number(p.z.real())}, {"im", json_number(p.z.imag())}, {"abs", json_number(std::abs(p.z))},
                   {"step_share", json_number(p.share)}, {"matters", p.matters}});
    nlohmann::json at = nullptr;
    if (const auto& st = l.analysis.step_at_samples)
      at = {{"overshoot_pct", json_number(st->overshoot_pct)}, {"settling_time_s", json_number(st->settling_time_s)},
            {"peak_time_s", json_number(st->peak_time_s)}, {"undershoot_pct", json_number(st->undershoot_pct)}};
    loops.push_back({{"plant", l.loop.plant_name}, {"closed_loop_poles_z", z}, {"states", l.analysis.states},
                     {"step_truncated", l.analysis.step_truncated}, {"step_at_samples", at}});
  }
  j["loops"] = loops;
  return j;
}

}  // namespace

nlohmann::json rate_guidance_json(const RateGuidance& g) {
  return {{"sample_time_s", json_number(g.sample_time_s)},
          {"crossover_rad_s", json_number(g.crossover_rad_s)},
          {"rate_ratio", json_number(g.rate_ratio)},
          {"hold_phase_deg", json_number(g.hold_phase_deg)},
          {"delay_phase_deg", json_number(g.delay_phase_deg)}};
}

nlohmann::json sample_time_search_json(const SampleTimeSearch& s) {
  const Implementation& im = s.implementation;
  nlohmann::json trials = nlohmann::json::array();
  for (const SampleTimeTrial& t : s.trials)
    trials.push_back({{"sample_time_s", json_number(t.sample_time_s)}, {"met", t.met}, {"implementable", t.implementable}});
  return {{"method", discrete_method_name(im.method)},
          {"compute_delay_samples", json_number(im.compute_delay_samples)},
          {"word_length", word_length_name(im.word_length)},
          {"reference_rad_s", json_number(s.reference_rad_s)},
          {"reference", s.reference_is_crossover ? "crossover" : "fastest_pole"},
          {"slowest_met_s", s.slowest_met_s ? json_number(*s.slowest_met_s) : nlohmann::json(nullptr)},
          {"first_failed_s", s.first_failed_s ? json_number(*s.first_failed_s) : nlohmann::json(nullptr)},
          {"continuous_met", s.continuous_met},
          {"trials", trials}};
}

nlohmann::json check_report_json(const CheckReport& r) {
  const Evaluation& ev = r.evaluation;
  nlohmann::json j;
  j["tool"] = {{"name", "polewright"}, {"version", kToolVersion}, {"job", "check"}};
  j["name"] = r.spec_name;
  j["status"] = ev.all_met ? "met" : "not_met";
  j["stable"] = ev.all_stable;
  j["compensator"] = json_compensator(r.compensator);
  j["pid_form"] = json_pid_form(r.compensator);
  j["region"] = region_json(r.region);
  add_outcomes_json(j, ev);
  if (r.sampled && r.continuous) {
    j["sampled"] = sampled_json(*r.sampled);
    j["sampled"]["rate"] = r.rate ? rate_guidance_json(*r.rate) : nlohmann::json(nullptr);
    nlohmann::json c;
    c["status"] = r.continuous->all_met ? "met" : "not_met";
    c["stable"] = r.continuous->all_stable;
    add_outcomes_json(c, *r.continuous);
    c["closed_loop_poles"] = pole_list_json(r.continuous->plants.front().poles);
    j["continuous"] = c;
  }
  const LoopEvaluation& nominal = ev.plants.front();
  j["closed_loop_poles"] = pole_list_json(nominal.poles);
  j["gain_interval"] = gain_interval_json(nominal.gain);
  j["locus"] = locus_json(r.locus);
  j["analysis"] = {{"pade_order", r.analysis.pade_order},
                   {"residue_share", json_number(r.analysis.residue_share)},
                   {"settling_band", json_number(r.requirements.settling_band)}};
  if (r.sample_time_search) j["sample_time_search"] = sample_time_search_json(*r.sample_time_search);
  j["warnings"] = r.warnings;
  nlohmann::json measured = nlohmann::json::object();
  for (const Plant& p : r.plants)
    if (p.measured) measured[p.name] = measured_plant_json(*p.measured);
  if (!measured.empty()) j["measured_plants"] = measured;
  j["spec"] = r.spec_document;
  j["cautions"] = kCautions;
  return j;
}

}  // namespace pw
