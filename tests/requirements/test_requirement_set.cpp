#include <catch2/catch.hpp>

#include <cmath>

#include "polewright/requirements/requirement_set.hpp"

using namespace pw;

TEST_CASE("requirement margins, met and violations", "[requirements][requirement_set]") {
  const Requirement os{MetricId::Overshoot, Sense::AtMost, 10.0};
  const Requirement pm{MetricId::PhaseMargin, Sense::AtLeast, 45.0};
  MetricValue v;
  v.value = 12.0;
  CHECK(requirement_margin(os, 12.0) == Approx(-2.0));
  CHECK_FALSE(requirement_met(os, v));
  CHECK(requirement_violation(os, v) == Approx(0.2));
  v.value = 50.0;
  CHECK(requirement_met(pm, v));
  CHECK(requirement_violation(pm, v) == 0.0);
  MetricValue inf;
  inf.infinite = true;
  CHECK(requirement_met(pm, inf));       // an unbounded margin meets a minimum
  CHECK_FALSE(requirement_met(os, inf)); // an unbounded value misses a maximum
  CHECK(requirement_violation(os, MetricValue{}) == 1e3);  // missing value
  RequirementSet set;
  set.items = {os, pm};
  CHECK(set.has(MetricId::PhaseMargin));
  CHECK_FALSE(set.has(MetricId::RiseTime));
  CHECK(set.limit(MetricId::Overshoot, Sense::AtMost).value() == 10.0);
  CHECK_FALSE(set.limit(MetricId::Overshoot, Sense::AtLeast));
}

TEST_CASE("verdicts compare with a tolerance of a few ulps", "[requirements][requirement_set]") {
  // Issue 17: Kv = 5 exactly against a ramp error of 0.2 printed "margin -2.776e-17 NO"; 1/Kv
  // computed one ulp above 0.2 (2.776e-17) must meet, a real shortfall of 1e-12 must not.
  const Requirement ramp{MetricId::SteadyStateError, Sense::AtMost, 0.2};
  MetricValue v;
  v.value = std::nextafter(0.2, 1.0);
  CHECK(requirement_margin(ramp, *v.value) < 0.0);
  CHECK(requirement_met(ramp, v));
  CHECK(requirement_violation(ramp, v) == 0.0);
  v.value = 0.2 * (1.0 + 1e-12);
  CHECK_FALSE(requirement_met(ramp, v));
  CHECK(requirement_violation(ramp, v) > 0.0);
  const Requirement pm{MetricId::PhaseMargin, Sense::AtLeast, 45.0};
  v.value = std::nextafter(std::nextafter(45.0, 0.0), 0.0);  // two ulps below
  CHECK(requirement_met(pm, v));
  CHECK(requirement_tolerance(pm, 45.0) == Approx(4 * 45.0 * 2.220446049250313e-16));
}
