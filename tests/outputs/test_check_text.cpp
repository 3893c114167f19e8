#include <catch2/catch.hpp>

#include <regex>

#include "polewright/outputs/check_output.hpp"
#include "polewright/requirements/spec_parse.hpp"

using namespace pw;

TEST_CASE("check text names every requirement and carries the cautions", "[outputs][check_output]") {
  const Spec spec = parse_spec(read_json_file(std::string(POLEWRIGHT_SOURCE_DIR) + "/specs/wafer-stage.json"));
  const CheckReport r = run_check(spec, *spec.current);
  const std::string t = check_report_text(r);
  for (const RequirementOutcome& o : r.evaluation.outcomes) CHECK(t.find(metric_info(o.requirement.metric).key) != std::string::npos);
  CHECK(t.find("caution:") != std::string::npos);
  CHECK(t.find("verdict:") != std::string::npos);
  CHECK(t.find("root locus") != std::string::npos);
  // Both gains named: 12 (s + 4)(s^2 + 6 s + 3600) / ((s + 40)(s^2 + 84 s + 3600)) has the
  // low-frequency gain 12 * 4 / 40 = 1.2 (closed form).
  CHECK(t.find("gains        zero-pole gain 12, low-frequency gain 1.2 (0 integrator(s))") != std::string::npos);
  CHECK_FALSE(std::regex_search(t, std::regex("\\b(nan|inf)\\b")));
}

