// The report's disturbance section: the output deviation after a load step at the plant input
// and after an output step, for every plant, with the requirement limits. Only for specs with a
// disturbance requirement.
#include <algorithm>
#include <cmath>

#include "polewright/outputs/report.hpp"
#include "svg_axis.hpp"
#include "svg_palette.hpp"
#include "svg_plot.hpp"
#include "report_util.hpp"

namespace pw {

namespace {

struct Kind {
  DisturbanceInput where;
  MetricId peak, recovery;
  const char* title;
  const char* what;
};

bool asks(const RequirementSet& req, std::initializer_list<MetricId> ids) {
  for (MetricId id : ids)
    if (req.has(id)) return true;
  return false;
}

std::string disturbance_plot(const ReportData& d, const Kind& k) {
  const ReportDesign& rd = d.designs.front();
  const RequirementSet& req = d.spec.requirements;
  const double step = req.disturbance_step;
  Plot p(540, 350, k.title);
  p.x.label = "time t (s)";
  p.y.label = "output deviation y";
  double lo = 0.0, hi = 0.0, t_end = 0.0;
  bool any = false;
  const std::string colour = candidate_colour(rd.colour);
  for (size_t i = 0; i < rd.evaluation.plants.size(); ++i) {
    const LoopEvaluation& e = rd.evaluation.plants[i];
    const std::optional<DisturbanceMetrics>& m = k.where == DisturbanceInput::Load ? e.load : e.output;
    if (!m || m->trace.y.empty() || !(m->trace.dt > 0.0)) continue;
    // Three times the slowest recovery shown, at most the simulated horizon (as the step plots).
    const double horizon = m->trace.dt * static_cast<double>(m->trace.y.size() - 1);
    t_end = std::max(t_end, m->recovery_time_s ? std::min(horizon, std::max(3.0 * *m->recovery_time_s, 0.05 * horizon)) : horizon);
  }
  for (size_t i = 0; i < rd.evaluation.plants.size(); ++i) {
    const LoopEvaluation& e = rd.evaluation.plants[i];
    const std::optional<DisturbanceMetrics>& m = k.where == DisturbanceInput::Load ? e.load : e.output;
    if (!m || m->trace.y.empty() || !(m->trace.dt > 0.0)) continue;
    any = true;
    std::vector<double> t, v;
    report::samples_xy(m->trace.y, m->trace.dt, t_end, step, t, v);
    report::range_of(v, lo, hi);
    Style s;
    s.stroke = colour;
    s.width = i == 0 ? 2.0 : 1.5;
    s.dash = variant_dash(static_cast<int>(i));
    p.line(t, v, s, report::plant_name(d, i));
    if (i == 0 && m->recovery_time_s) {
      Style mk;
      mk.stroke = "#ffffff";
      mk.fill = colour;
      mk.width = 1.2;
      const double tr = *m->recovery_time_s;
      const size_t j = std::min(m->trace.y.size() - 1, static_cast<size_t>(std::lround(tr / m->trace.dt)));
      p.markers({tr}, {step * m->trace.y[j]}, Marker::Diamond, 10, mk, "recovery time (nominal)");
    }
  }
  if (!any) return "";
  Style lim;
  lim.stroke = colour::kLimit;
  lim.width = 1.3;
  lim.dash = "6 4";
  if (auto pk = req.limit(k.peak, Sense::AtMost)) {
    p.hline(*pk, lim, "peak limit " + format_number(*pk, 3), "requirement limits");
    p.hline(-*pk, lim, "");
    lo = std::min(lo, -1.05 * *pk);
    hi = std::max(hi, 1.05 * *pk);
  }
  if (auto tr = req.limit(k.recovery, Sense::AtMost)) {
    p.vline(*tr, lim, "recovery limit", req.limit(k.peak, Sense::AtMost) ? "" : "requirement limits");
    t_end = std::max(t_end, 1.1 * *tr);
  }
  p.x.lo = 0.0;
  p.x.hi = t_end;
  double a = lo - 0.06 * (hi - lo), b = hi + 0.06 * (hi - lo);
  if (!(b > a)) {
    a = -1.0;
    b = 1.0;
  }
  nice_bounds(a, b, 6);
  p.y.lo = a;
  p.y.hi = b;
  return report::figure(p.svg(), std::string("The output after a ") + k.what + " of " + format_number(step, 3) +
                                     " (solid: nominal plant; dashed and dotted: the plant variants). Recovery: back within " +
                                     format_number(100.0 * req.recovery_band, 3) + " % of the peak deviation for good.");
}

}  // namespace

std::string report_disturbance_section(const ReportData& d) {
  if (d.designs.empty()) return "";
  const RequirementSet& req = d.spec.requirements;
  const Kind kinds[] = {
      {DisturbanceInput::Load, MetricId::LoadPeak, MetricId::LoadRecovery, "Output after a load step at the plant input",
       "load step at the plant input"},
      {DisturbanceInput::Output, MetricId::OutputPeak, MetricId::OutputRecovery, "Output after a step added at the output",
       "step added at the output"},
  };
  std::string figs;
  if (asks(req, {MetricId::LoadPeak, MetricId::LoadRecovery, MetricId::LoadIae})) figs += disturbance_plot(d, kinds[0]);
  if (asks(req, {MetricId::OutputPeak, MetricId::OutputRecovery, MetricId::OutputIae})) figs += disturbance_plot(d, kinds[1]);
  if (figs.empty()) return "";
  return "<div class=\"pw-figures\">\n" + figs + "</div>\n";
}

}  // namespace pw
