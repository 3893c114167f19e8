#include <catch2/catch.hpp>

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
