#include "polewright/requirements/job_kind.hpp"

namespace pw {

const char* job_kind_name(JobKind k) {
  switch (k) {
    case JobKind::Check: return "check";
    case JobKind::Design: return "design";
    case JobKind::Retune: return "retune";
    case JobKind::Sweep: return "sweep";
    case JobKind::Compensator: return "compensator";
  }
  return "compensator";
}

std::optional<JobKind> job_kind_from_name(const std::string& name) {
  for (JobKind k : {JobKind::Check, JobKind::Design, JobKind::Retune, JobKind::Sweep, JobKind::Compensator})
    if (name == job_kind_name(k)) return k;
  return std::nullopt;
}

}  // namespace pw
