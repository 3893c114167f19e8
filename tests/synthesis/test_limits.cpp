#include <catch2/catch.hpp>

#include "polewright/synthesis/limits.hpp"

using namespace pw;

TEST_CASE("plant limits: right-half-plane zero, unstable pole, dead time, integrators", "[synthesis][limits]") {
  // Common-practice bounds (field notes): RHP zero z caps crossover near z/2, unstable pole p needs
  // about 2p, dead time T caps near 1/T.
  Plant nmp;
  nmp.name = "nmp";
  nmp.tf.gain = -1;
  nmp.tf.zeros = {Complex(2, 0)};
  nmp.tf.poles = {Complex(-1, 0), Complex(-3, 0)};
  RequirementSet fast;
  fast.items = {{MetricId::SettlingTime, Sense::AtMost, 0.2}, {MetricId::SteadyStateError, Sense::AtMost, 0.0}};
  const Region region = region_from_requirements(fast);
  StageSettings none;
  const std::vector<PlantLimit> l = plant_limits({nmp}, fast, region, none);
  REQUIRE(l.size() == 2);
  CHECK(l[0].kind == "rhp_zero");
  CHECK(*l[0].max_crossover_rad_s == 1.0);
  CHECK(l[0].binding);
  CHECK(l[0].requirement == "settling_time_s");
  CHECK(l[1].kind == "integrators");
  CHECK(l[1].binding);  // a zero step error needs an integrator and the stages allow none
  CHECK(required_crossover(region, fast) > 1.0);

  Plant bearing;
  bearing.tf.poles = {Complex(30, 0), Complex(-30, 0)};
  bearing.delay_s = 0.01;
  RequirementSet capped;
  capped.items = {{MetricId::Crossover, Sense::AtMost, 40.0}};
  const std::vector<PlantLimit> b = plant_limits({bearing}, capped, region_from_requirements(capped), none);
  REQUIRE(b.size() == 2);
  CHECK(b[0].kind == "unstable_pole");
  CHECK(*b[0].min_crossover_rad_s == 60.0);
  CHECK(b[0].binding);
  CHECK(b[1].kind == "dead_time");
  CHECK(*b[1].max_crossover_rad_s == Approx(100.0));
  CHECK_FALSE(b[1].binding);
}
