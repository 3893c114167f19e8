#include <catch2/catch.hpp>

#include "polewright/jobs/check.hpp"
#include "polewright/requirements/spec_parse.hpp"

using namespace pw;

TEST_CASE("run_check evaluates every plant and traces the nominal locus", "[jobs][check]") {
  const Spec spec = parse_spec(read_json_file(std::string(POLEWRIGHT_SOURCE_DIR) + "/specs/wafer-stage.json"));
  CheckOptions o;
  std::string err;
  CHECK(o.IsValid(&err));
  const CheckReport r = run_check(spec, *spec.current, o);
  CHECK(r.evaluation.plants.size() == spec.plants.size());
  CHECK(r.evaluation.outcomes.size() == spec.requirements.items.size());
  CHECK_FALSE(r.locus.branches.empty());
  CHECK(r.region.min_damping > 0.0);
}

TEST_CASE("an unstable pole cancelled by a compensator zero is an error", "[jobs][check]") {
  Plant g;
  g.tf.gain = 1;
  g.tf.poles = {Complex(3, 0), Complex(-1, 0)};
  Zpk c;
  c.zeros = {Complex(3, 0)};
  c.poles = {Complex(-10, 0)};
  CHECK_THROWS_WITH(check_cancellations(c, g, "$.current"), Catch::Contains("$.current") && Catch::Contains("cancels"));
  c.zeros = {Complex(-1, 0)};  // a stable cancellation is allowed
  CHECK_NOTHROW(check_cancellations(c, g, "$.current"));
}
