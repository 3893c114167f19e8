// Reading a result file back (for report and export): the job that wrote it, the spec it embeds
// and its compensators, in rank order. A file holding a single compensator object is accepted too.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "polewright/requirements/spec.hpp"

namespace pw {

struct ResultInput {
  std::string job;                // "check", "design", "retune", or "compensator" for a bare compensator
  std::optional<Spec> spec;       // the embedded spec; absent for a bare compensator
  std::vector<Zpk> compensators;  // rank order (design, retune), the checked one (check), or the bare one
  nlohmann::json document;        // the whole file
};

// Throws SpecError naming the field as a JSON path.
ResultInput parse_result(const nlohmann::json& doc);

// The compensator of rank `rank` (1-based); SpecError naming `option` when out of range.
const Zpk& result_compensator(const ResultInput& r, int rank, const std::string& option = "--rank");

}  // namespace pw
