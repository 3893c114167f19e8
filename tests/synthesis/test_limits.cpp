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

TEST_CASE("a load-recovery bound needs the compensator's own integrator, even on an integrating plant", "[synthesis][limits]") {
  // Final-value theorem on G S = G / (1 + C G) for a load step at the plant input: with G = 1/s
  // and a constant C(0) the output settles at d / C(0), not 0; a compensator integrator takes it
  // to 0. So the plant's integrator does not satisfy the bound.
  Plant motor;
  motor.name = "motor";
  motor.tf.poles = {Complex(0, 0), Complex(-5, 0)};
  RequirementSet req;
  req.items = {{MetricId::LoadRecovery, Sense::AtMost, 2.0}};
  CHECK(compensator_integrator_driver(req) == MetricId::LoadRecovery);
  StageSettings none, some;
  some.integrator = IntegratorChoice::Auto;
  const Region region = region_from_requirements(req);
  const std::vector<PlantLimit> off = plant_limits({motor}, req, region, none);
  REQUIRE(off.size() == 1);
  CHECK(off[0].kind == "integrators");
  CHECK(off[0].binding);
  CHECK(off[0].requirement == "load_recovery_s");
  const std::vector<PlantLimit> on = plant_limits({motor}, req, region, some);
  REQUIRE(on.size() == 1);
  CHECK_FALSE(on[0].binding);
  RequirementSet iae;
  iae.items = {{MetricId::LoadIae, Sense::AtMost, 0.1}};
  CHECK(compensator_integrator_driver(iae) == MetricId::LoadIae);
  RequirementSet output;
  output.items = {{MetricId::OutputRecovery, Sense::AtMost, 2.0}};  // any loop integrator rejects it
  CHECK_FALSE(compensator_integrator_driver(output));
}

TEST_CASE("the actuator's range: a reference step needing u = r / G(0) beyond the limits binds", "[synthesis][limits][actuator]") {
  // With integral action y -> r needs u -> r / G(0) (final-value theorem, by hand):
  // G = 3.125 / (s + 1.25) has G(0) = 2.5, so a step of 1.5 needs u = 0.6.
  Plant pump;
  pump.name = "pump";
  pump.tf.gain = 3.125;
  pump.tf.poles = {Complex(-1.25, 0)};
  RequirementSet req;
  req.items = {{MetricId::SteadyStateError, Sense::AtMost, 0.0}, {MetricId::SaturatedSettlingTime, Sense::AtMost, 3.0}};
  ActuatorLimits lim;
  lim.minimum = 0.0;
  lim.maximum = 0.5;
  req.actuator = lim;
  req.reference_step = 1.5;
  StageSettings stages;
  stages.integrator = IntegratorChoice::On;
  const Region region = region_from_requirements(req);
  auto actuator_limit = [&](const std::vector<PlantLimit>& l) -> const PlantLimit* {
    for (const PlantLimit& x : l)
      if (x.kind == "actuator_range") return &x;
    return nullptr;
  };
  const std::vector<PlantLimit> l = plant_limits({pump}, req, region, stages);
  const PlantLimit* a = actuator_limit(l);
  REQUIRE(a);
  CHECK(a->at == Approx(0.6).epsilon(1e-12));
  CHECK(a->binding);
  CHECK(a->requirement == "saturated_settling_time_s");
  CHECK_THAT(a->message, Catch::Contains("above the actuator maximum 0.5"));
  // A negative step needs u = -0.6, below the minimum 0.
  req.reference_step = -1.5;
  const std::vector<PlantLimit> neg = plant_limits({pump}, req, region, stages);
  REQUIRE(actuator_limit(neg));
  CHECK_THAT(actuator_limit(neg)->message, Catch::Contains("below the actuator minimum 0"));
  // Within the limits, or on a plant with an integrator (u -> 0), nothing is said.
  req.reference_step = 1.0;  // u = 0.4
  CHECK_FALSE(actuator_limit(plant_limits({pump}, req, region, stages)));
  req.reference_step = 1.5;
  Plant motor;
  motor.tf.gain = 4;
  motor.tf.poles = {Complex(0, 0), Complex(-2, 0)};
  CHECK_FALSE(actuator_limit(plant_limits({motor}, req, region, stages)));
}

TEST_CASE("the actuator's range: a load step beyond the headroom at the operating point binds", "[synthesis][limits][actuator]") {
  // Holding r0 = 1.5 on G(0) = 2.5 takes u0 = 0.6; a load d at the plant input then needs
  // u = u0 - d (final-value theorem, by hand). A plant with an integrator holds r0 with u0 = 0.
  Plant pump;
  pump.name = "pump";
  pump.tf.gain = 3.125;
  pump.tf.poles = {Complex(-1.25, 0)};
  RequirementSet req;
  req.items = {{MetricId::SaturatedLoadRecovery, Sense::AtMost, 3.0}};
  ActuatorLimits lim;
  lim.minimum = 0.0;
  lim.maximum = 1.0;
  req.actuator = lim;
  req.reference_step = 1.5;
  req.disturbance_step = 0.8;
  StageSettings stages;
  const Region region = region_from_requirements(req);
  auto actuator_limit = [&](const std::vector<PlantLimit>& l) -> const PlantLimit* {
    for (const PlantLimit& x : l)
      if (x.kind == "actuator_range") return &x;
    return nullptr;
  };
  const std::vector<PlantLimit> l = plant_limits({pump}, req, region, stages);
  const PlantLimit* a = actuator_limit(l);
  REQUIRE(a);
  CHECK(a->at == Approx(-0.2).epsilon(1e-12));
  CHECK(a->requirement == "saturated_load_recovery_s");
  CHECK_THAT(a->message, Catch::Contains("below the actuator minimum 0"));
  req.disturbance_step = 0.5;  // u = 0.1: within
  CHECK_FALSE(actuator_limit(plant_limits({pump}, req, region, stages)));
  req.operating_reference = 0.5;  // u0 = 0.2, u = -0.3
  CHECK(actuator_limit(plant_limits({pump}, req, region, stages)));
  req.disturbance_step = -1.0;  // u = 1.2 above the maximum
  CHECK_THAT(actuator_limit(plant_limits({pump}, req, region, stages))->message, Catch::Contains("above the actuator maximum 1"));
  Plant motor;
  motor.tf.gain = 4;
  motor.tf.poles = {Complex(0, 0), Complex(-2, 0)};
  req.disturbance_step = 0.9;  // u = -0.9 for the integrating plant
  CHECK(actuator_limit(plant_limits({motor}, req, region, stages)));
  req.disturbance_step = -0.9;  // u = 0.9: within
  CHECK_FALSE(actuator_limit(plant_limits({motor}, req, region, stages)));
  // The recovery needs an integrator in the compensator.
  CHECK(compensator_integrator_driver(req) == MetricId::SaturatedLoadRecovery);
}
