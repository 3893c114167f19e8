#include <algorithm>
#include <cmath>

#include "polewright/model/pade.hpp"
#include "polewright/outputs/report.hpp"
#include "svg_palette.hpp"
#include "svg_plot.hpp"
#include "report_util.hpp"

namespace pw {

namespace {

constexpr double kPi = 3.14159265358979323846;

// The allowed region as a polygon in the s-plane: damping cone, decay line and frequency ring,
// out to radius `far` when it is unbounded.
void region_polygon(const Region& r, double far, std::vector<double>& re, std::vector<double>& im) {
  re.clear();
  im.clear();
  const double theta_max = r.min_damping > 0.0 ? std::acos(std::min(1.0, r.min_damping)) : 0.5 * kPi;
  const double outer = r.max_frequency > 0.0 ? r.max_frequency : far;
  const int n = 240;
  std::vector<double> th, rin;
  for (int i = 0; i <= n; ++i) {
    const double t = -theta_max + 2.0 * theta_max * i / n;
    const double c = std::cos(t);
    double inner = r.min_frequency;
    if (r.min_decay > 0.0) inner = c > 1e-12 ? std::max(inner, r.min_decay / c) : outer * 2.0;
    if (inner > outer) continue;
    th.push_back(t);
    rin.push_back(inner);
  }
  for (double t : th) {
    re.push_back(-outer * std::cos(t));
    im.push_back(outer * std::sin(t));
  }
  for (size_t i = th.size(); i-- > 0;) {
    re.push_back(-rin[i] * std::cos(th[i]));
    im.push_back(rin[i] * std::sin(th[i]));
  }
}

void split(const Roots& rs, std::vector<double>& re, std::vector<double>& im) {
  re.clear();
  im.clear();
  for (const Complex& c : rs) {
    re.push_back(c.real());
    im.push_back(c.imag());
  }
}

// Index of the traced gain nearest k (log distance).
size_t nearest_gain(const std::vector<double>& gains, double k) {
  size_t best = 0;
  double bd = 1e300;
  for (size_t j = 1; j < gains.size(); ++j) {
    const double dd = std::abs(std::log(gains[j] / k));
    if (dd < bd) {
      bd = dd;
      best = j;
    }
  }
  return best;
}

// Whether c is one of the roots in rs (relative tolerance: the locus copies them exactly).
bool among(const Complex& c, const Roots& rs) {
  for (const Complex& r : rs)
    if (std::abs(c - r) <= 1e-9 * std::max(1.0, std::abs(r))) return true;
  return false;
}

// An arrow at the edge of the view pointing at a root outside it, with the root's value.
void edge_arrow(Plot& p, const Complex& c, const std::string& what, const std::string& colour) {
  const double cx = 0.5 * (p.x.lo + p.x.hi), cy = 0.5 * (p.y.lo + p.y.hi);
  const double dx = c.real() - cx, dy = c.imag() - cy;
  if (!std::isfinite(dx) || !std::isfinite(dy) || (dx == 0.0 && dy == 0.0)) return;
  // The point where the ray from the centre leaves the box, pulled in by 4 % of the box.
  double t = INFINITY;
  const double hx = 0.5 * (p.x.hi - p.x.lo) * 0.96, hy = 0.5 * (p.y.hi - p.y.lo) * 0.96;
  if (dx != 0.0) t = std::min(t, hx / std::abs(dx));
  if (dy != 0.0) t = std::min(t, hy / std::abs(dy));
  const double ex = cx + t * dx, ey = cy + t * dy;
  const double ang = std::atan2(dy, dx);
  static const char* const arrows[] = {"\u2192", "\u2197", "\u2191", "\u2196", "\u2190", "\u2199", "\u2193", "\u2198"};
  const int k = static_cast<int>(std::lround(ang / (kPi / 4.0))) & 7;
  std::string value = format_number(c.real(), 3);
  if (c.imag() != 0.0) value += (c.imag() > 0 ? " + " : " \u2212 ") + format_number(std::abs(c.imag()), 3) + "j";
  const bool right = std::cos(ang) > 0.3;
  p.note(ex, ey, std::string(arrows[k]) + " " + what + " " + value, colour, right ? -4 : 4, std::sin(ang) < -0.3 ? -4 : 10,
         right ? "end" : "start", true);
}

}  // namespace

SplaneView splane_view(const ReportData& d) {
  SplaneView v;
  if (d.designs.empty()) return v;
  const ReportDesign& rd = d.designs.front();
  // View: the plants' roots, the closed-loop poles that matter and the region corner. Compensator
  // roots far out (a lead pole a decade up) would squeeze the picture: they are listed instead.
  // With a dead time, closed-loop poles out where its Pade approximant is (|s| at least half its
  // smallest root) are artefacts of the approximant: they do not set the view either.
  const Plant& plant0 = d.spec.plants.front();
  double pade_reach = INFINITY;
  if (plant0.delay_s > 0.0)
    for (const Complex& c : pade_delay(plant0.delay_s, d.spec.analysis.pade_order).poles) pade_reach = std::min(pade_reach, 0.5 * std::abs(c));
  double xmin = 0.0, xmax = 0.0, ymax = 0.0;
  auto take = [&](const Complex& c) {
    if (!std::isfinite(c.real()) || !std::isfinite(c.imag())) return;
    xmin = std::min(xmin, c.real());
    xmax = std::max(xmax, c.real());
    ymax = std::max(ymax, std::abs(c.imag()));
  };
  for (const Plant& p : d.spec.plants) {
    for (const Complex& c : p.tf.zeros) take(c);
    for (const Complex& c : p.tf.poles) take(c);
  }
  auto take_matters = [&](const LoopEvaluation& e) {
    for (const PoleInfo& p : e.poles.poles)
      if (p.matters && std::abs(p.pole) < pade_reach) take(p.pole);
  };
  for (const LoopEvaluation& e : rd.evaluation.plants) take_matters(e);
  if (d.previous && !d.previous->evaluation.plants.empty()) take_matters(d.previous->evaluation.plants.front());
  take(Complex(-d.region.min_decay, 0.0));
  take(Complex(-d.region.min_frequency, 0.0));
  // Compensator roots join the view when they are near it.
  {
    const double reach = 1.5 * std::max({xmax - xmin, 2.0 * ymax, 1e-6});
    for (const Roots* rs : {&rd.compensator.zeros, &rd.compensator.poles})
      for (const Complex& c : *rs)
        if (c.real() >= xmin - reach && std::abs(c.imag()) <= ymax + reach) take(c);
  }
  const double span = std::max({xmax - xmin, 2.0 * ymax, 1e-6});
  v.x_lo = xmin - 0.15 * span;
  v.x_hi = xmax + 0.15 * span;
  v.y_lo = -ymax - 0.2 * span;
  v.y_hi = ymax + 0.2 * span;
  return v;
}

std::string report_splane_section(const ReportData& d) {
  if (d.designs.empty()) return "";
  const ReportDesign& rd = d.designs.front();
  const LoopEvaluation& nominal = rd.evaluation.plants.front();
  const std::string colour = candidate_colour(rd.colour);

  const SplaneView view = splane_view(d);
  const Plant& plant0 = d.spec.plants.front();
  const Zpk pade = plant0.delay_s > 0.0 ? pade_delay(plant0.delay_s, d.spec.analysis.pade_order) : Zpk{};
  double pade_reach = INFINITY;  // as in splane_view
  for (const Complex& c : pade.poles) pade_reach = std::min(pade_reach, 0.5 * std::abs(c));
  Plot p(640, 480, "s-plane: allowed region, root locus and closed-loop poles");
  p.x.label = "real part \u03c3 (1/s)";
  p.y.label = "imaginary part \u03c9 (rad/s)";
  p.x.lo = view.x_lo;
  p.x.hi = view.x_hi;
  p.y.lo = view.y_lo;
  p.y.hi = view.y_hi;
  p.equal_aspect();
  const double far = 20.0 * std::max({std::abs(p.x.lo), std::abs(p.x.hi), std::abs(p.y.lo), std::abs(p.y.hi)});

  std::vector<double> re, im;
  region_polygon(d.region, far, re, im);
  Style reg;
  reg.fill = colour::kRegionFill;
  reg.opacity = 0.8;
  reg.stroke = colour::kRegionEdge;
  reg.width = 1.2;
  p.fill(re, im, reg, d.region.bounded() ? "allowed region of the dominant poles" : "allowed region (left half-plane)");

  // Locus branches, with the gain interval that keeps the poles in the region drawn wide underneath.
  const Locus& L = d.locus;
  const auto& gi = nominal.gain;
  if (gi.lo && gi.hi) {
    Style wide;
    wide.stroke = colour;
    wide.width = 8.0;
    wide.opacity = 0.35;
    for (const auto& br : L.branches) {
      std::vector<double> xs, ys;
      for (size_t j = 0; j < br.size() && j < L.gains.size(); ++j) {
        const bool in = L.gains[j] >= *gi.lo && L.gains[j] <= *gi.hi;
        xs.push_back(in ? br[j].real() : NAN);
        ys.push_back(in ? br[j].imag() : NAN);
      }
      p.line(xs, ys, wide, "gain \u00d7" + format_number(*gi.lo, 3) + " to \u00d7" + format_number(*gi.hi, 3) + ": poles stay in the region");
    }
  }
  Style branch;
  branch.stroke = colour;
  branch.width = 1.4;
  for (const auto& br : L.branches) {
    std::vector<double> xs, ys;
    for (const Complex& c : br) {
      xs.push_back(c.real());
      ys.push_back(c.imag());
    }
    p.line(xs, ys, branch, "root locus (loop gain scaled by k)");
  }
  // Gain ticks at decades of the scale factor.
  Style tick;
  tick.stroke = colour::kInk;
  tick.width = 1.0;
  tick.fill = "#ffffff";
  for (double k : {0.1, 0.5, 2.0, 10.0}) {
    if (L.gains.size() < 2 || k < L.gains[1] || k > L.gains.back()) continue;
    const size_t j = nearest_gain(L.gains, k);
    std::vector<double> xs, ys;
    for (const auto& br : L.branches) {
      if (j >= br.size()) continue;
      xs.push_back(br[j].real());
      ys.push_back(br[j].imag());
    }
    p.markers(xs, ys, Marker::Square, 5, tick, "gain ticks at k = 0.1, 0.5, 2, 10");
    for (size_t i = 0; i < xs.size(); ++i)
      if (ys[i] >= 0.0) p.note(xs[i], ys[i], "\u00d7" + format_number(k, 2), colour::kMuted, 5, -5, "start", true);
  }

  Style ol;
  ol.stroke = colour::kOpenLoop;
  ol.width = 1.6;
  Roots ol_poles, ol_zeros, pade_poles, pade_zeros;
  for (const Complex& c : L.open_loop_poles) (among(c, pade.poles) ? pade_poles : ol_poles).push_back(c);
  for (const Complex& c : L.open_loop_zeros) (among(c, pade.zeros) ? pade_zeros : ol_zeros).push_back(c);
  split(ol_poles, re, im);
  p.markers(re, im, Marker::Cross, 9, ol, "open-loop poles (plant and compensator)");
  split(ol_zeros, re, im);
  p.markers(re, im, Marker::Circle, 9, ol, "open-loop zeros (plant and compensator)");
  Style pd;
  pd.stroke = colour::kMuted;
  pd.width = 1.0;
  split(pade_poles, re, im);
  p.markers(re, im, Marker::Cross, 6, pd, "Pade approximant of the dead time: poles (not plant roots)");
  split(pade_zeros, re, im);
  p.markers(re, im, Marker::Circle, 6, pd, "Pade approximant of the dead time: zeros (not plant roots)");

  // Closed-loop poles: the variants hollow, the nominal (k = 1) filled.
  for (size_t i = 1; i < rd.evaluation.plants.size(); ++i) {
    re.clear();
    im.clear();
    for (const PoleInfo& q : rd.evaluation.plants[i].poles.poles) {
      re.push_back(q.pole.real());
      im.push_back(q.pole.imag());
    }
    Style v;
    v.stroke = colour;
    v.width = 1.3;
    p.markers(re, im, Marker::Diamond, 8, v, "closed-loop poles, plant variants");
  }
  if (d.previous && !d.previous->evaluation.plants.empty()) {  // a retune: where the old design put them
    re.clear();
    im.clear();
    for (const PoleInfo& q : d.previous->evaluation.plants.front().poles.poles) {
      re.push_back(q.pole.real());
      im.push_back(q.pole.imag());
    }
    Style v;
    v.stroke = colour::kMuted;
    v.width = 1.5;
    p.markers(re, im, Marker::Circle, 9, v, "closed-loop poles of the old design (nominal)");
  }
  re.clear();
  im.clear();
  for (const PoleInfo& q : nominal.poles.poles) {
    re.push_back(q.pole.real());
    im.push_back(q.pole.imag());
  }
  Style cl;
  cl.stroke = "#ffffff";
  cl.fill = colour;
  cl.width = 1.0;
  p.markers(re, im, Marker::Diamond, 10, cl, "closed-loop poles at the nominal gain (k = 1)");
  if (nominal.dominant_pole) {
    const Complex dp = *nominal.dominant_pole;
    p.note(dp.real(), std::abs(dp.imag()), "dominant, \u03b6 = " + format_number(damping_of(dp), 2), colour::kInk, 8, -8);
  }
  std::string outside;
  auto in_view = [&](const Complex& c) { return c.real() >= p.x.lo && c.real() <= p.x.hi && c.imag() >= p.y.lo && c.imag() <= p.y.hi; };
  auto list_outside = [&](const Roots& rs, const char* what, bool arrow) {
    for (const Complex& c : rs) {
      if (c.imag() < 0.0) continue;
      if (in_view(c)) continue;
      if (arrow) edge_arrow(p, c, what, colour::kInk);
      outside += std::string(outside.empty() ? "" : ", ") + what + " " + format_number(c.real(), 4) +
                 (c.imag() > 0.0 ? " \u00b1 " + format_number(c.imag(), 4) + "j" : "");
    }
  };
  list_outside(ol_poles, "pole", true);
  list_outside(ol_zeros, "zero", true);
  {
    Roots cl_out;
    for (const PoleInfo& q : nominal.poles.poles)
      if (!in_view(q.pole) && q.pole.imag() >= 0.0 && q.matters && !(pade_reach <= std::abs(q.pole))) cl_out.push_back(q.pole);
    for (const Complex& c : cl_out) edge_arrow(p, c, "closed-loop pole", colour);
  }
  std::string caption = "Branches of 1 + k C(s) G(s) = 0 as the gain scale k grows from 0 (open-loop poles) without limit";
  if (!outside.empty()) caption += "; open-loop roots outside the view: " + outside;
  if (plant0.delay_s > 0.0) {
    int n_out = 0;
    for (const Roots* rs : {&pade_poles, &pade_zeros})
      for (const Complex& c : *rs) n_out += in_view(c) ? 0 : 1;
    caption += "; the dead time enters as its order-" + std::to_string(d.spec.analysis.pade_order) +
               " Pade approximant, whose roots (grey, small) are not plant roots and do not set the view";
    double pade_max = 0.0;
    for (const Complex& c : pade.poles) pade_max = std::max(pade_max, std::abs(c));
    if (n_out > 0)
      caption += " (" + std::to_string(n_out) + " of them outside it, out to |s| = " + format_number(pade_max, 3) + " rad/s)";
  }
  caption += ". The region comes from the requirements through the second-order dominant-pole model: it guides, the simulated step and the margins decide.";
  // The nominal closed-loop poles beside the plot.
  std::string t = "<table class=\"pw-table\"><thead><tr><th>closed-loop pole</th><th>damping</th><th>&#969;n (rad/s)</th>"
                  "<th>step share</th><th>in region</th></tr></thead><tbody>\n";
  auto is_dominant = [&](const Complex& c) {  // either pole of the dominant pair
    if (!nominal.dominant_pole) return false;
    const Complex dp = *nominal.dominant_pole;
    return std::abs(dp - c) <= 1e-12 * std::max(1.0, std::abs(c)) || std::abs(std::conj(dp) - c) <= 1e-12 * std::max(1.0, std::abs(c));
  };
  for (const PoleInfo& q : nominal.poles.poles) {
    if (q.pole.imag() < 0.0) continue;  // a pair once
    std::string pole = format_number(q.pole.real(), 4);
    if (q.pole.imag() > 0.0) pole += " &#177; " + format_number(q.pole.imag(), 4) + "j";
    if (is_dominant(q.pole)) pole = "(d) " + pole;
    // The region test of region_holds: damping and decay for every pole, the frequency bounds
    // for the dominant one as well.
    const bool dominant = is_dominant(q.pole);
    const bool in = dominant ? d.region.contains(q.pole) : d.region.contains_shape(q.pole);
    t += std::string("<tr") + (q.matters ? "" : " class=\"pw-note\"") + "><td class=\"num\">" + pole + "</td><td class=\"num\">" +
         format_number(q.damping, 3) + "</td><td class=\"num\">" + format_number(q.natural_frequency, 3) + "</td><td class=\"num\">" +
         format_number(100.0 * q.share, 2) + " %</td><td>" + (in ? "yes" : (q.matters ? "<span class=\"pw-bad\">no</span>" : "no")) +
         "</td></tr>\n";
  }
  t += "</tbody></table>\n<p class=\"pw-note\">Nominal plant, k = 1. Grey rows: poles whose share of the step response is below " +
       format_number(100.0 * d.spec.analysis.residue_share, 2) + " %; they do not count for the region test. \"In region\" checks damping and decay, and for the dominant pole (marked d) the frequency bounds too.</p>\n";
  return "<div class=\"pw-split\">\n" + report::figure(p.svg(), caption) + "<div>" + t + "</div>\n</div>\n";
}

}  // namespace pw
