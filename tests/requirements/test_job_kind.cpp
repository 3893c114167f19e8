#include <catch2/catch.hpp>

#include <fstream>
#include <string>
#include <utility>

#include <nlohmann/json.hpp>

#include "polewright/requirements/job_kind.hpp"

using namespace pw;

TEST_CASE("job kind names: the tool.job values of docs/manual.md, read back to the same kind", "[requirements][job_kind]") {
  const std::pair<JobKind, const char*> documented[] = {{JobKind::Check, "check"},   {JobKind::Design, "design"},
                                                        {JobKind::Retune, "retune"}, {JobKind::Sweep, "sweep"},
                                                        {JobKind::Compensator, "compensator"}};
  for (const auto& [kind, name] : documented) {
    CHECK(std::string(job_kind_name(kind)) == name);
    CHECK(job_kind_from_name(name) == kind);
  }
  CHECK_FALSE(job_kind_from_name("Design"));
  CHECK_FALSE(job_kind_from_name("design "));
  CHECK_FALSE(job_kind_from_name("plot"));
  CHECK_FALSE(job_kind_from_name(""));
}

TEST_CASE("job kind names: the tool.job constants of the result schemas", "[requirements][job_kind]") {
  // The schemas (specs/result.schema.json, specs/retune-result.schema.json) fix the value each job writes.
  const std::pair<const char*, JobKind> schemas[] = {{"/specs/result.schema.json", JobKind::Design},
                                                     {"/specs/retune-result.schema.json", JobKind::Retune}};
  for (const auto& [file, kind] : schemas) {
    std::ifstream in(std::string(POLEWRIGHT_SOURCE_DIR) + file);
    REQUIRE(in);
    const nlohmann::json s = nlohmann::json::parse(in);
    const std::string name = s.at("properties").at("tool").at("properties").at("job").at("const").get<std::string>();
    CHECK(job_kind_from_name(name) == kind);
    CHECK(job_kind_name(kind) == name);
  }
}
