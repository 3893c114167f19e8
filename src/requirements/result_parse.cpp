#include "polewright/requirements/result_parse.hpp"

#include "polewright/requirements/spec_parse.hpp"

#include "json_reader.hpp"

namespace pw {

namespace {

using json = nlohmann::json;

// Results write both forms of a compensator; the zeros/poles/gain form is the exact one.
Zpk read_result_compensator(const json& j, const std::string& path) {
  if (!j.is_object()) throw SpecError(path, "must be a compensator object");
  json roots = json::object();
  for (const char* k : {"gain", "zeros", "poles"})
    if (j.contains(k)) roots[k] = j[k];
  return parse_compensator(roots.empty() ? j : roots, path);
}

JobKind job_of(const json& doc) {
  if (!doc.contains("tool")) return JobKind::Compensator;
  const json& tool = doc["tool"];
  if (!tool.is_object() || !tool.contains("job") || !tool["job"].is_string())
    throw SpecError("$.tool.job", "is missing: not a polewright result file");
  const std::string job = tool["job"].get<std::string>();
  const std::optional<JobKind> kind = job_kind_from_name(job);
  if (!kind || (*kind != JobKind::Check && *kind != JobKind::Design && *kind != JobKind::Retune))
    throw SpecError("$.tool.job", "is \"" + job + "\": expected a check, design or retune result");
  return *kind;
}

}  // namespace

ResultInput parse_result(const json& doc) {
  if (!doc.is_object()) throw SpecError("$", "must be a JSON object (a result file or a compensator)");
  ResultInput r;
  r.document = doc;
  r.job = job_of(doc);
  if (r.job == JobKind::Compensator) {
    r.compensators.push_back(read_result_compensator(doc, "$"));
    r.paths.push_back("$");
    return r;
  }
  if (!doc.contains("spec") || doc["spec"].is_null())
    throw SpecError("$.spec", "is missing: the result does not embed its spec (written by an older version?)");
  try {
    r.spec = parse_spec(doc["spec"]);
  } catch (const SpecError& e) {
    throw detail::rerooted(e, "$.spec");  // the path names the field of this file
  }
  if (r.job == JobKind::Check) {
    if (!doc.contains("compensator")) throw SpecError("$.compensator", "is missing");
    r.compensators.push_back(read_result_compensator(doc["compensator"], "$.compensator"));
    r.paths.push_back("$.compensator");
    return r;
  }
  if (!doc.contains("candidates") || !doc["candidates"].is_array())
    throw SpecError("$.candidates", "is missing or not an array");
  const json& cands = doc["candidates"];
  for (size_t i = 0; i < cands.size(); ++i) {
    const std::string path = "$.candidates[" + std::to_string(i) + "]";
    if (!cands[i].is_object() || !cands[i].contains("compensator"))
      throw SpecError(path + ".compensator", "is missing");
    r.compensators.push_back(read_result_compensator(cands[i]["compensator"], path + ".compensator"));
    r.paths.push_back(path + ".compensator");
  }
  return r;
}

const Zpk& result_compensator(const ResultInput& r, int rank) {
  if (r.compensators.empty()) throw SpecError("$.candidates", "is empty: the result holds no compensator");
  if (rank < 1 || rank > static_cast<int>(r.compensators.size()))
    throw SpecError("rank", "is " + std::to_string(rank) + ": the result holds ranks 1 to " +
                                std::to_string(r.compensators.size()));
  return r.compensators[static_cast<size_t>(rank - 1)];
}

std::string result_compensator_path(const ResultInput& r, int rank) {
  result_compensator(r, rank);  // the same range check
  const size_t i = static_cast<size_t>(rank - 1);
  return i < r.paths.size() ? r.paths[i] : "$";  // a ResultInput built by hand may carry no paths
}

}  // namespace pw
