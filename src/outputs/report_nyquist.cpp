// The Nyquist plot of L(jw) near the critical point, and the delay margin as a figure.
#include <algorithm>
#include <cmath>

#include "polewright/analysis/frequency.hpp"
#include "polewright/outputs/report.hpp"
#include "svg_palette.hpp"
#include "svg_plot.hpp"
#include "report_util.hpp"

namespace pw {

namespace {

constexpr double kPi = 3.14159265358979323846;

void circle(double cx, double cy, double r, std::vector<double>& xs, std::vector<double>& ys) {
  xs.clear();
  ys.clear();
  for (int i = 0; i <= 360; ++i) {
    xs.push_back(cx + r * std::cos(2.0 * kPi * i / 360.0));
    ys.push_back(cy + r * std::sin(2.0 * kPi * i / 360.0));
  }
}

}  // namespace

std::string report_nyquist_section(const ReportData& d) {
  if (d.designs.empty()) return "";
  const ReportDesign& rd = d.designs.front();
  if (rd.evaluation.plants.empty()) return "";
  const std::string colour = candidate_colour(rd.colour);
  const int pade = d.spec.analysis.pade_order;

  // Nyquist: L(jw) for w > 0 solid, its mirror (w < 0) dashed; the view is the neighbourhood of
  // -1 that decides the margins (the curve leaves it towards an integrator's infinity).
  Plot nq(540, 460, "Nyquist plot of L(j\u03c9) near the critical point");
  nq.x.label = "Re L(j\u03c9)";
  nq.y.label = "Im L(j\u03c9)";
  nq.x.lo = -3.0;
  nq.x.hi = 1.5;
  nq.y.lo = -2.5;
  nq.y.hi = 2.5;
  nq.equal_aspect();
  std::vector<double> cx, cy;
  Style unit;
  unit.stroke = colour::kMuted;
  unit.width = 1.0;
  unit.dash = "4 3";
  circle(0.0, 0.0, 1.0, cx, cy);
  nq.line(cx, cy, unit, "unit circle |L| = 1 (gain crossovers)");
  const FrequencyMetrics& f0 = rd.evaluation.plants.front().frequency;
  const auto ms_limit = d.spec.requirements.limit(MetricId::PeakSensitivity, Sense::AtMost);
  const std::optional<double> ms = ms_limit ? ms_limit : f0.peak_sensitivity;
  if (ms && *ms > 1.0) {
    Style msc;
    msc.stroke = ms_limit ? colour::kLimit : colour::kInk;
    msc.width = 1.3;
    msc.dash = ms_limit ? "6 4" : "2 3";
    circle(-1.0, 0.0, 1.0 / *ms, cx, cy);
    nq.line(cx, cy, msc,
            std::string(ms_limit ? "|S| limit" : "peak |S|") + " circle: |1 + L| = 1/" + format_number(*ms, 3) +
                " (the curve stays outside it when |S| \u2264 " + format_number(*ms, 3) + ")");
  }
  for (size_t i = 0; i < d.spec.plants.size() && i < rd.evaluation.plants.size(); ++i) {
    const LoopParts parts = make_loop_parts(rd.compensator, d.spec.plants[i], pade);
    const std::vector<double> w = frequency_grid(parts.loop_exact, parts.delay_s, d.spec.analysis.frequency);
    const LoopResponse L(parts.loop_exact, parts.delay_s);
    std::vector<double> re, im, mim;
    for (double wi : w) {
      const Complex l = L(wi);
      re.push_back(l.real());
      im.push_back(l.imag());
      mim.push_back(-l.imag());
    }
    Style s;
    s.stroke = colour;
    s.width = i == 0 ? 2.0 : 1.3;
    s.dash = variant_dash(static_cast<int>(i));
    nq.line(re, im, s, report::plant_name(d, i) + ", \u03c9 > 0");
    if (i == 0) {
      Style m = s;
      m.width = 1.0;
      m.dash = "1 3";
      nq.line(re, mim, m, "mirror image (\u03c9 < 0), nominal");
    }
  }
  Style crit;
  crit.stroke = colour::kLimit;
  crit.width = 2.0;
  nq.markers({-1.0}, {0.0}, Marker::Cross, 11, crit, "critical point \u22121");
  // The nominal crossover with the smallest phase margin and the gain-margin crossing.
  if (f0.phase_margin_deg && f0.phase_margin_at_rad_s) {
    const double ang = (-180.0 + *f0.phase_margin_deg) * kPi / 180.0;
    Style pm;
    pm.stroke = colour::kInk;
    pm.width = 1.0;
    pm.fill = "#ffffff";
    nq.markers({std::cos(ang)}, {std::sin(ang)}, Marker::Circle, 7, pm, "crossover with the smallest phase margin");
    nq.note(std::cos(ang), std::sin(ang), "PM " + format_number(*f0.phase_margin_deg, 3) + "\u00b0", colour::kInk, 6, 12);
  }
  if (f0.gain_margin_db) {
    const double x = -std::pow(10.0, -*f0.gain_margin_db / 20.0);
    nq.note(x, 0.0, "GM " + format_number(*f0.gain_margin_db, 3) + " dB", colour::kInk, 4, -8, "start", true);
  }

  // Delay margin: an added dead time tau turns each crossover's phase margin PM_i into
  // PM_i - w_i tau (degrees per radian); the loop reaches -180 deg first at the delay margin.
  Plot dm(540, 460, "Delay margin: phase margin left with an added dead time");
  dm.x.label = "added dead time \u03c4 (s)";
  dm.y.label = "phase margin left (deg)";
  const auto dm_limit = d.spec.requirements.limit(MetricId::DelayMargin, Sense::AtLeast);
  double worst_dm = INFINITY, pm_hi = 0.0;
  for (const LoopEvaluation& e : rd.evaluation.plants) {
    const MetricValue v = delay_margin_value(e.frequency);
    if (v.value) worst_dm = std::min(worst_dm, *v.value);
    for (double p : e.frequency.phase_margins_deg) pm_hi = std::max(pm_hi, std::fmod(p + 360.0, 360.0));
  }
  std::string dm_caption;
  std::string dm_svg;
  if (!rd.evaluation.all_stable) {
    dm_caption.clear();
  } else if (std::isfinite(worst_dm)) {
    double t_hi = 1.6 * worst_dm;
    if (dm_limit) t_hi = std::max(t_hi, 1.3 * *dm_limit);
    if (!(t_hi > 0.0)) t_hi = 1.0;
    dm.x.lo = 0.0;
    dm.x.hi = t_hi;
    double ylo = -0.5 * std::max(pm_hi, 10.0), yhi = std::max(pm_hi, 10.0) * 1.1;
    nice_bounds(ylo, yhi, 5);
    dm.y.lo = ylo;
    dm.y.hi = yhi;
    for (size_t i = 0; i < rd.evaluation.plants.size(); ++i) {
      const FrequencyMetrics& f = rd.evaluation.plants[i].frequency;
      for (size_t k = 0; k < f.gain_crossovers_rad_s.size() && k < f.phase_margins_deg.size(); ++k) {
        const double p = std::fmod(std::fmod(f.phase_margins_deg[k], 360.0) + 360.0, 360.0);
        const double wk = f.gain_crossovers_rad_s[k];
        Style s;
        s.stroke = colour;
        s.width = i == 0 ? 2.0 : 1.3;
        s.dash = variant_dash(static_cast<int>(i));
        dm.line({0.0, t_hi}, {p, p - wk * t_hi * 180.0 / kPi}, s,
                report::plant_name(d, i) + (f.gain_crossovers_rad_s.size() > 1 ? ", each gain crossover" : ""));
      }
    }
    Style zero;
    zero.stroke = colour::kMuted;
    zero.width = 1.0;
    zero.dash = "4 3";
    dm.hline(0.0, zero, "0\u00b0: edge of stability");
    Style mark;
    mark.stroke = "#ffffff";
    mark.fill = colour;
    mark.width = 1.0;
    dm.markers({worst_dm}, {0.0}, Marker::Diamond, 11, mark, "delay margin (worst plant)");
    dm.note(worst_dm, 0.0, "delay margin " + format_number(worst_dm, 3) + " s", colour::kInk, 8, -18);
    if (dm_limit) {
      Style lim;
      lim.stroke = colour::kLimit;
      lim.width = 1.3;
      lim.dash = "6 4";
      dm.vline(*dm_limit, lim, "required \u2265 " + format_number(*dm_limit, 3) + " s", "requirement limit", true);
    }
    dm_svg = dm.svg();
    dm_caption = "Delay margin = phase margin (rad) / crossover frequency, the smallest over the gain crossovers and plants: "
                 "the extra dead time the loop takes before a crossover's phase reaches \u2212180\u00b0. Each line is one "
                 "crossover's phase margin PM \u2212 \u03c9c \u03c4 as the dead time \u03c4 grows.";
  }
  std::string h = "<div class=\"pw-figures\">\n<div class=\"pw-stack\">\n";
  h += report::figure(nq.svg(), "L = C G with the exact dead time. The distance from \u22121 to the curve is 1/|S|; the curve outside "
                                "the |S| circle keeps the peak sensitivity below its value. Solid: \u03c9 > 0, dotted: its mirror.");
  h += "</div>\n<div class=\"pw-stack\">\n";
  if (!rd.evaluation.all_stable)
    h += "<p>A closed loop is unstable: no delay margin (it measures how much dead time a stable loop takes).</p>\n";
  else if (!dm_svg.empty()) h += report::figure(dm_svg, dm_caption);
  else h += "<p>No gain crossover: |L| never reaches 1, so an added dead time cannot destabilise the loop (unbounded delay margin).</p>\n";
  h += "</div>\n</div>\n";
  return h;
}

}  // namespace pw
