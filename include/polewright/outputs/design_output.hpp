// The design report as JSON (specs/result.schema.json) and as a readable ranked table.
#pragma once

#include <string>

#include <nlohmann/json_fwd.hpp>

#include "polewright/jobs/design.hpp"

namespace pw {

// The requirements in the spec's own format (so a result can be re-checked independently).
nlohmann::json requirements_json(const RequirementSet& req);
// A plant in the spec's zeros/poles/gain encoding, with its delay and name.
nlohmann::json plant_json(const Plant& p);

nlohmann::json candidate_json(const Candidate& c, const RequirementSet& req);

// "metrics" (every metric by key, null when missing or infinite) and "unbounded" (the infinite ones).
void add_metrics(nlohmann::json& j, const std::vector<MetricValue>& worst);
// "region", "frequency_range_rad_s", "plants", "requirements" and "analysis" of a search result.
void add_search_context(nlohmann::json& j, const Region& region, std::pair<double, double> range,
                        const std::vector<Plant>& plants, const RequirementSet& req, const AnalysisOptions& analysis);
// The search's spend per phase ("phases": name, evaluations, local runs; the escalation budget and
// what it spent, in evaluations) added to a "search" object: deterministic, thread-count free.
void add_search_phases(nlohmann::json& search, const DesignSummary& s);
// Wall-clock seconds per phase, in the order of "phases" (for the optional "timing" block only).
nlohmann::json phase_seconds_json(const DesignSummary& s);
// With an implementation in the context: "implementation" (label, sample time, method, delay, word
// length, Nyquist, the corner cap and its note, or null), and nothing without one.
void add_implementation_json(nlohmann::json& j, const LoopContext& ctx);
// Lines for the text reports: "loop ... sampled at T ..." and the corner note ("" without an implementation).
std::string implementation_text(const LoopContext& ctx);
nlohmann::json design_report_json(const DesignReport& r, bool include_timing = true);
std::string design_report_text(const DesignReport& r);

// Pieces of the readable tables shared with the retune report.
std::string roots_text(const Roots& rs);                 // "-40, -3+-j4" (a pair once)
std::string worst_violation(const Candidate& c);         // "overshoot_pct 14 > 8 (+1 more)"
std::string candidate_verdict(const Candidate& c);       // "meets all" or "misses: ..."
std::string settling_robustness_text(const Candidate& c); // "fragile", "robust" or "-" (not assessed)
std::string fragile_explanation();                        // one line: what "fragile" means


}  // namespace pw
