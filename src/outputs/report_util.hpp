// Small helpers shared by the report sections (internal).
#pragma once

#include <cmath>
#include <string>

#include "polewright/outputs/report.hpp"
#include "svg_text.hpp"
#include "text_table.hpp"

namespace pw::report {

// A figure: the SVG and a one-line caption.
inline std::string figure(const std::string& svg, const std::string& caption) {
  return "<figure class=\"pw-figure\">\n" + svg + "<figcaption>" + xml_escape(caption) + "</figcaption>\n</figure>\n";
}

// The readable value of a metric ("unbounded", "n/a", or the number with its unit).
inline std::string metric_text(const MetricValue& v, const char* unit) {
  if (v.infinite) return "unbounded";
  if (!v.value) return "n/a";
  std::string s = format_number(*v.value, 3);
  if (unit && *unit) s += std::string(" ") + unit;
  return s;
}

// A requirement's worst value set against its limit: a value that misses never shows as equal to
// the limit (fmt_against_limit, three digits or as many more as that takes).
inline std::string outcome_value_text(const RequirementOutcome& o, const char* unit) {
  if (o.worst.infinite) return "unbounded";
  if (!o.worst.value) return "n/a";
  std::string s = fmt_against_limit(*o.worst.value, o.requirement.limit, !requirement_met(o.requirement, o.worst), 3);
  if (unit && *unit) s += std::string(" ") + unit;
  return s;
}

// The plant's display name.
inline std::string plant_name(const ReportData& d, size_t i) {
  if (i >= d.spec.plants.size()) return "";
  const std::string& n = d.spec.plants[i].name;
  return n.empty() ? (i == 0 ? "nominal" : "variant " + std::to_string(i)) : n;
}

// One root as HTML: "-4" or "-3 &#177; 59.9j".
inline std::string root_html(const Complex& r, int digits) {
  if (r.imag() == 0.0) return xml_escape(format_number(r.real(), digits));
  return xml_escape(format_number(r.real(), digits)) + " &#177; " + xml_escape(format_number(std::abs(r.imag()), digits)) + "j";
}

// Roots with each conjugate pair once, comma separated; "none" for an empty set.
inline std::string roots_html(const Roots& rs, int digits) {
  std::string s;
  for (const Complex& r : rs) {
    if (r.imag() < 0.0) continue;
    s += (s.empty() ? "" : ", ") + ("<span class=\"pw-root\">" + root_html(r, digits) + "</span>");
  }
  return s.empty() ? "none" : s;
}

// The two gain conventions in one sentence (the same wording as the text output's note).
inline std::string gain_convention_html() {
  return "Zero-pole gain: k of k &#8719;(s &#8722; z) / &#8719;(s &#8722; p); low-frequency gain: lim s<sup>n</sup> C(s) as "
         "s &#8594; 0 with n the number of integrators (the Bode gain).";
}

// "s^2" -> "s<sup>2</sup>" in already escaped text.
inline std::string powers_html(const std::string& escaped) {
  std::string out;
  for (size_t i = 0; i < escaped.size(); ++i) {
    if (escaped[i] == '^') {
      size_t j = i + 1;
      while (j < escaped.size() && escaped[j] >= '0' && escaped[j] <= '9') ++j;
      out += "<sup>" + escaped.substr(i + 1, j - i - 1) + "</sup>";
      i = j - 1;
    } else {
      out += escaped[i];
    }
  }
  return out;
}

}  // namespace pw::report

namespace pw {
class Plot;
struct Style;
}

namespace pw::report {

// The line style of a retune's old design (the compensator in service): muted, long dashes.
Style previous_style();

// Time axis end for step plots: long enough to show the settling limit and every settling time,
// never past the simulated horizon.
double step_plot_end(const ReportData& d);

// The step bounds of the requirements on a y(t) plot: overshoot ceiling, settling band from the
// settling limit onward, for a loop with final value yf.
void draw_step_bounds(Plot& p, const ReportData& d, double yf, double t_end);

// Samples x[k] at t = k dt, times `scale`, up to t_end and one point past it (so the line runs
// to the frame).
void samples_xy(const std::vector<double>& x, double dt, double t_end, double scale, std::vector<double>& t,
                std::vector<double>& v);

// Time samples of a trace (y, or u with `effort`), cut at t_end as samples_xy.
void trace_xy(const StepTrace& tr, bool effort, double t_end, std::vector<double>& t, std::vector<double>& v);

// Widens [lo, hi] to take in the finite values of v.
void range_of(const std::vector<double>& v, double& lo, double& hi);

}  // namespace pw::report
