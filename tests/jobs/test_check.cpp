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

TEST_CASE("run_check blames a cancelling compensator at the path it came from", "[jobs][check]") {
  // 1/((s - 3)(s + 1)) under a zero at +3: refused, naming the compensator's own path.
  const Spec spec = parse_spec(nlohmann::json::parse(
      R"({"plant": {"gain": 1, "poles": [3, -1]}, "requirements": {"phase_margin_deg": {"min": 30}}})"));
  Zpk c;
  c.gain = 5;
  c.zeros = {Complex(3, 0)};
  c.poles = {Complex(-10, 0)};
  CHECK_THROWS_WITH(run_check(spec, c), Catch::StartsWith("$.current: compensator zero"));
  CheckOptions own_file;
  own_file.compensator_path = "$";
  CHECK_THROWS_WITH(run_check(spec, c, own_file), Catch::StartsWith("$: compensator zero"));
}

TEST_CASE("the cancellation test is relative and does not depend on the time unit", "[jobs][check][stress]") {
  // The same loop in seconds and in units 1e4 times faster must be judged alike (scaling s).
  for (double unit : {1e-4, 1.0, 1e4}) {
    Plant g;
    g.tf.gain = 1;
    g.tf.poles = {Complex(2 * unit, 0), Complex(-5 * unit, 0)};
    Zpk c;
    c.poles = {Complex(-100 * unit, 0)};
    c.zeros = {Complex(2 * unit * (1 + 1e-9), 0)};  // within 1e-6 relative: a cancellation
    CHECK_THROWS_WITH(check_cancellations(c, g, "$.current"), Catch::Contains("cancels"));
    c.zeros = {Complex(2 * unit * (1 + 1e-4), 0)};  // 1e-4 away: no cancellation, the loop is
    CHECK_NOTHROW(check_cancellations(c, g, "$.current"));  // judged (unstable) on its poles
  }
  // An integrator (p = 0) is measured against the loop's frequency scale (geometric mean of the
  // non-zero root magnitudes, here 1e-4): a zero at 1e-11 cancels it, one at 1e-8 does not.
  Plant g;
  g.tf.poles = {Complex(0, 0), Complex(-1e-4, 0)};
  Zpk c;
  c.poles = {Complex(-1e-4, 0)};
  c.zeros = {Complex(-1e-11, 0)};
  CHECK_THROWS_WITH(check_cancellations(c, g, "$.current"), Catch::Contains("cancels"));
  c.zeros = {Complex(-1e-8, 0)};
  CHECK_NOTHROW(check_cancellations(c, g, "$.current"));
}

TEST_CASE("conditioning_warnings names a repeated root given as coefficients", "[jobs][check][stress]") {
  // (s + 2)^8 expanded (binomial coefficients times powers of 2): an 8-fold root, fixed by the
  // coefficients only to about eps^(1/8) = 1.1e-2 relative.
  nlohmann::json doc = {{"plant", {{"numerator", {256}}, {"denominator", {1, 16, 112, 448, 1120, 1792, 1792, 1024, 256}}}},
                        {"current", {{"gain", 1.2}}}};
  const std::vector<std::string> w = conditioning_warnings(doc);
  REQUIRE(w.size() == 1);
  CHECK_THAT(w[0], Catch::Contains("$.plant.denominator") && Catch::Contains("8 roots"));
  // The same plant as eight equal poles is exact: no warning; nor for a well-conditioned cubic.
  doc["plant"] = {{"gain", 256}, {"poles", {-2, -2, -2, -2, -2, -2, -2, -2}}};
  CHECK(conditioning_warnings(doc).empty());
  doc["plant"] = {{"numerator", {6}}, {"denominator", {1, 6, 11, 6}}};
  CHECK(conditioning_warnings(doc).empty());
}
