// The report's actuator-limited step: the output and the control effort after the spec's
// reference step simulated with the actuator limits, for every plant, over the linear response of
// the nominal plant to the same step. Only for specs with an actuator and a saturated_* requirement.
#include <algorithm>
#include <cmath>

#include "polewright/outputs/report.hpp"
#include "svg_axis.hpp"
#include "svg_palette.hpp"
#include "svg_plot.hpp"
#include "report_util.hpp"

namespace pw {

namespace {

// Samples of `x` at k dt up to t_end, scaled by `scale`.
void samples_xy(const std::vector<double>& x, double dt, double t_end, double scale, std::vector<double>& t,
                std::vector<double>& v) {
  t.clear();
  v.clear();
  for (size_t j = 0; j < x.size(); ++j) {
    const double tj = dt * static_cast<double>(j);
    if (tj > t_end) break;
    t.push_back(tj);
    v.push_back(scale * x[j]);
  }
}

void widen(const std::vector<double>& v, double& lo, double& hi) {
  for (double x : v) {
    lo = std::min(lo, x);
    hi = std::max(hi, x);
  }
}

}  // namespace

std::string report_saturated_section(const ReportData& d) {
  const RequirementSet& req = d.spec.requirements;
  if (d.designs.empty() || !req.actuator) return "";
  const ReportDesign& rd = d.designs.front();
  const std::string colour = candidate_colour(rd.colour);
  const double step = req.reference_step;
  // Three times the slowest saturated settling time, at most the simulated horizon.
  double t_end = 0.0;
  for (const LoopEvaluation& e : rd.evaluation.plants) {
    if (!e.saturated || e.saturated->response.y.empty()) continue;
    const SaturatedResponse& r = e.saturated->response;
    const double horizon = r.dt * static_cast<double>(r.y.size() - 1);
    const auto ts = e.saturated->settling_time_s;
    t_end = std::max(t_end, ts ? std::min(horizon, std::max(3.0 * *ts, 0.05 * horizon)) : horizon);
  }
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
  if (nominal.step && !nominal.step->trace.y.empty()) {
    Style lin;
    lin.stroke = colour::kMuted;
    lin.width = 1.6;
    lin.dash = "7 4";
    samples_xy(nominal.step->trace.y, nominal.step->trace.dt, t_end, step, t, v);
    widen(v, ylo, yhi);
    py.line(t, v, lin, "without limits (linear), nominal");
    samples_xy(nominal.step->trace.u, nominal.step->trace.dt, t_end, step, t, v);
    widen(v, ulo, uhi);
    pu.line(t, v, lin, "demand without limits (linear), nominal");
  }
  for (size_t i = 0; i < rd.evaluation.plants.size(); ++i) {
    const LoopEvaluation& e = rd.evaluation.plants[i];
    if (!e.saturated || e.saturated->response.y.empty()) continue;
    const SaturatedResponse& r = e.saturated->response;
    Style s;
    s.stroke = colour;
    s.width = i == 0 ? 2.0 : 1.5;
    s.dash = variant_dash(static_cast<int>(i));
    const std::string name = report::plant_name(d, i);
    samples_xy(r.y, r.dt, t_end, 1.0, t, v);
    widen(v, ylo, yhi);
    py.line(t, v, s, name + ", limited");
    samples_xy(r.u, r.dt, t_end, 1.0, t, v);
    pu.line(t, v, s, name + ", applied");
  }
  Style lim;
  lim.stroke = colour::kLimit;
  lim.width = 1.3;
  lim.dash = "6 4";
  pu.hline(req.actuator->maximum, lim, "actuator limits", "requirement limits");
  pu.hline(req.actuator->minimum, lim, "");
  if (auto os = req.limit(MetricId::SaturatedOvershoot, Sense::AtMost)) {
    const double target = nominal.saturated ? nominal.saturated->target : step;
    py.hline(target * (1.0 + *os / 100.0), lim, "overshoot limit " + format_number(*os, 3) + " %", "requirement limits");
    widen({target * (1.0 + *os / 100.0)}, ylo, yhi);
  }
  if (auto ts = req.limit(MetricId::SaturatedSettlingTime, Sense::AtMost))
    py.vline(*ts, lim, "settling limit " + format_number(*ts, 3) + " s", "", true);
  py.x.lo = pu.x.lo = 0.0;
  py.x.hi = pu.x.hi = t_end;
  double a = ylo - 0.04 * (yhi - ylo), b = yhi + 0.06 * (yhi - ylo);
  nice_bounds(a, b, 6);
  py.y.lo = a;
  py.y.hi = b;
  double c = ulo - 0.06 * (uhi - ulo), e = uhi + 0.06 * (uhi - ulo);
  nice_bounds(c, e, 5);
  pu.y.lo = c;
  pu.y.hi = e;
  std::string h = "<div class=\"pw-figures\">\n";
  h += report::figure(py.svg(), "The reference step of " + format_number(step, 3) +
                                    " simulated with the actuator limits (" + req.actuator_label() +
                                    "); solid: nominal plant, dashed and dotted: the plant variants; grey dashes: the "
                                    "nominal loop without limits. Each mode of the loop is propagated exactly.");
  h += report::figure(pu.svg(), "The actuator output the plant receives (solid) within the limits (red dashes), and "
                                "the linear loop's demand (grey dashes).");
  h += "</div>\n";
  return h;
}

}  // namespace pw
