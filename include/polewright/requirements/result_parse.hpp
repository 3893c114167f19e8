// Reading a result file back (for report and export): the job that wrote it, the spec it embeds
// and its compensators, in rank order. A file holding a single compensator object is accepted too.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "polewright/requirements/job_kind.hpp"
#include "polewright/requirements/spec.hpp"

namespace pw {

struct ResultInput {
  JobKind job = JobKind::Compensator;  // Check, Design, Retune, or Compensator for a bare compensator
  std::optional<Spec> spec;       // the embedded spec; absent for a bare compensator
  std::vector<Zpk> compensators;  // rank order (design, retune), the checked one (check), or the bare one
  std::vector<std::string> paths; // the JSON path each compensator was read from
  nlohmann::json document;        // the whole file
};

// Throws SpecError naming the field as a JSON path.
ResultInput parse_result(const nlohmann::json& doc);

// The compensator of rank `rank` (1-based). Out of range: SpecError with path "rank" (the
// parameter; a command line names its own option for it).
const Zpk& result_compensator(const ResultInput& r, int rank);
// The JSON path of that compensator in the file ("$", "$.compensator", "$.candidates[0].compensator").
std::string result_compensator_path(const ResultInput& r, int rank);

}  // namespace pw
