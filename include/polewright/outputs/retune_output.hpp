// The retune report as JSON (the design result's layout plus the current design and, per
// candidate, its change list) and as a readable table that shows the change first.
#pragma once

#include <string>

#include <nlohmann/json_fwd.hpp>

#include "polewright/jobs/retune.hpp"

namespace pw {

nlohmann::json change_json(const ParameterChange& c);
nlohmann::json retune_report_json(const RetuneReport& r, bool include_timing = true);
std::string retune_report_text(const RetuneReport& r);

}  // namespace pw
