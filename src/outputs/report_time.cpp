#include <algorithm>
#include <cmath>

#include "polewright/outputs/report.hpp"
#include "svg_palette.hpp"
#include "svg_plot.hpp"
#include "report_util.hpp"

namespace pw {

namespace report {

Style previous_style() {
  Style s;
  s.stroke = colour::kMuted;
  s.width = 1.8;
  s.dash = "7 4";
  return s;
}

double step_plot_end(const ReportData& d) {
  double horizon = 0.0, settle = 0.0, rise = 0.0;
  std::vector<const ReportDesign*> all;
  for (const ReportDesign& rd : d.designs) all.push_back(&rd);
  if (d.previous) all.push_back(&*d.previous);
  for (const ReportDesign* rd : all)
    for (const LoopEvaluation& e : rd->evaluation.plants) {
      if (!e.step) continue;
      horizon = std::max(horizon, e.step->trace.dt * static_cast<double>(e.step->trace.y.size() > 0 ? e.step->trace.y.size() - 1 : 0));
      if (e.step->settling_time_s) settle = std::max(settle, *e.step->settling_time_s);
      if (e.step->rise_time_s) rise = std::max(rise, *e.step->rise_time_s);
    }
  // About three times the slowest settling time shown (a 1 s response is not drawn over 25 s because
  // the limit is 25 s); without one, five rise times, else the settling limit, else the horizon.
  const auto ts_lim = d.spec.requirements.limit(MetricId::SettlingTime, Sense::AtMost);
  double want = settle > 0.0 ? 3.0 * settle : (rise > 0.0 ? 5.0 * rise : (ts_lim ? 1.6 * *ts_lim : 0.0));
  if (!(want > 0.0)) want = horizon;
  return horizon > 0.0 ? std::min(horizon, want) : 1.0;
}

void draw_step_bounds(Plot& p, const ReportData& d, double yf, double t_end) {
  const RequirementSet& req = d.spec.requirements;
  Style limit;
  limit.stroke = colour::kLimit;
  limit.width = 1.3;
  limit.dash = "6 4";
  if (auto os = req.limit(MetricId::Overshoot, Sense::AtMost)) {
    p.hline(yf * (1.0 + *os / 100.0), limit, "overshoot limit " + format_number(*os, 3) + " %", "requirement limits");
  }
  if (auto ts = req.limit(MetricId::SettlingTime, Sense::AtMost)) {
    const double b = req.settling_band;
    const double lo = yf * (1.0 - b), hi = yf * (1.0 + b);
    Style band;
    band.fill = colour::kRegionFill;
    band.opacity = 0.75;
    band.width = 0.0;
    const double t1 = std::max(t_end, *ts) * 2.0;
    p.fill({*ts, t1, t1, *ts}, {lo, lo, hi, hi}, band,
           "settling band \u00b1" + format_number(100.0 * b, 3) + " % from the settling limit");
    Style edge = limit;
    edge.stroke = colour::kRegionEdge;
    edge.dash = "3 3";
    edge.width = 1.0;
    p.hline(lo, edge, "", "", *ts, t1);
    p.hline(hi, edge, "", "", *ts, t1);
    p.vline(*ts, limit, "settling limit " + format_number(*ts, 3) + " s", "", true);
  }
}

void samples_xy(const std::vector<double>& x, double dt, double t_end, double scale, std::vector<double>& t,
                std::vector<double>& v) {
  t.clear();
  v.clear();
  for (size_t i = 0; i < x.size(); ++i) {
    const double ti = dt * static_cast<double>(i);
    t.push_back(ti);
    v.push_back(scale * x[i]);
    if (ti > t_end * 1.0001 && i > 0) break;  // one point past the end keeps the line to the frame
  }
}

void trace_xy(const StepTrace& tr, bool effort, double t_end, std::vector<double>& t, std::vector<double>& v) {
  samples_xy(effort ? tr.u : tr.y, tr.dt, t_end, 1.0, t, v);
}

void range_of(const std::vector<double>& v, double& lo, double& hi) {
  for (double x : v)
    if (std::isfinite(x)) {
      lo = std::min(lo, x);
      hi = std::max(hi, x);
    }
}

}  // namespace report

namespace {

// First time the trace reaches `level` (rising through it), by linear interpolation.
std::optional<double> first_crossing(const StepTrace& tr, double level, double sign) {
  for (size_t i = 1; i < tr.y.size(); ++i) {
    const double a = sign * (tr.y[i - 1] - level), b = sign * (tr.y[i] - level);
    if (a < 0.0 && b >= 0.0) return tr.dt * (static_cast<double>(i - 1) + a / (a - b));
  }
  return std::nullopt;
}

}  // namespace

std::string report_time_section(const ReportData& d) {
  if (d.designs.empty()) return "";
  const ReportDesign& rd = d.designs.front();
  const double t_end = report::step_plot_end(d);
  const std::string colour = candidate_colour(rd.colour);
  const LoopEvaluation& nominal = rd.evaluation.plants.front();
  const double yf = nominal.step ? nominal.step->final_value : 1.0;

  Plot py(540, 350, "Output y(t) after a unit reference step");
  Plot pu(540, 350, "Control effort u(t)");
  py.x.label = pu.x.label = "time t (s)";
  py.y.label = "output y (reference = 1)";
  pu.y.label = "effort u (plant input units)";
  double ylo = 0.0, yhi = std::max(1.0, yf), ulo = 0.0, uhi = 0.0;
  bool any = false;
  std::vector<double> t, v;
  for (size_t i = 0; i < rd.evaluation.plants.size(); ++i) {
    const LoopEvaluation& e = rd.evaluation.plants[i];
    if (!e.step || e.step->trace.y.empty()) continue;
    any = true;
    Style s;
    s.stroke = colour;
    s.width = i == 0 ? 2.0 : 1.5;
    s.dash = variant_dash(static_cast<int>(i));
    const std::string name = report::plant_name(d, i);
    report::trace_xy(e.step->trace, false, t_end, t, v);
    report::range_of(v, ylo, yhi);
    py.line(t, v, s, name);
    report::trace_xy(e.step->trace, true, t_end, t, v);
    report::range_of(v, ulo, uhi);
    pu.line(t, v, s, name);
  }
  if (!any) return "<p class=\"pw-bad\">No step response: the nominal closed loop is unstable or not well posed.</p>\n";
  // A retune: the compensator in service on the nominal plant, muted and dashed under the new one.
  if (d.previous && !d.previous->evaluation.plants.empty()) {
    const LoopEvaluation& old = d.previous->evaluation.plants.front();
    if (old.step && !old.step->trace.y.empty()) {
      const Style s = report::previous_style();
      report::trace_xy(old.step->trace, false, t_end, t, v);
      report::range_of(v, ylo, yhi);
      py.line(t, v, s, "old design (in service), nominal");
      report::trace_xy(old.step->trace, true, t_end, t, v);
      report::range_of(v, ulo, uhi);
      pu.line(t, v, s, "old design (in service), nominal");
    }
  }
  const auto os = d.spec.requirements.limit(MetricId::Overshoot, Sense::AtMost);
  if (os) yhi = std::max(yhi, yf * (1.0 + *os / 100.0));
  py.x.lo = pu.x.lo = 0.0;
  py.x.hi = pu.x.hi = t_end;
  double a = ylo - 0.04 * (yhi - ylo), b = yhi + 0.06 * (yhi - ylo);
  nice_bounds(a, b, 6);
  py.y.lo = a;
  py.y.hi = b;
  report::draw_step_bounds(py, d, yf, t_end);

  // Rise-time marks on the nominal response: the 10 % and 90 % crossings and the limit after the first.
  if (nominal.step) {
    const double s = yf >= 0.0 ? 1.0 : -1.0;
    const auto t10 = first_crossing(nominal.step->trace, 0.1 * yf, s);
    const auto t90 = first_crossing(nominal.step->trace, 0.9 * yf, s);
    Style m;
    m.stroke = colour::kInk;
    m.width = 1.2;
    m.fill = "#ffffff";
    if (t10 && t90) {
      Style guide;
      guide.stroke = colour::kMuted;
      guide.width = 1.0;
      guide.dash = "2 3";
      py.line({*t10, *t90}, {0.9 * yf, 0.9 * yf}, guide);
      py.markers({*t10, *t90}, {0.1 * yf, 0.9 * yf}, Marker::Circle, 7, m, "10 % and 90 % crossings (nominal)");
      py.note(*t90, 0.9 * yf, "rise " + format_number(*t90 - *t10, 3) + " s", colour::kInk, 6, 14);
      if (auto tr = d.spec.requirements.limit(MetricId::RiseTime, Sense::AtMost)) {
        Style lim;
        lim.stroke = colour::kLimit;
        lim.width = 2.0;
        py.line({*t10 + *tr, *t10 + *tr}, {0.78 * yf, 1.02 * yf}, lim);
        py.note(*t10 + *tr, 0.78 * yf, "rise limit", colour::kLimit, 4, 10);
      }
    }
    if (nominal.step->settling_time_s) {
      Style st = m;
      st.fill = colour;
      st.stroke = "#ffffff";
      const double ts = *nominal.step->settling_time_s;
      double yts = yf;
      const StepTrace& tr = nominal.step->trace;
      if (!tr.y.empty() && tr.dt > 0.0) {
        const double last = static_cast<double>(tr.y.size() - 1);
        yts = tr.y[static_cast<size_t>(std::max(0.0, std::min(last, std::round(ts / tr.dt))))];
      }
      py.markers({ts}, {yts}, Marker::Diamond, 10, st, "settling time (nominal)");
    }
  }

  double c = ulo - 0.06 * (uhi - ulo), e = uhi + 0.06 * (uhi - ulo);
  if (auto lim = d.spec.requirements.limit(MetricId::PeakEffort, Sense::AtMost)) {
    Style l;
    l.stroke = colour::kLimit;
    l.width = 1.3;
    l.dash = "6 4";
    pu.hline(*lim, l, "effort limit " + format_number(*lim, 3), "requirement limits");
    pu.hline(-*lim, l, "");
    c = std::min(c, -1.05 * *lim);
    e = std::max(e, 1.05 * *lim);
  }
  nice_bounds(c, e, 5);
  pu.y.lo = c;
  pu.y.hi = e;

  std::string h = "<div class=\"pw-figures\">\n";
  h += report::figure(py.svg(), std::string("Solid: nominal plant; dashed and dotted: the plant variants. Bounds drawn from the requirements.") +
                                    (d.previous ? " Grey dashes: the old design in service (nominal plant)." : ""));
  h += report::figure(pu.svg(), d.spec.requirements.has(MetricId::PeakEffort)
                                    ? "The compensator output for the same step; the dashed lines are the peak-effort limit."
                                    : "The compensator output for the same step (no peak-effort requirement is set).");
  h += "</div>\n";
  return h;
}

}  // namespace pw
