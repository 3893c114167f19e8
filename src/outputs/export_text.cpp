#include <cmath>

#include "polewright/outputs/export_output.hpp"
#include "polewright/outputs/json_values.hpp"
#include "text_table.hpp"

namespace pw {

namespace {

std::string peak_text(double v) { return std::isfinite(v) ? fmt_number(v, 4) : "unbounded"; }


std::string value_text(const MetricValue& v, const char* unit) {
  if (v.infinite) return "unbounded";
  if (!v.value) return "-";
  const std::string s = fmt_number(*v.value);
  return *unit ? s + " " + unit : s;
}

std::string value_text(const MetricValue& v, const Requirement& r, const char* unit) {
  if (v.infinite) return "unbounded";
  if (!v.value) return "-";
  const std::string s = fmt_against_limit(*v.value, r.limit, !requirement_met(r, v));
  return *unit ? s + " " + unit : s;
}

std::string z_text(Complex z) {
  if (z.imag() == 0.0) return fmt_number(z.real(), 6);
  return fmt_number(z.real(), 6) + (z.imag() > 0 ? " + j" : " - j") + fmt_number(std::abs(z.imag()), 6);
}

}  // namespace

std::string export_text(const ExportReport& r) {
  std::string out = "polewright export: " + r.design_name + " (rank " + std::to_string(r.rank) + ")\n";
  out += "continuous   C(s) = " + zpk_to_string(r.continuous) + "\n";
  if (const std::string pid = pid_form_text(r.continuous); !pid.empty())
    out += "as PID       " + pid + " (continuous)\n";
  out += "method       " + std::string(discrete_method_name(r.options.method));
  if (r.warp_rad_s) out += ", warped at " + fmt_number(*r.warp_rad_s, 6) + " rad/s (notches at their centres)";
  out += "\nsample time  " + fmt_number(r.options.sample_time_s, 6) + " s, Nyquist " + fmt_number(M_PI / r.options.sample_time_s, 6) +
         " rad/s, computation delay " + fmt_number(r.options.compute_delay_samples, 6) + " sample(s)\n";
  if (r.crossover_rad_s)
    out += "rate ratio   2 pi / T is " + fmt_number((2.0 * M_PI / r.options.sample_time_s) / *r.crossover_rad_s, 3) +
           " times the continuous crossover\n";
  out += "\n";
  TextTable sec({"section", "b0", "b1", "b2", "a1", "a2", "pole radius", "float radius", "peak gain", "at rad/s", "running peak"});
  sec.add({"gain", fmt_number(r.cascade.gain, 9), "", "", "", "", "", "", "", "", ""});
  for (size_t i = 0; i < r.cascade.sections.size(); ++i) {
    const Biquad& q = r.cascade.sections[i];
    sec.add({std::to_string(i + 1) + (q.integrator ? " (integrator)" : ""), fmt_number(q.b[0], 9), fmt_number(q.b[1], 9),
             fmt_number(q.b[2], 9), fmt_number(q.a[1], 9), fmt_number(q.a[2], 9), fmt_number(r.radii[i].double_radius, 9),
             fmt_number(r.radii[i].float_radius, 9), peak_text(q.peak_gain), fmt_number(q.peak_at / r.options.sample_time_s, 4),
             peak_text(q.running_peak)});
  }
  out += sec.render();
  out += "  peak gain: max |B/A| of the section on the unit circle (sections have unit DC gain; g carries the rest);\n"
         "  running peak: of the sections up to this one, i.e. the largest gain from e to that section's output before g\n\n";
  if (r.verified) {
    TextTable t({"requirement", "limit", "continuous", "discrete", "met (discrete)", "worst plant"});
    for (const ExportOutcome& o : r.outcomes) {
      const MetricInfo& info = metric_info(o.requirement.metric);
      t.add({info.label,
             std::string(o.requirement.sense == Sense::AtMost ? "<= " : ">= ") + fmt_number(o.requirement.limit) +
                 (*info.unit ? std::string(" ") + info.unit : ""),
             value_text(o.continuous, o.requirement, info.unit),
             o.judged ? value_text(o.discrete, o.requirement, info.unit) : std::string("-"),
             o.judged ? (o.met ? "yes" : "NO") : "not judged",
             r.plants[static_cast<size_t>(o.worst_plant)].name});
    }
    out += t.render() + "\n";
    TextTable f({"plant", "figure", "continuous", "discrete"});
    const MetricId ids[] = {MetricId::PhaseMargin, MetricId::GainMargin, MetricId::Crossover, MetricId::PeakSensitivity,
                            MetricId::Overshoot, MetricId::SettlingTime, MetricId::PeakEffort};
    for (const ExportLoop& L : r.loops)
      for (MetricId id : ids) {
        const MetricInfo& info = metric_info(id);
        f.add({L.plant_name, info.label, value_text(L.continuous[static_cast<size_t>(id)], info.unit),
               value_text(L.discrete[static_cast<size_t>(id)], info.unit)});
      }
    out += f.render() + "\n";
    TextTable p({"closed-loop pole z (nominal)", "|z|", "damping", "natural freq rad/s", "share"});
    for (const DiscretePole& q : r.loops.front().discrete_eval.poles)
      p.add({z_text(q.z), fmt_number(std::abs(q.z), 6), fmt_number(q.damping, 4), fmt_number(q.natural_frequency, 5),
             fmt_number(q.share, 3) + (q.matters ? "" : " (dipole)")});
    out += p.render() + "\n";
    out += std::string("verdict: ") + (r.all_met ? "the sampled loop MEETS the requirements" : "the sampled loop does NOT MEET the requirements") +
           (r.not_judged.empty() ? "" : " judged on it") + "\n";
    if (!r.not_judged.empty()) {
      std::string keys;
      for (const std::string& k : r.not_judged) keys += (keys.empty() ? "" : ", ") + k;
      out += "not judged on the sampled loop (no sampled evaluation yet; the continuous figure is shown): " + keys + "\n";
    }
  } else {
    out += "verdict: not re-verified (no spec)\n";
  }
  for (const std::string& w : r.warnings) out += "warning: " + w + "\n";
  for (const std::string& n : r.notes) out += "note: " + n + "\n";
  out += "\ncautions: " + std::string(kCautions) + "\n";
  return out;
}

}  // namespace pw
