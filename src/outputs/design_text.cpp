#include <cmath>
#include <cstdio>

#include "polewright/jobs/check.hpp"
#include "polewright/outputs/design_output.hpp"
#include "polewright/outputs/measured_output.hpp"
#include "polewright/outputs/json_values.hpp"
#include "polewright/synthesis/fragility.hpp"
#include "text_table.hpp"

namespace pw {

std::string roots_text(const Roots& rs) {
  std::string s;
  for (const Complex& r : rs) {
    if (r.imag() < 0.0) continue;
    if (!s.empty()) s += ", ";
    s += r.imag() == 0.0 ? fmt_number(r.real()) : fmt_number(r.real()) + "+-j" + fmt_number(r.imag());
  }
  return s.empty() ? "-" : s;
}

std::string candidate_verdict(const Candidate& c) {
  return c.meets ? "meets all" : "misses: " + worst_violation(c);
}

std::string settling_robustness_text(const Candidate& c) {
  if (!c.fragility_assessed) return "-";
  return c.fragile ? "fragile" : "robust";
}

std::string fragile_explanation() {
  char buf[256];
  std::snprintf(buf, sizeof buf,
                "settling: fragile when the settling time moves by more than %.0f %% with the band %.0f %% narrower or "
                "wider or the loop gain %.0f %% lower or higher",
                100.0 * kFragileJumpShare, 100.0 * kFragileBandShare, 100.0 * kFragileGainShare);
  return buf;
}

std::string worst_violation(const Candidate& c) {
  if (c.margins_at_noise) return "marginally stable (a margin within noise of 0)";
  if (!c.verification.all_stable) return "unstable";
  const RequirementOutcome* w = nullptr;
  int missed = 0;
  for (const RequirementOutcome& o : c.verification.outcomes)
    if (!o.met) {
      ++missed;
      if (!w || o.violation > w->violation) w = &o;
    }
  if (!w) return "-";
  const MetricInfo& info = metric_info(w->requirement.metric);
  std::string s = std::string(info.key) + " " +
                  (w->worst.value ? fmt_against_limit(*w->worst.value, w->requirement.limit, true) : std::string("n/a")) +
                  (w->requirement.sense == Sense::AtMost ? " > " : " < ") + fmt_number(w->requirement.limit);
  if (missed > 1) s += " (+" + std::to_string(missed - 1) + " more)";
  return s;
}

std::string implementation_text(const LoopContext& ctx) {
  if (!ctx.implementation) return "";
  std::string out = "loop " + sampled_label(*ctx.implementation) +
                    ": figures and verdicts are of the sampled loop (step figures between the samples too); "
                    "\"continuous\" is the continuous loop's verdict\n";
  if (ctx.corner_cap_rad_s) out += "note " + ctx.corner_note() + "\n";
  return out;
}

std::string design_report_text(const DesignReport& r) {
  std::string out = "polewright design" + (r.spec_name.empty() ? std::string() : ": " + r.spec_name) + "\n";
  out += "objective " + std::string(objective_name(r.objective)) + ", corners within " + fmt_number(r.context.frequency_range.first) +
         " .. " + fmt_number(r.context.frequency_range.second) + " rad/s, " + std::to_string(r.context.plants.size()) + " plant(s)\n";
  out += implementation_text(r.context);
  for (const std::string& w : conditioning_warnings(r.spec_document)) out += "warning " + w + "\n";
  out += measured_plants_text(r.context.plants, "data ");
  out += "\n";
  std::vector<std::string> header = {"rank", "structure", "zero-pole gain", "low-freq gain", "zeros", "poles"};
  std::vector<MetricId> shown;
  for (const Requirement& q : r.context.requirements.items)
    if (std::find(shown.begin(), shown.end(), q.metric) == shown.end()) shown.push_back(q.metric);
  if (std::find(shown.begin(), shown.end(), MetricId::PeakEffort) == shown.end()) shown.push_back(MetricId::PeakEffort);
  for (MetricId id : shown) header.push_back(metric_info(id).key);
  header.push_back("settling");
  header.push_back("verdict");
  if (r.context.implementation) header.push_back("continuous");
  TextTable t(header);
  for (const Candidate& c : r.candidates) {
    std::string structure;
    for (const std::string& n : c.structure.names()) structure += (structure.empty() ? "" : "+") + n;
    if (structure.empty()) structure = "gain";
    std::vector<std::string> row = {std::to_string(c.rank), structure, fmt_number(c.compensator.gain),
                                    fmt_number(zpk_low_frequency_gain(c.compensator)), roots_text(c.compensator.zeros), roots_text(c.compensator.poles)};
    for (MetricId id : shown) {
      const MetricValue& v = c.worst[static_cast<size_t>(id)];
      row.push_back(fmt_metric_against(v, id, c.verification.outcomes));
    }
    row.push_back(settling_robustness_text(c));
    row.push_back(candidate_verdict(c));
    if (r.context.implementation) row.push_back(!c.continuous ? "-" : c.continuous->all_met ? "meets all" : "misses");
    t.add(row);
  }
  out += r.candidates.empty() ? "  no candidate\n" : t.render();
  // Candidates that are a PI, PD or PID (an integrator and/or a lead): their tuning parameters.
  std::string pid_lines;
  for (const Candidate& c : r.candidates) {
    const std::string p = pid_form_text(c.compensator);
    if (!p.empty()) pid_lines += "  rank " + std::to_string(c.rank) + " " + p + "\n";
  }
  if (!pid_lines.empty()) out += "\n" + pid_lines;
  out += "\n  metrics are the worst case over the plants; every candidate was re-verified at full accuracy\n";
  if (r.context.requirements.actuator)
    out += "  saturated_*: the loop simulated with the actuator limits, " + r.context.requirements.actuator_label() + "\n";
  out += "  " + fragile_explanation() + "\n";
  out += "  " + std::string(kGainConvention) + "\n";
  if (!r.met()) {
    out += "\nnothing meets every requirement.\n";
    for (const BindingRequirement& b : r.binding)
      out += "  binding: " + std::string(metric_info(b.requirement.metric).key) + " (limit " + fmt_number(b.requirement.limit) +
             "): best reachable with it relaxed " +
             (b.best_value.value ? fmt_number(*b.best_value.value)
                                 : std::string(b.best_value.infinite ? "unbounded (every design tried)" : "n/a")) +
             (b.relaxing_meets_the_rest ? ", and then everything else is met" : "") + "\n";
  }
  bool any_limit = false;
  for (const PlantLimit& l : r.limits) {
    if (!l.binding && r.met()) continue;
    if (!any_limit) out += "\nlimits the plant imposes (common-practice bounds)\n";
    any_limit = true;
    out += std::string("  ") + (l.binding ? "BINDING " : "") + l.plant + ": " + l.message + "\n";
  }
  out += "\n" + r.summary.FullReport() + "\n";
  out += "\ncaution: " + std::string(kCautions) + "\n";
  return out;
}

}  // namespace pw
