// The report's actuator-limited loop: the output and the control effort after the spec's reference
// step, and after its load step from the operating point, simulated with the actuator limits for
// every plant, over the linear response of the nominal plant to the same step. Only for specs with
// an actuator and a saturated_* requirement.
#include <algorithm>
#include <cmath>

#include "polewright/outputs/report.hpp"
#include "svg_axis.hpp"
#include "svg_palette.hpp"
#include "svg_plot.hpp"
#include "report_util.hpp"

namespace pw {

namespace {

using report::range_of;
using report::samples_xy;

// One limited response per plant (null where none), y shifted by `offsets` (the operating point).
struct Limited {
  std::vector<const SaturatedResponse*> response;
  std::vector<double> offset;
  std::vector<std::optional<double>> settled;  // settling or recovery time
};

// Three times the slowest settling shown, at most the simulated horizon; 0 when nothing to draw.
double frame_end(const Limited& l) {
  double t_end = 0.0;
  for (size_t i = 0; i < l.response.size(); ++i) {
    const SaturatedResponse* r = l.response[i];
    if (!r || r->y.empty()) continue;
    const double horizon = r->dt * static_cast<double>(r->y.size() - 1);
    const auto& ts = l.settled[i];
    t_end = std::max(t_end, ts ? std::min(horizon, std::max(3.0 * *ts, 0.05 * horizon)) : horizon);
  }
  return t_end;
}

// The limited y (less its offset) and applied u of every plant.
void draw_limited(Plot& py, Plot& pu, const ReportData& d, const Limited& l, const std::string& colour, double t_end,
                  double& ylo, double& yhi) {
  std::vector<double> t, v;
  for (size_t i = 0; i < l.response.size(); ++i) {
    const SaturatedResponse* r = l.response[i];
    if (!r || r->y.empty()) continue;
    Style s;
    s.stroke = colour;
    s.width = i == 0 ? 2.0 : 1.5;
    s.dash = variant_dash(static_cast<int>(i));
    const std::string name = report::plant_name(d, i);
    samples_xy(r->y, r->dt, t_end, 1.0, t, v);
    for (double& x : v) x -= l.offset[i];
    range_of(v, ylo, yhi);
    py.line(t, v, s, name + ", limited");
    samples_xy(r->u, r->dt, t_end, 1.0, t, v);
    pu.line(t, v, s, name + ", applied");
  }
}

// The nominal loop without limits, muted under the limited responses.
Style linear_style() {
  Style lin;
  lin.stroke = colour::kMuted;
  lin.width = 1.6;
  lin.dash = "7 4";
  return lin;
}

Style limit_style() {
  Style lim;
  lim.stroke = colour::kLimit;
  lim.width = 1.3;
  lim.dash = "6 4";
  return lim;
}

// The actuator limits on the u plot, and both plots framed.
void frame_pair(Plot& py, Plot& pu, const ActuatorLimits& a, double t_end, double ylo, double yhi, double ulo,
                double uhi) {
  pu.hline(a.maximum, limit_style(), "actuator limits", "requirement limits");
  pu.hline(a.minimum, limit_style(), "");
  py.x.lo = pu.x.lo = 0.0;
  py.x.hi = pu.x.hi = t_end;
  double lo = ylo - 0.04 * (yhi - ylo), hi = yhi + 0.06 * (yhi - ylo);
  nice_bounds(lo, hi, 6);
  py.y.lo = lo;
  py.y.hi = hi;
  ulo = std::min(ulo, a.minimum);
  uhi = std::max(uhi, a.maximum);
  double c = ulo - 0.06 * (uhi - ulo), e = uhi + 0.06 * (uhi - ulo);
  nice_bounds(c, e, 5);
  pu.y.lo = c;
  pu.y.hi = e;
}

std::string step_figures(const ReportData& d, const ReportDesign& rd) {
  const RequirementSet& req = d.spec.requirements;
  const std::string colour = candidate_colour(rd.colour);
  const double step = req.reference_step;
  Limited l;
  for (const LoopEvaluation& e : rd.evaluation.plants) {
    l.response.push_back(e.saturated ? &e.saturated->response : nullptr);
    l.offset.push_back(0.0);
    l.settled.push_back(e.saturated ? e.saturated->settling_time_s : std::nullopt);
  }
  double t_end = frame_end(l);
  if (!(t_end > 0.0)) return "";
  if (auto lim = req.limit(MetricId::SaturatedSettlingTime, Sense::AtMost)) t_end = std::max(t_end, 1.1 * *lim);

  Plot py(540, 350, "Output y(t) with the actuator limits");
  Plot pu(540, 350, "Actuator u(t) within its limits");
  py.x.label = pu.x.label = "time t (s)";
  py.y.label = "output y (reference step " + format_number(step, 3) + ")";
  pu.y.label = "u (plant input units)";
  double ylo = std::min(0.0, step), yhi = std::max(0.0, step);
  double ulo = req.actuator->minimum, uhi = req.actuator->maximum;
  std::vector<double> t, v;
  // The linear loop's response to the same step, muted, under the limited ones.
  const LoopEvaluation& nominal = rd.evaluation.plants.front();
  const Style lin = linear_style();
  if (nominal.step && !nominal.step->trace.y.empty()) {
    samples_xy(nominal.step->trace.y, nominal.step->trace.dt, t_end, step, t, v);
    range_of(v, ylo, yhi);
    py.line(t, v, lin, "without limits (linear), nominal");
    samples_xy(nominal.step->trace.u, nominal.step->trace.dt, t_end, step, t, v);
    range_of(v, ulo, uhi);
    pu.line(t, v, lin, "demand without limits (linear), nominal");
  }
  draw_limited(py, pu, d, l, colour, t_end, ylo, yhi);
  if (auto os = req.limit(MetricId::SaturatedOvershoot, Sense::AtMost)) {
    const double target = nominal.saturated ? nominal.saturated->target : step;
    py.hline(target * (1.0 + *os / 100.0), limit_style(), "overshoot limit " + format_number(*os, 3) + " %",
             "requirement limits");
    range_of({target * (1.0 + *os / 100.0)}, ylo, yhi);
  }
  if (auto ts = req.limit(MetricId::SaturatedSettlingTime, Sense::AtMost))
    py.vline(*ts, limit_style(), "settling limit " + format_number(*ts, 3) + " s", "", true);
  frame_pair(py, pu, *req.actuator, t_end, ylo, yhi, ulo, uhi);
  std::string h = report::figure(py.svg(), "The reference step of " + format_number(step, 3) +
                                               " simulated with the actuator limits (" + req.actuator_label() +
                                               "); solid: nominal plant, dashed and dotted: the plant variants; grey "
                                               "dashes: the nominal loop without limits. Each mode of the loop is "
                                               "propagated exactly.");
  h += report::figure(pu.svg(), "The actuator output the plant receives (solid) within the limits (red dashes), and "
                                "the linear loop's demand (grey dashes).");
  return h;
}

std::string load_figures(const ReportData& d, const ReportDesign& rd) {
  const RequirementSet& req = d.spec.requirements;
  const std::string colour = candidate_colour(rd.colour);
  const double step = req.disturbance_step;
  Limited l;
  for (const LoopEvaluation& e : rd.evaluation.plants) {
    const auto& f = e.saturated_load;
    l.response.push_back(f ? &f->response : nullptr);
    l.offset.push_back(f ? f->baseline : 0.0);
    l.settled.push_back(f ? f->recovery_time_s : std::nullopt);
  }
  double t_end = frame_end(l);
  if (!(t_end > 0.0)) return "";
  if (auto lim = req.limit(MetricId::SaturatedLoadRecovery, Sense::AtMost)) t_end = std::max(t_end, 1.1 * *lim);

  Plot py(540, 350, "Deviation y(t) - y0 after the load step, limited");
  Plot pu(540, 350, "Actuator u(t) meeting the load");
  py.x.label = pu.x.label = "time t (s)";
  py.y.label = "y - y0 (load step " + format_number(step, 3) + " at the plant input)";
  pu.y.label = "u (plant input units)";
  double ylo = 0.0, yhi = 0.0;
  std::vector<double> t, v;
  const LoopEvaluation& nominal = rd.evaluation.plants.front();
  if (nominal.load && !nominal.load->trace.y.empty()) {
    const Style lin = linear_style();
    samples_xy(nominal.load->trace.y, nominal.load->trace.dt, t_end, step, t, v);
    range_of(v, ylo, yhi);
    py.line(t, v, lin, "without limits (linear), nominal");
  }
  draw_limited(py, pu, d, l, colour, t_end, ylo, yhi);
  if (auto pk = req.limit(MetricId::SaturatedLoadPeak, Sense::AtMost)) {
    py.hline(*pk, limit_style(), "peak limit +-" + format_number(*pk, 3), "requirement limits");
    py.hline(-*pk, limit_style(), "");
    range_of({*pk, -*pk}, ylo, yhi);
  }
  if (auto tr = req.limit(MetricId::SaturatedLoadRecovery, Sense::AtMost))
    py.vline(*tr, limit_style(), "recovery limit " + format_number(*tr, 3) + " s", "", true);
  frame_pair(py, pu, *req.actuator, t_end, ylo, yhi, req.actuator->minimum, req.actuator->maximum);
  std::string h = report::figure(
      py.svg(), "A load step of " + format_number(step, 3) + " at the plant input while the loop holds the reference " +
                    format_number(req.held_reference(), 3) + " (y0), simulated with the actuator limits; solid: nominal "
                    "plant, dashed and dotted: the plant variants; grey dashes: the nominal loop without limits.");
  h += report::figure(pu.svg(), "The actuator output while it meets the load (solid), from the u that held y0, within "
                                "the limits (red dashes). Where the limits leave too little headroom y cannot return.");
  return h;
}

}  // namespace

std::string report_saturated_section(const ReportData& d) {
  const RequirementSet& req = d.spec.requirements;
  if (d.designs.empty() || !req.actuator) return "";
  const ReportDesign& rd = d.designs.front();
  const std::string figures = step_figures(d, rd) + load_figures(d, rd);
  if (figures.empty()) return "";
  return "<div class=\"pw-figures\">\n" + figures + "</div>\n";
}

}  // namespace pw
