#include <cmath>

#include "polewright/outputs/check_output.hpp"
#include "polewright/outputs/measured_output.hpp"
#include "polewright/outputs/json_values.hpp"
#include "polewright/requirements/sampled_evaluate.hpp"
#include "text_table.hpp"
#include "../model/format_text.hpp"

namespace pw {

namespace {

std::string with_unit(const std::string& v, const char* unit) {
  return (*unit && v != "-") ? v + " " + unit : v;
}

std::string pole_text(Complex p) {
  if (p.imag() == 0.0) return fmt_number(p.real(), 6);
  return fmt_number(p.real(), 6) + (p.imag() > 0 ? " + j" : " - j") + fmt_number(std::abs(p.imag()), 6);
}

}  // namespace

std::string check_report_text(const CheckReport& r) {
  const Evaluation& ev = r.evaluation;
  std::string out;
  out += "polewright check" + (r.spec_name.empty() ? std::string() : ": " + r.spec_name) + "\n";
  out += "compensator  C(s) = " + zpk_to_string(r.compensator) + "\n";
  out += "gains        " + gains_text(r.compensator) + " (" + detail::integrators_words(zpk_integrators(r.compensator)) + ")\n";
  if (const std::string pid = pid_form_text(r.compensator); !pid.empty())
    out += "as PID       " + pid + "\n";
  out += "plants       " + std::to_string(r.plants.size()) + " (nominal";
  if (r.plants.size() > 1) out += " + " + std::to_string(r.plants.size() - 1) + " variants";
  out += ")\n";
  const bool sampled = r.sampled && r.continuous;
  if (sampled) {
    out += "loop         " + sampled_label(r.sampled->implementation) +
           ": every figure below is of the sampled loop (poles as s = ln(z) / T, step figures between the samples too), "
           "the continuous loop's worst value beside it\n";
    out += "discrete     Cd(z) gain " + fmt_number(r.sampled->compensator.discrete.gain, 6) + ", " +
           std::to_string(r.sampled->compensator.discrete.zeros.size()) + " zeros, " +
           std::to_string(r.sampled->compensator.discrete.poles.size()) + " poles in z" +
           (r.sampled->compensator.warp_rad_s ? ", warped at " + fmt_number(*r.sampled->compensator.warp_rad_s, 6) + " rad/s" : std::string()) +
           "\n";
  }
  for (const std::string& w : r.warnings) out += "warning      " + w + "\n";
  out += measured_plants_text(r.plants, "data         ");
  for (const LoopEvaluation& e : ev.plants)
    for (const std::string& n : e.data_notes) out += "data note    " + e.plant_name + ": " + n + "\n";
  out += "\n";

  std::vector<std::string> cols = {"requirement", "limit", sampled ? "worst value (sampled)" : "worst value", "margin", "met",
                                   "worst plant"};
  if (sampled) cols.push_back("continuous");
  TextTable t(cols);
  int missed = 0;
  for (size_t oi = 0; oi < ev.outcomes.size(); ++oi) {
    const RequirementOutcome& o = ev.outcomes[oi];
    const MetricInfo& info = metric_info(o.requirement.metric);
    const std::string limit = std::string(o.requirement.sense == Sense::AtMost ? "<= " : ">= ") +
                              with_unit(fmt_number(o.requirement.limit), info.unit);
    std::string value = o.worst.infinite ? "unbounded"
                        : with_unit(o.worst.value ? fmt_against_limit(*o.worst.value, o.requirement.limit,
                                                                      !requirement_met(o.requirement, o.worst))
                                                  : std::string("-"),
                                    info.unit);
    std::string margin = "-";
    if (o.worst.value) margin = with_unit(fmt_margin(o.requirement, *o.worst.value), info.unit);
    if (!o.met) ++missed;
    std::vector<std::string> row = {info.key, limit, value, margin, o.met ? "yes" : "NO",
                                    r.plants[static_cast<size_t>(o.worst_plant)].name};
    if (sampled) {
      const RequirementOutcome& c = r.continuous->outcomes[oi];
      row.push_back(c.worst.infinite ? "unbounded"
                                     : with_unit(c.worst.value ? fmt_number(*c.worst.value) : std::string("-"), info.unit) +
                                           (c.met ? "" : " (missed)"));
    }
    t.add(row);
  }
  out += t.render();
  if (r.requirements.controller_gain_at_rad_s)
    out += "  controller_hf_gain is " + r.requirements.label(MetricId::ControllerHighFrequencyGain) + "\n";
  if (r.requirements.actuator) {
    out += "  saturated_* are judged on the loop simulated with the actuator limits: " + r.requirements.actuator_label() + "\n";
    for (const LoopEvaluation& e : ev.plants)
      if (e.saturated && !e.saturated->reachable)
        out += "  " + e.plant_name + ": the step needs a steady-state u beyond the limits, so y cannot settle at " +
               fmt_number(e.saturated->target) + "\n";
  }

  out += "\nallowed region for the poles that matter\n";
  if (r.region.derivations.empty()) out += "  (no requirement bounds the region)\n";
  for (const std::string& d : r.region.derivations) out += "  " + d + "\n";

  for (size_t i = 0; i < ev.plants.size(); ++i) {
    const LoopEvaluation& e = ev.plants[i];
    out += std::string("\nclosed-loop poles") + (sampled ? " (sampled loop, s = ln(z) / T)" : "") + ", " + e.plant_name +
           (e.stable ? "" : (e.poles.marginal ? "  ** MARGINAL: NOT STABLE **" : "  ** UNSTABLE **")) + "\n";
    if (e.poles.marginal)
      out += "  the pole " + pole_text(e.poles.marginal_pole) +
             " lies on the imaginary axis to within numerical noise (|Re p| <= 1e-11 |p|): the loop is at a "
             "critical gain and its step does not decay\n";
    if (!e.well_posed) {
      out += "  the loop is not well posed: 1 + Dc Dg = 0\n";
      continue;
    }
    TextTable p({"pole", "damping", "wn (rad/s)", "step share", "matters", "in region"});
    for (const PoleInfo& pi : e.poles.poles) {
      if (pi.pole.imag() < 0.0) continue;
      const bool dominant = e.dominant_pole && *e.dominant_pole == pi.pole;
      const bool inside = dominant ? r.region.contains(pi.pole) : r.region.contains_shape(pi.pole);
      p.add({pole_text(pi.pole) + (dominant ? "  (dominant)" : ""), fmt_number(pi.damping), fmt_number(pi.natural_frequency),
             fmt_number(100.0 * pi.share, 3) + " %", pi.matters ? "yes" : "no (dipole)", inside ? "yes" : "no"});
    }
    out += p.render();
    if (!e.poles.residues_reliable) out += "  note: repeated or nearly repeated poles: step shares are not reliable, every pole counts\n";
    if (e.gain.lo)
      out += "  gain interval keeping the poles that matter in the region: x" + fmt_number(*e.gain.lo) + " .. x" +
             fmt_number(*e.gain.hi) + (e.gain.hi_at_limit ? " (scan limit)" : "") + "\n";
    else
      out += "  gain interval: none (the nominal loop already has a pole that matters outside the region)\n";
    bool outside = false;
    for (const PoleInfo& pi : e.poles.poles) {
      const bool dominant = e.dominant_pole && *e.dominant_pole == pi.pole;
      outside = outside || (pi.matters && !(dominant ? r.region.contains(pi.pole) : r.region.contains_shape(pi.pole)));
    }
    if (e.stable && outside)
      out += "  note: the region is a second-order estimate drawn from the step requirements; it guides the design, and "
             "the verdict rests on the simulated step and the other requirements below\n";
  }

  const Locus& l = r.locus;
  out += "\nroot locus of the nominal loop (loop gain scaled by k; k = 1 is the design)\n";
  if (l.asymptote_centroid) {
    out += "  asymptotes: centroid " + fmt_number(*l.asymptote_centroid) + ", angles";
    for (double a : l.asymptote_angles_deg) out += " " + fmt_number(a) + " deg";
    out += "\n";
  }
  for (const LocusLandmark& b : l.breakaways)
    out += "  real-axis break point s = " + fmt_number(b.s.real(), 6) + " at k = " + fmt_number(b.gain) + "\n";
  for (const LocusLandmark& c : l.axis_crossings)
    out += "  imaginary-axis crossing s = j" + fmt_number(c.s.imag(), 6) + " at k = " + fmt_number(c.gain) + "\n";
  out += "  stable for k in:";
  if (l.stable_intervals.empty()) out += " (no gain)";
  for (const GainInterval& g : l.stable_intervals)
    out += " (" + fmt_number(g.lo) + ", " + (g.hi ? fmt_number(*g.hi) : std::string("no upper limit")) + ")";
  out += "\n";

  out += sampled ? "\nverdict (" + sampled_label(r.sampled->implementation) + "): " : std::string("\nverdict: ");
  if (ev.all_met) out += "MET: every requirement holds for every plant\n";
  else if (!ev.all_stable) {
    bool marginal_only = true;
    for (const LoopEvaluation& e : ev.plants) marginal_only = marginal_only && (e.stable || e.poles.marginal);
    out += marginal_only ? "NOT MET: the closed loop is marginally stable (a pole on the imaginary axis) for at least one plant\n"
                         : "NOT MET: the closed loop is unstable for at least one plant\n";
  }
  else out += "NOT MET: " + std::to_string(missed) + " of " + std::to_string(ev.outcomes.size()) + " requirement bounds missed\n";
  if (r.rate) {
    const RateGuidance& g = *r.rate;
    out += "rate         2 pi / T is " + fmt_number(g.rate_ratio, 3) + " times the continuous crossover " +
           fmt_number(g.crossover_rad_s, 4) + " rad/s (common practice: 10 to 20 or more); there the hold costs " +
           fmt_number(g.hold_phase_deg, 3) + " deg of phase and the computation delay " + fmt_number(g.delay_phase_deg, 3) +
           " deg\n";
  }
  if (r.sample_time_search) out += sample_time_search_text(*r.sample_time_search);
  out += "\ncaution: " + std::string(kCautions) + "\n";
  return out;
}

std::string sample_time_search_text(const SampleTimeSearch& s) {
  const Implementation& im = s.implementation;
  const std::string how = implementation_words(im);
  std::string out = "slowest T    ";
  if (s.slowest_met_s && s.first_failed_s)
    out += fmt_number(*s.slowest_met_s, 4) + " s meets, " + fmt_number(*s.first_failed_s, 4) + " s does not (" + how +
           "; from the fastest rate tried down, " + std::to_string(s.trials.size()) + " trials)\n";
  else if (s.slowest_met_s)
    out += "every sample time tried meets, up to " + fmt_number(*s.slowest_met_s, 4) + " s (" + how + ")\n";
  else
    out += "none meets, not even " + fmt_number(s.trials.empty() ? 0.0 : s.trials.front().sample_time_s, 4) + " s (" + how +
           (s.continuous_met ? "): a faster rate may still meet\n"
                             : "): the continuous loop does not meet either, so the rate is not the cause\n");
  return out;
}

}  // namespace pw
