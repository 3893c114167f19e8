#include <catch2/catch.hpp>

#include <cmath>

#include "outputs/text_table.hpp"

using namespace pw;

TEST_CASE("text table aligns columns", "[outputs][text_table]") {
  TextTable t({"a", "long header"});
  t.add({"wide cell", "x"});
  const std::string s = t.render("");
  CHECK(s == "a          long header\n---------  -----------\nwide cell  x\n");
  CHECK(fmt_number(1234567.0) == "1.235e+06");
  CHECK(fmt_number(std::optional<double>()) == "-");
  CHECK(fmt_number(NAN) == "-");
}

TEST_CASE("a value that misses its limit never prints as the limit", "[outputs][text_table]") {
  // Issue 11 / 17: overshoot 20.000157 % against 20 % printed "20 > 20".
  CHECK(fmt_against_limit(20.000157, 20.0, true) == "20.0002");
  CHECK(fmt_against_limit(20.0003, 20.0, true) == "20.0003");
  CHECK(fmt_against_limit(19.99997, 20.0, false) == "20");     // met: the usual four digits
  CHECK(fmt_against_limit(0.5, 20.0, true) == "0.5");          // already different
  CHECK(fmt_against_limit(1.0 + 1e-15, 1.0, true) != fmt_number(1.0, 17));
  const Requirement os{MetricId::Overshoot, Sense::AtMost, 20.0};
  std::vector<RequirementOutcome> outcomes(1);
  outcomes[0].requirement = os;
  MetricValue v;
  v.value = 20.000157;
  CHECK(fmt_metric_against(v, MetricId::Overshoot, outcomes) == "20.0002");
  CHECK(fmt_metric_against(v, MetricId::SettlingTime, outcomes) == "20");  // no requirement on it
  v.infinite = true;
  CHECK(fmt_metric_against(v, MetricId::Overshoot, outcomes) == "unbounded");
  // Margins within the comparison tolerance print as 0, not -2.776e-17.
  const Requirement ramp{MetricId::SteadyStateError, Sense::AtMost, 0.2};
  CHECK(fmt_margin(ramp, std::nextafter(0.2, 1.0)) == "0");
  CHECK(fmt_margin(ramp, 0.2003) == "-0.0003");
}
