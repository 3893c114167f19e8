#include <algorithm>

#include "polewright/jobs/check.hpp"
#include "polewright/outputs/design_output.hpp"
#include "polewright/outputs/measured_output.hpp"
#include "polewright/outputs/json_values.hpp"
#include "polewright/outputs/retune_output.hpp"
#include "text_table.hpp"

namespace pw {

namespace {

std::string value_text(const std::optional<Complex>& v) {
  if (!v) return "(new)";
  if (v->imag() == 0.0) return fmt_number(v->real());
  return fmt_number(v->real()) + "+-j" + fmt_number(v->imag());
}

std::string change_table(const RetuneCandidate& rc) {
  TextTable t({"item", "old", "new", "change", "driven by"});
  for (const ParameterChange& c : rc.changes) {
    std::string item = c.item == ChangeItem::Gain ? "low-frequency gain" : change_item_name(c.item) + (" " + std::to_string(c.index));
    std::string pct = c.old_value ? fmt_number(c.percent_change) + " %" : "added";
    if (c.old_damping && c.new_damping)
      pct += ", damping " + fmt_number(*c.old_damping) + " -> " + fmt_number(*c.new_damping);
    t.add({item, value_text(c.old_value), value_text(c.new_value), pct, c.driven_by.empty() ? "-" : c.driven_by});
  }
  return t.render();
}

}  // namespace

std::string retune_report_text(const RetuneReport& r) {
  std::string out = "polewright retune" + (r.spec_name.empty() ? std::string() : ": " + r.spec_name) + "\n";
  out += implementation_text(r.context);
  for (const std::string& w : conditioning_warnings(r.spec_document)) out += "warning " + w + "\n";
  out += measured_plants_text(r.context.plants, "data ");
  const Candidate& cur = r.current;
  out += "in service: " + zpk_to_string(cur.compensator) + "  (" + candidate_verdict(cur) + ")\n";
  out += "            " + gains_text(cur.compensator) + "\n";
  if (const std::string pid = pid_form_text(cur.compensator); !pid.empty()) out += "  as PID:   " + pid + "\n";
  out += "\n";
  if (r.already_met) {
    out += "the current compensator already meets every requirement for every plant: nothing changed.\n";
  } else if (r.candidates.empty()) {
    out += "no retune found.\n";
  }
  for (const RetuneCandidate& rc : r.candidates) {
    std::string structure = "current structure";
    for (AddedStage s : rc.added) structure += std::string(" + ") + added_stage_name(s);
    out += "rank " + std::to_string(rc.candidate.rank) + ": " + structure + ", change " + fmt_number(rc.change_decades) +
           " decades (response " + fmt_number(rc.response_change) + " decades): " +
           candidate_verdict(rc.candidate) + "\n";
    out += change_table(rc);
    out += "  new compensator: " + zpk_to_string(rc.candidate.compensator) + "\n";
    out += "                   " + gains_text(rc.candidate.compensator) + "\n";
    if (const std::string pid = pid_form_text(rc.candidate.compensator); !pid.empty())
      out += "  as PID:          " + pid + "\n";
    out += "\n";
  }
  // The figures, current first.
  std::vector<MetricId> shown;
  for (const Requirement& q : r.context.requirements.items)
    if (std::find(shown.begin(), shown.end(), q.metric) == shown.end()) shown.push_back(q.metric);
  std::vector<std::string> header = {"design"};
  for (MetricId id : shown) header.push_back(metric_info(id).key);
  header.push_back("verdict");
  TextTable t(header);
  auto row = [&](const std::string& name, const Candidate& c) {
    std::vector<std::string> cells = {name};
    for (MetricId id : shown) {
      const MetricValue& v = c.worst[static_cast<size_t>(id)];
      cells.push_back(fmt_metric_against(v, id, c.verification.outcomes));
    }
    cells.push_back(candidate_verdict(c));
    t.add(cells);
  };
  row("current", cur);
  for (const RetuneCandidate& rc : r.candidates) row("rank " + std::to_string(rc.candidate.rank), rc.candidate);
  out += t.render();
  out += "\n  metrics are the worst case over the plants; every candidate was re-verified at full accuracy\n";
  if (r.context.requirements.actuator)
    out += "  saturated_*: the loop simulated with the actuator limits, " + r.context.requirements.actuator_label() + "\n";
  out += "  change: distance in decades of the low-frequency gain, corners and damping (added stages: RMS magnitude change)\n";
  out += "  " + std::string(kGainConvention) + "\n";
  out += "\nsearch: " + std::to_string(r.summary.evaluations) + " evaluations, " + std::to_string(r.summary.local_runs) +
         " local run(s), seed " + std::to_string(r.summary.seed) + "\n";
  // Per phase once more than the first level ran (an added stage, or the escalation through design).
  if (r.summary.phases.size() > 1)
    for (const SearchPhase& p : r.summary.phases)
      out += "  " + p.name + ": " + std::to_string(p.evaluations) + " evaluations, " + std::to_string(p.local_runs) +
             " local run(s)\n";
  out += "\ncaution: " + std::string(kCautions) + "\n";
  return out;
}

}  // namespace pw
