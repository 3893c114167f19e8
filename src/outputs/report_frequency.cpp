#include <algorithm>
#include <cmath>

#include "polewright/analysis/frequency.hpp"
#include "polewright/model/measured_plant.hpp"
#include "polewright/outputs/report.hpp"
#include "svg_palette.hpp"
#include "svg_plot.hpp"
#include "report_util.hpp"

namespace pw {

namespace {

constexpr double kPi = 3.14159265358979323846;

double db(double mag) { return mag > 0.0 && std::isfinite(mag) ? 20.0 * std::log10(mag) : NAN; }

struct Response {
  std::vector<double> mag_db, phase_deg, s_db, t_db;
};

// |L|, unwrapped phase of L, |S| = 1/|1 + L| and |T| = |L|/|1 + L| over w. The phase branch is
// chosen so that it starts at the low-frequency value of the rational part (-90 per integrator,
// -180 more for a negative gain).
Response respond(const LoopParts& parts, const std::vector<double>& w) {
  Response r;
  const LoopResponse L(parts.loop_exact, parts.delay_s);
  double prev = NAN, offset = 0.0;
  for (double wi : w) {
    const Complex l = L(wi);
    const double m = std::abs(l);
    r.mag_db.push_back(db(m));
    const Complex one_plus = 1.0 + l;
    r.s_db.push_back(db(1.0 / std::abs(one_plus)));
    r.t_db.push_back(db(m / std::abs(one_plus)));
    double ph = std::arg(l) * 180.0 / kPi;
    if (!std::isfinite(ph)) {
      r.phase_deg.push_back(NAN);
      continue;
    }
    if (std::isfinite(prev)) {
      while (ph + offset - prev > 180.0) offset -= 360.0;
      while (ph + offset - prev < -180.0) offset += 360.0;
    } else {
      const int n = zpk_integrators(parts.loop_exact);
      const double start = -90.0 * n + (zpk_low_frequency_gain(parts.loop_exact) < 0.0 ? -180.0 : 0.0);
      offset = 360.0 * std::round((start - ph) / 360.0);
    }
    prev = ph + offset;
    r.phase_deg.push_back(prev);
  }
  return r;
}

void bounds_of(const std::vector<double>& v, double& lo, double& hi, double clamp_lo, double clamp_hi) {
  for (double x : v)
    if (std::isfinite(x)) {
      lo = std::min(lo, std::max(x, clamp_lo));
      hi = std::max(hi, std::min(x, clamp_hi));
    }
}

// Value of a sampled curve at w by linear interpolation in log w.
double at(const std::vector<double>& w, const std::vector<double>& v, double x) {
  for (size_t i = 1; i < w.size(); ++i)
    if (w[i] >= x) {
      const double f = (std::log(x) - std::log(w[i - 1])) / (std::log(w[i]) - std::log(w[i - 1]));
      return v[i - 1] + f * (v[i] - v[i - 1]);
    }
  return v.empty() ? NAN : v.back();
}

// A measured plant's points times C(jw): |L| in dB and the phase on the branch of the fitted
// loop's curve at the same frequency (the two differ by the fit error, far less than 180 deg).
struct DataPoints {
  std::vector<double> w, mag_db, phase_deg;
};

DataPoints measured_loop_points(const MeasuredPlant& m, const Zpk& c, const std::vector<double>& w,
                                const std::vector<double>& curve_phase_deg) {
  DataPoints p;
  MeasuredResponse loop;
  try {
    loop = measured_multiply(m.data, c);
  } catch (const std::exception&) {
    return p;  // a compensator root on a measured frequency: the data cannot be multiplied there
  }
  for (size_t i = 0; i < loop.size(); ++i) {
    const double wi = loop.w_rad_s[i];
    const double mag = 20.0 * loop.log_mag[i] / std::log(10.0);
    double ph = loop.phase_rad[i] * 180.0 / kPi;
    const double near = at(w, curve_phase_deg, wi);
    if (std::isfinite(near)) ph += 360.0 * std::round((near - ph) / 360.0);
    if (!std::isfinite(mag) || !std::isfinite(ph)) continue;
    p.w.push_back(wi);
    p.mag_db.push_back(mag);
    p.phase_deg.push_back(ph);
  }
  return p;
}

// With measured plants the fitted model is known only where the data is: the plots span the
// measured range and a third of a decade beyond each end, on the analysis grid's points there
// and a log-spaced grid (kept dense near modes by the analysis grid).
std::vector<double> measured_window(const std::vector<Plant>& plants, const std::vector<double>& w) {
  double lo = INFINITY, hi = 0.0;
  for (const Plant& p : plants)
    if (p.measured && p.measured->data.size() > 0) {
      lo = std::min(lo, p.measured->data.w_min());
      hi = std::max(hi, p.measured->data.w_max());
    }
  if (!(hi > lo)) return w;
  lo /= std::pow(10.0, 1.0 / 3.0);
  hi *= std::pow(10.0, 1.0 / 3.0);
  std::vector<double> out;
  for (double x : w)
    if (x > lo && x < hi) out.push_back(x);
  constexpr int kPoints = 600;
  for (int i = 0; i < kPoints; ++i) out.push_back(lo * std::pow(hi / lo, static_cast<double>(i) / (kPoints - 1)));
  std::sort(out.begin(), out.end());
  out.erase(std::unique(out.begin(), out.end()), out.end());
  return out;
}

}  // namespace

std::string report_frequency_section(const ReportData& d) {
  if (d.designs.empty()) return "";
  const ReportDesign& rd = d.designs.front();
  const std::string colour = candidate_colour(rd.colour);
  const int pade = d.spec.analysis.pade_order;
  const LoopParts nominal_parts = make_loop_parts(rd.compensator, d.spec.plants.front(), pade);
  std::vector<double> w = frequency_grid(nominal_parts.loop_exact, nominal_parts.delay_s, d.spec.analysis.frequency);
  if (w.size() < 2) return "";
  w = measured_window(d.spec.plants, w);

  Plot pm(540, 270, "Loop gain |L(j\u03c9)|");
  Plot pp(540, 270, "Loop phase \u2220L(j\u03c9)");
  Plot ps(540, 330, "Sensitivity |S(j\u03c9)| and complementary |T(j\u03c9)|");
  for (Plot* p : {&pm, &pp, &ps}) {
    p->x.log = true;
    p->x.lo = w.front();
    p->x.hi = w.back();
    p->x.label = "angular frequency \u03c9 (rad/s)";
  }
  pm.y.label = "|L| (dB)";
  pp.y.label = "phase (deg)";
  ps.y.label = "magnitude (dB)";
  double mlo = 0.0, mhi = 0.0, plo = -180.0, phi = -180.0, slo = -20.0, shi = 6.0;
  Response nominal;
  int measured_plants = 0;
  for (size_t i = 0; i < d.spec.plants.size(); ++i) {
    const LoopParts parts = i == 0 ? nominal_parts : make_loop_parts(rd.compensator, d.spec.plants[i], pade);
    const Response r = respond(parts, w);
    if (i == 0) nominal = r;
    Style s;
    s.stroke = colour;
    s.width = i == 0 ? 2.0 : 1.4;
    s.dash = variant_dash(static_cast<int>(i));
    const std::string name = report::plant_name(d, i);
    pm.line(w, r.mag_db, s, name + (d.spec.plants[i].measured ? " (fitted model)" : ""));
    pp.line(w, r.phase_deg, s, name + (d.spec.plants[i].measured ? " (fitted model)" : ""));
    bounds_of(r.mag_db, mlo, mhi, -120.0, 120.0);
    bounds_of(r.phase_deg, plo, phi, -1080.0, 720.0);
    if (const auto& m = d.spec.plants[i].measured) {
      const DataPoints pts = measured_loop_points(*m, rd.compensator, w, r.phase_deg);
      Style ds;
      ds.stroke = i == 0 ? colour::kInk : colour::kMuted;
      ds.width = 1.0;
      pm.markers(pts.w, pts.mag_db, Marker::Circle, 3, ds, name + ": measured points \u00d7 C");
      pp.markers(pts.w, pts.phase_deg, Marker::Circle, 3, ds, name + ": measured points \u00d7 C");
      ++measured_plants;
    }
  }
  // A retune: the old design (in service) on the nominal plant, muted and dashed.
  Response previous;
  if (d.previous) {
    previous = respond(make_loop_parts(d.previous->compensator, d.spec.plants.front(), pade), w);
    const Style s = report::previous_style();
    pm.line(w, previous.mag_db, s, "old design (in service), nominal");
    pp.line(w, previous.phase_deg, s, "old design (in service), nominal");
    bounds_of(previous.mag_db, mlo, mhi, -120.0, 120.0);
    bounds_of(previous.phase_deg, plo, phi, -1080.0, 720.0);
  }
  Style sl;
  sl.stroke = colour;
  sl.width = 2.0;
  ps.line(w, nominal.s_db, sl, "|S|, nominal");
  Style tl;
  tl.stroke = colour::kMuted;
  tl.width = 1.6;
  tl.dash = "7 4";
  ps.line(w, nominal.t_db, tl, "|T|, nominal");
  if (d.previous) {
    Style so = report::previous_style();
    so.dash = "2 3";
    ps.line(w, previous.s_db, so, "|S|, old design");
    bounds_of(previous.s_db, slo, shi, -80.0, 40.0);
  }
  bounds_of(nominal.s_db, slo, shi, -80.0, 40.0);
  bounds_of(nominal.t_db, slo, shi, -80.0, 40.0);

  Style ref;
  ref.stroke = colour::kMuted;
  ref.width = 1.0;
  ref.dash = "4 3";
  pm.hline(0.0, ref, "0 dB");

  // Margins of the nominal loop.
  const FrequencyMetrics& f = rd.evaluation.plants.front().frequency;
  Style mark;
  mark.stroke = colour::kInk;
  mark.width = 2.2;
  Style cross;
  cross.stroke = colour::kInk;
  cross.width = 1.0;
  cross.dash = "2 3";
  if (f.crossover_rad_s) {
    const double wc = *f.crossover_rad_s;
    pm.vline(wc, cross, "\u03c9c " + format_number(wc, 3) + " rad/s");
    pp.vline(wc, cross, "");
  }
  if (f.phase_margin_deg && f.phase_margin_at_rad_s) {
    const double wpm = *f.phase_margin_at_rad_s;
    const double ph = at(w, nominal.phase_deg, wpm);
    if (std::isfinite(ph)) {
      const double base = ph - *f.phase_margin_deg;  // the -180 (mod 360) line below the phase
      pp.hline(base, ref, format_number(base, 4) + "\u00b0");
      plo = std::min(plo, base);
      pp.line({wpm, wpm}, {base, ph}, mark, "phase margin");
      pp.markers({wpm}, {ph}, Marker::Dot, 6, mark);
      pp.note(wpm, 0.5 * (base + ph), "PM " + format_number(*f.phase_margin_deg, 3) + "\u00b0", colour::kInk, 6, 4);
    }
  }
  if (f.gain_margin_db && f.gain_margin_at_rad_s) {
    const double wg = *f.gain_margin_at_rad_s;
    const double m = at(w, nominal.mag_db, wg);
    if (std::isfinite(m)) {
      pm.line({wg, wg}, {m, 0.0}, mark, "gain margin");
      pm.markers({wg}, {m}, Marker::Dot, 6, mark);
      pm.note(wg, 0.5 * m, "GM " + format_number(*f.gain_margin_db, 3) + " dB", colour::kInk, 6, 4);
      pp.vline(wg, cross, "\u03c9 at \u2212180\u00b0: " + format_number(wg, 3) + " rad/s");
    }
  }
  Style limit;
  limit.stroke = colour::kLimit;
  limit.width = 1.3;
  limit.dash = "6 4";
  if (auto ms = d.spec.requirements.limit(MetricId::PeakSensitivity, Sense::AtMost)) {
    const double l = db(*ms);
    if (std::isfinite(l)) {
      ps.hline(l, limit, "|S| limit " + format_number(*ms, 3) + " (" + format_number(l, 3) + " dB)", "requirement limit");
      shi = std::max(shi, l);
    }
  }
  if (f.peak_sensitivity && f.peak_sensitivity_at_rad_s) {
    Style pk;
    pk.stroke = "#ffffff";
    pk.fill = colour;
    pk.width = 1.0;
    const double l = db(*f.peak_sensitivity);
    ps.markers({*f.peak_sensitivity_at_rad_s}, {l}, Marker::Diamond, 10, pk, "peak |S|");
    ps.note(*f.peak_sensitivity_at_rad_s, l, "peak " + format_number(*f.peak_sensitivity, 3), colour::kInk, 7, -6);
  }
  ps.hline(0.0, ref, "0 dB");

  auto set_y = [](Plot& p, double lo, double hi) {
    const double pad = 0.06 * (hi - lo);
    lo -= pad;
    hi += pad;
    nice_bounds(lo, hi, 5);
    p.y.lo = lo;
    p.y.hi = hi;
  };
  // A dead time drives the phase down without end: show it to 270 deg below the -180 line that
  // matters, the rest is clipped.
  double ref_line = -180.0;
  if (f.phase_margin_deg && f.phase_margin_at_rad_s) {
    const double ph = at(w, nominal.phase_deg, *f.phase_margin_at_rad_s);
    if (std::isfinite(ph)) ref_line = ph - *f.phase_margin_deg;
  }
  plo = std::max(plo, std::min(ref_line, phi) - 270.0);
  set_y(pm, mlo, mhi);
  set_y(pp, plo, phi);
  set_y(ps, slo, shi);

  // Margins of every plant.
  std::string t = "<table class=\"pw-table\"><thead><tr><th>plant</th><th>&#969;c (rad/s)</th><th>phase margin</th>"
                  "<th>gain margin</th><th>delay margin</th><th>peak |S|</th><th>bandwidth (rad/s)</th></tr></thead><tbody>\n";
  for (size_t i = 0; i < rd.evaluation.plants.size(); ++i) {
    const FrequencyMetrics& g = rd.evaluation.plants[i].frequency;
    auto opt = [](const std::optional<double>& v, const char* unit) {
      return v ? xml_escape(format_number(*v, 3)) + unit : std::string("none");
    };
    t += "<tr><td>" + xml_escape(report::plant_name(d, i)) + "</td><td class=\"num\">" + opt(g.crossover_rad_s, "") +
         "</td><td class=\"num\">" + opt(g.phase_margin_deg, "&#176;") + "</td><td class=\"num\">" +
         (g.gain_margin_db ? opt(g.gain_margin_db, " dB") : std::string("unbounded")) + "</td><td class=\"num\">" +
         xml_escape(report::metric_text(delay_margin_value(g), "s")) + "</td><td class=\"num\">" + opt(g.peak_sensitivity, "") + "</td><td class=\"num\">" + opt(g.bandwidth_rad_s, "") + "</td></tr>\n";
  }
  t += "</tbody></table>\n";

  std::string h = "<div class=\"pw-figures\">\n<div class=\"pw-stack\">\n";
  h += report::figure(pm.svg(), std::string("L = C G with the exact dead time; solid: nominal plant, dashed and dotted: variants. Margins marked for the nominal loop.") +
                                    (d.previous ? " Grey dashes: the old design in service." : "") +
                                    (measured_plants > 0 ? " Circles: the measured points times C, over the fitted model's loop; "
                                                           "the margins and the table come from the points; the plots span the measured range." : ""));
  h += report::figure(pp.svg(), "Phase unwrapped from its low-frequency value; the phase margin is the distance to the \u2212180\u00b0 line at crossover.");
  h += "</div>\n<div class=\"pw-stack\">\n";
  h += report::figure(ps.svg(), "S = 1/(1 + L): disturbance to error; T = L/(1 + L): reference to output (nominal plant).");
  h += t + "</div>\n</div>\n";
  return h;
}

}  // namespace pw
