#include <cmath>

#include "polewright/outputs/check_output.hpp"
#include "polewright/outputs/design_output.hpp"
#include "polewright/outputs/measured_output.hpp"
#include "polewright/outputs/json_values.hpp"
#include "polewright/synthesis/problem.hpp"

namespace pw {

nlohmann::json requirements_json(const RequirementSet& req) {
  nlohmann::json j = nlohmann::json::object();
  for (const Requirement& r : req.items) {
    const char* key = metric_info(r.metric).key;
    j[key][r.sense == Sense::AtMost ? "max" : "min"] = r.limit;
  }
  if (j.contains("settling_time_s")) j["settling_time_s"]["band_pct"] = 100.0 * req.settling_band;
  if (j.contains("steady_state_error")) {
    const char* names[] = {"step", "ramp", "parabola"};
    j["steady_state_error"]["input"] = names[static_cast<int>(req.error_signal)];
  }
  for (const char* k : {"load_peak", "load_recovery_s", "load_iae", "output_peak", "output_recovery_s", "output_iae"})
    if (j.contains(k)) {
      j["disturbance_step"] = req.disturbance_step;
      j["recovery_band_pct"] = 100.0 * req.recovery_band;
      break;
    }
  return j;
}

nlohmann::json plant_json(const Plant& p) {
  nlohmann::json z = json_zpk(p.tf);
  nlohmann::json j = {{"name", p.name}, {"gain", z["gain"]}, {"zeros", z["zeros"]}, {"poles", z["poles"]}, {"delay_s", json_number(p.delay_s)}};
  if (p.measured) j["measured"] = measured_plant_json(*p.measured);  // gain, zeros, poles and delay are the fit's
  return j;
}

void add_metrics(nlohmann::json& j, const std::vector<MetricValue>& worst) {
  nlohmann::json m = nlohmann::json::object(), unbounded = nlohmann::json::array();
  for (const MetricInfo& info : metric_table()) {
    const MetricValue& v = worst[static_cast<size_t>(info.id)];
    if (!metric_shown(info, v.known())) continue;
    m[info.key] = json_number(v);
    if (v.infinite) unbounded.push_back(info.key);
  }
  j["metrics"] = m;
  j["unbounded"] = unbounded;
}

void add_search_context(nlohmann::json& j, const Region& region, std::pair<double, double> range,
                        const std::vector<Plant>& plants, const RequirementSet& req, const AnalysisOptions& analysis) {
  j["region"] = region_json(region);
  j["frequency_range_rad_s"] = {json_number(range.first), json_number(range.second)};
  nlohmann::json list = nlohmann::json::array();
  for (const Plant& p : plants) list.push_back(plant_json(p));
  j["plants"] = list;
  j["requirements"] = requirements_json(req);
  j["analysis"] = {{"pade_order", analysis.pade_order}, {"settling_band", json_number(req.settling_band)},
                   {"residue_share", json_number(analysis.residue_share)}};
}

void add_search_phases(nlohmann::json& search, const DesignSummary& s) {
  nlohmann::json phases = nlohmann::json::array();
  for (const SearchPhase& p : s.phases)
    phases.push_back({{"name", p.name}, {"evaluations", p.evaluations}, {"local_runs", p.local_runs}});
  search["phases"] = phases;
  search["escalation_budget_evaluations"] = s.escalation_budget;
  search["escalation_spent_evaluations"] = s.escalation_spent;
}

nlohmann::json phase_seconds_json(const DesignSummary& s) {
  nlohmann::json list = nlohmann::json::array();
  for (const SearchPhase& p : s.phases) list.push_back(json_number(p.seconds));
  return list;
}

nlohmann::json candidate_json(const Candidate& c, const RequirementSet& req) {
  nlohmann::json j;
  j["rank"] = c.rank;
  j["structure"] = c.structure.names();
  j["meets"] = c.meets;
  j["compensator"] = json_compensator(c.compensator);
  j["pid_form"] = json_pid_form(c.compensator);
  add_metrics(j, c.worst);
  j["worst_variant"] = c.verification.worst_plant;
  const LoopEvaluation& nominal = c.verification.plants.front();
  j["closed_loop_poles"] = pole_list_json(nominal.poles);
  j["gain_interval"] = gain_interval_json(nominal.gain);
  j["gain_interval_at_scan_limit"] = {nominal.gain.lo_at_limit, nominal.gain.hi_at_limit};
  j["stable"] = c.verification.all_stable;
  // Settling-time cliff (synthesis/fragility.hpp): null when some plant's loop does not settle.
  j["fragile"] = c.fragility_assessed ? nlohmann::json(c.fragile) : nlohmann::json(nullptr);
  j["settling_jump_pct"] = c.fragility_assessed ? json_number(100.0 * c.settling_jump_share) : nlohmann::json(nullptr);
  j["margins_at_noise"] = c.margins_at_noise;
  nlohmann::json viol = nlohmann::json::object();
  for (const RequirementOutcome& o : c.verification.outcomes) {
    const std::string key = std::string(metric_info(o.requirement.metric).key) + (o.requirement.sense == Sense::AtMost ? ".max" : ".min");
    viol[key] = json_number(o.violation);
  }
  j["violations"] = viol;
  // The objective is only meaningful for a candidate that meets everything.
  j["objective"] = c.meets ? json_number(c.objective) : nlohmann::json(nullptr);
  j["origin"] = c.origin;
  if (c.continuous) {
    // The continuous loop of the same compensator, beside the sampled figures above.
    nlohmann::json k;
    k["meets"] = c.continuous->all_met;
    k["stable"] = c.continuous->all_stable;
    add_metrics(k, worst_metrics(c.continuous->plants, req));
    j["continuous"] = k;
  }
  return j;
}

void add_implementation_json(nlohmann::json& j, const LoopContext& ctx) {
  if (!ctx.implementation) return;
  const Implementation& im = *ctx.implementation;
  j["implementation"] = {
      {"label", sampled_label(im)},
      {"sample_time_s", json_number(im.sample_time_s)},
      {"method", discrete_method_name(im.method)},
      {"prewarp_rad_s", im.prewarp_rad_s ? json_number(*im.prewarp_rad_s) : nlohmann::json(nullptr)},
      {"compute_delay_samples", json_number(im.compute_delay_samples)},
      {"word_length", word_length_name(im.word_length)},
      {"nyquist_rad_s", json_number(M_PI / im.sample_time_s)},
      {"corner_cap_share", json_number(kCornerNyquistShare)},
      {"corner_cap_rad_s", ctx.corner_cap_rad_s ? json_number(*ctx.corner_cap_rad_s) : nlohmann::json(nullptr)},
      {"note", ctx.corner_cap_rad_s ? nlohmann::json(ctx.corner_note()) : nlohmann::json(nullptr)},
      {"figures", "metrics, violations, closed_loop_poles, meets and stable of every candidate are of the sampled "
                  "loop (poles as s = ln(z) / T, step figures between the samples too); continuous holds the "
                  "continuous loop's"}};
}

nlohmann::json design_report_json(const DesignReport& r, bool include_timing) {
  nlohmann::json j;
  j["tool"] = {{"name", "polewright"}, {"version", kToolVersion}, {"job", "design"}};
  j["name"] = r.spec_name;
  j["status"] = r.met() ? "met" : "not_met";
  j["objective"] = objective_name(r.objective);
  add_search_context(j, r.context.region, r.context.frequency_range, r.context.plants, r.context.requirements, r.context.analysis);
  add_implementation_json(j, r.context);
  nlohmann::json cands = nlohmann::json::array();
  for (const Candidate& c : r.candidates) cands.push_back(candidate_json(c, r.context.requirements));
  j["candidates"] = cands;
  nlohmann::json binding = nlohmann::json::array();
  for (const BindingRequirement& b : r.binding)
    binding.push_back({{"requirement", metric_info(b.requirement.metric).key},
                       {"bound", b.requirement.sense == Sense::AtMost ? "max" : "min"},
                       {"limit", json_number(b.requirement.limit)},
                       {"best_value_when_relaxed", json_number(b.best_value)},
                       {"best_value_unbounded", b.best_value.infinite && !b.best_value.value},
                       {"relaxing_it_meets_the_rest", b.relaxing_meets_the_rest},
                       {"design_when_relaxed", b.best_design ? json_compensator(*b.best_design) : nlohmann::json(nullptr)}});
  j["binding"] = binding;
  nlohmann::json limits = nlohmann::json::array();
  for (const PlantLimit& l : r.limits)
    limits.push_back({{"kind", l.kind}, {"plant", l.plant}, {"at", json_number(l.at)},
                      {"max_crossover_rad_s", json_number(l.max_crossover_rad_s)},
                      {"min_crossover_rad_s", json_number(l.min_crossover_rad_s)},
                      {"binding", l.binding},
                      {"requirement", l.requirement.empty() ? nlohmann::json(nullptr) : nlohmann::json(l.requirement)},
                      {"message", l.message}});
  j["limits"] = limits;
  j["warnings"] = conditioning_warnings(r.spec_document);
  j["search"] = {{"evaluations", r.summary.evaluations}, {"seed", r.summary.seed},
                 {"structures_searched", r.summary.structures_searched}, {"local_runs", r.summary.local_runs},
                 {"budget_stop", r.summary.budget_stop}};
  add_search_phases(j["search"], r.summary);
  // Timings depend on the machine and the thread count: kept apart, and left out for byte-identical output.
  if (include_timing) {
    j["timing"] = {{"seconds", json_number(r.summary.seconds)}, {"first_verified_s", json_number(r.summary.first_verified_s)},
                   {"threads", r.summary.threads}, {"time_stop", r.summary.time_stop}};
    j["timing"]["phase_seconds"] = phase_seconds_json(r.summary);
  }
  j["spec"] = r.spec_document;
  j["cautions"] = kCautions;
  return j;
}

}  // namespace pw
