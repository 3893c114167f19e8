// The kind of job a result file comes from (its `tool.job`), or a bare compensator file.
#pragma once

#include <optional>
#include <string>

namespace pw {

enum class JobKind { Check, Design, Retune, Sweep, Compensator };

// "check", "design", "retune", "sweep", "compensator" (as written in result files and reports).
const char* job_kind_name(JobKind k);
// The inverse of job_kind_name; nullopt for any other string.
std::optional<JobKind> job_kind_from_name(const std::string& name);

}  // namespace pw
