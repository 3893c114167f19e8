// The HTML report: one self-contained file (inline SVG and CSS, no scripts, nothing fetched) for a
// check, design or retune result, or for a sweep directory. The figures are recomputed from the result's embedded spec and its
// compensators through the analysis library, never read from the stored numbers.
//
// The page is a list of sections chosen by the result's job (`report_sections`); a section is a
// function from the prepared data to an HTML fragment. Retune and sweep results add their own
// sections to that table (see DEVELOPERS.md); a sweep directory has its own preparation
// (outputs/report_sweep.hpp) and sections.
#pragma once

#include <functional>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "polewright/analysis/locus.hpp"
#include "polewright/requirements/evaluate.hpp"
#include "polewright/requirements/result_parse.hpp"

namespace pw {

// One compensator of the result, evaluated over every plant with the step traces kept.
struct ReportDesign {
  std::string label;      // "rank 1: lead + notch", or "checked compensator"
  Zpk compensator;
  Evaluation evaluation;  // nominal first, then the variants
  int colour = 0;         // palette index (candidate_colour)
  // Settling-time cliff (synthesis/fragility.hpp), recomputed from the compensator; nullopt when
  // some plant's loop does not settle.
  std::optional<bool> fragile;
};

struct SweepReport;  // outputs/report_sweep.hpp

struct ReportData {
  JobKind job = JobKind::Check;     // Check, Design, Retune or Sweep
  std::string name;                 // the spec's name
  Spec spec;
  Region region;
  std::vector<ReportDesign> designs;  // rank order; designs[0] is the chosen one (may be empty for a design that found none)
  Locus locus;                        // of the chosen design's nominal loop
  nlohmann::json document;            // the result file as read
  // retune: the compensator in service, drawn muted and dashed under the new design (absent when
  // the retune changed nothing: then designs[0] is the current compensator itself).
  std::optional<ReportDesign> previous;
  bool unchanged = false;             // retune: the current compensator already met everything
  std::shared_ptr<const SweepReport> sweep;  // sweep: the points (job "sweep"; no spec, no designs)
  bool met() const;
};

// Recomputes everything a report shows. Throws SpecError naming the field when the result cannot
// be reported (no embedded spec, a bare compensator).
ReportData prepare_report(const ResultInput& result);

struct ReportSection {
  std::string id;     // HTML id of the section
  std::string title;  // heading
  std::function<std::string(const ReportData&)> build;  // the section's HTML body ("" = left out)
};

// The sections of a job's report, in page order.
std::vector<ReportSection> report_sections(JobKind job);

// The whole page.
std::string report_html(const ReportData& data);
std::string report_html(const ResultInput& result);

// Section bodies (each an HTML fragment with its own inline SVG).
std::string report_summary_section(const ReportData& d);
std::string report_splane_section(const ReportData& d);
std::string report_time_section(const ReportData& d);
std::string report_frequency_section(const ReportData& d);
std::string report_candidates_section(const ReportData& d);
std::string report_retune_section(const ReportData& d);  // retune: changes and old against new
std::string report_nyquist_section(const ReportData& d);  // Nyquist plot and the delay margin
// The output after a load step and an output step, when a requirement names them (else empty).
std::string report_disturbance_section(const ReportData& d);
// The reference step simulated with the spec's actuator limits over the linear one, when a
// saturated_* requirement names it (else empty).
std::string report_saturated_section(const ReportData& d);
// The s-plane view before the equal-aspect widening: the plants' roots, the closed-loop poles that
// matter (not those out where a dead time's Pade approximant lives), the region corner and the
// compensator roots near them. Roots outside it are drawn as arrows at the edge with their values.
struct SplaneView {
  double x_lo = -1.0, x_hi = 1.0, y_lo = -1.0, y_hi = 1.0;
};
SplaneView splane_view(const ReportData& d);
// A design that meets nothing: its binding requirements and plant limits ("" otherwise).
std::string report_diagnosis_html(const ReportData& d);

}  // namespace pw
