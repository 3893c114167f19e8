#include "polewright/jobs/check.hpp"
#include "polewright/outputs/check_output.hpp"
#include "polewright/outputs/design_output.hpp"
#include "polewright/outputs/json_values.hpp"
#include "polewright/outputs/retune_output.hpp"

namespace pw {

namespace {

nlohmann::json root_value(const std::optional<Complex>& v, bool gain) {
  if (!v) return nullptr;
  if (gain || v->imag() == 0.0) return json_number(v->real());
  return json_complex(*v);
}

}  // namespace

nlohmann::json change_json(const ParameterChange& c) {
  const bool gain = c.item == ChangeItem::Gain;
  nlohmann::json j = {{"item", change_item_name(c.item)},
                      {"index", c.index},
                      {"old", root_value(c.old_value, gain)},
                      {"new", root_value(c.new_value, gain)},
                      {"percent_change", c.old_value ? json_number(c.percent_change) : nlohmann::json(nullptr)},
                      {"driven_by", c.driven_by.empty() ? nlohmann::json(nullptr) : nlohmann::json(c.driven_by)}};
  if (c.old_damping || c.new_damping) {
    j["old_damping"] = json_number(c.old_damping);
    j["new_damping"] = json_number(c.new_damping);
  }
  return j;
}

nlohmann::json retune_report_json(const RetuneReport& r, bool include_timing) {
  nlohmann::json j;
  j["tool"] = {{"name", "polewright"}, {"version", kToolVersion}, {"job", "retune"}};
  j["name"] = r.spec_name;
  j["status"] = r.met() ? "met" : "not_met";
  j["unchanged"] = r.already_met;
  j["warnings"] = conditioning_warnings(r.spec_document);
  add_search_context(j, r.context.region, r.context.frequency_range, r.context.plants, r.context.requirements, r.context.analysis);
  add_implementation_json(j, r.context);
  nlohmann::json cur = candidate_json(r.current, r.context.requirements);
  cur.erase("rank");
  cur.erase("objective");
  cur.erase("structure");
  j["current"] = cur;
  nlohmann::json cands = nlohmann::json::array();
  for (const RetuneCandidate& rc : r.candidates) {
    nlohmann::json c = candidate_json(rc.candidate, r.context.requirements);
    c.erase("objective");
    nlohmann::json added = nlohmann::json::array();
    for (AddedStage s : rc.added) added.push_back(added_stage_name(s));
    c["structure"] = nlohmann::json::array({"current"});
    for (AddedStage s : rc.added) c["structure"].push_back(std::string("added ") + added_stage_name(s));
    c["added_stages"] = added;
    c["change_decades"] = json_number(rc.change_decades);
    c["response_change_decades"] = json_number(rc.response_change);
    nlohmann::json ch = nlohmann::json::array();
    for (const ParameterChange& p : rc.changes) ch.push_back(change_json(p));
    c["changes"] = ch;
    cands.push_back(c);
  }
  j["candidates"] = cands;
  j["search"] = {{"evaluations", r.summary.evaluations}, {"seed", r.summary.seed},
                 {"structures_searched", r.summary.structures_searched}, {"local_runs", r.summary.local_runs}};
  add_search_phases(j["search"], r.summary);
  if (include_timing) {
    j["timing"] = {{"seconds", json_number(r.summary.seconds)}, {"threads", r.summary.threads}};
    j["timing"]["phase_seconds"] = phase_seconds_json(r.summary);
  }
  j["spec"] = r.spec_document;
  j["cautions"] = kCautions;
  return j;
}

}  // namespace pw
