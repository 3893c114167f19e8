// The check report as JSON and as a readable text table.
#pragma once

#include <string>

#include <nlohmann/json_fwd.hpp>

#include "polewright/jobs/check.hpp"
#include "polewright/version.hpp"

namespace pw {

nlohmann::json region_json(const Region& r);
// Closed-loop poles with damping, natural frequency, step share and whether they matter.
nlohmann::json pole_list_json(const PoleAnalysis& pa);
// [lo, hi] of the gain interval, or null when the nominal loop is outside the region.
nlohmann::json gain_interval_json(const GainToleranceResult& g);
nlohmann::json loop_evaluation_json(const LoopEvaluation& e);
nlohmann::json locus_json(const Locus& l);
nlohmann::json check_report_json(const CheckReport& r);

std::string check_report_text(const CheckReport& r);

// The rate guidance and the slowest-sample-time search as JSON objects and as text lines.
nlohmann::json rate_guidance_json(const RateGuidance& g);
nlohmann::json sample_time_search_json(const SampleTimeSearch& s);
std::string sample_time_search_text(const SampleTimeSearch& s);

}  // namespace pw
