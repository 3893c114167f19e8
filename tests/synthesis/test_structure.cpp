#include <catch2/catch.hpp>
#include <cmath>

#include "polewright/synthesis/structure.hpp"
#include "polewright/synthesis/parameters.hpp"
#include "polewright/synthesis/retune_space.hpp"

using namespace pw;

TEST_CASE("structures are enumerated simplest first", "[synthesis][structure]") {
  StageSettings s;
  s.lead = 2;
  s.notch = 1;
  s.integrator = IntegratorChoice::Auto;
  const std::vector<Structure> all = enumerate_structures(s);
  CHECK(all.size() == 3 * 2 * 2);
  CHECK(all.front().stage_count() == 0);  // the pure gain first
  for (size_t i = 1; i < all.size(); ++i) CHECK(all[i - 1].stage_count() <= all[i].stage_count());
  CHECK(all.back().stage_count() == 4);
  CHECK(all.back().names() == std::vector<std::string>{"integrator", "lead", "lead", "notch"});
  CHECK(all.back().order() == 5);
  StageSettings on;
  on.integrator = IntegratorChoice::On;
  REQUIRE(enumerate_structures(on).size() == 1);
  CHECK(enumerate_structures(on)[0].integrator);
  CHECK(std::string(stage_name(StageKind::Notch)) == "notch");
}

TEST_CASE("one stage table: parameter counts agree with both parametrisations", "[synthesis][structure]") {
  // Each stage's parameters as make_param_space lays them out, and an added stage's as
  // make_retune_space does; the orders are those of the stage's transfer function (a first-order
  // lead or lag, a second-order notch, (s + wi)/s).
  for (StageKind k : {StageKind::Integrator, StageKind::Lead, StageKind::Lag, StageKind::Notch}) {
    Structure s;
    s.integrator = k == StageKind::Integrator;
    s.lead = k == StageKind::Lead;
    s.lag = k == StageKind::Lag;
    s.notch = k == StageKind::Notch;
    CHECK(make_param_space(s, {0.1, 100.0}, -1, 1, 1.0).dim() == 1 + stage_facts(k).parameters);
    CHECK(s.order() == stage_facts(k).order);
    CHECK(std::string(stage_name(k)) == stage_facts(k).name);
  }
  Zpk unit;
  unit.gain = 1.0;
  for (AddedStage a : {AddedStage::FirstOrder, AddedStage::Notch, AddedStage::Integrator}) {
    const RetuneSpace rs = make_retune_space(unit, {0.1, 100.0}, {a});
    CHECK(rs.dim() - rs.base_dim == added_stage_parameters(a));
    const Zpk z = retune_to_zpk(rs, rs.current);
    CHECK(static_cast<int>(z.poles.size()) == added_stage_order(a));
  }
}

TEST_CASE("pid stages enumerate exactly the PID with its filter, then with notches", "[synthesis][structure]") {
  StageSettings s;
  s.pid = true;
  s.integrator = IntegratorChoice::On;
  s.lead = 1;
  s.notch = 2;
  const std::vector<Structure> all = enumerate_structures(s);
  REQUIRE(all.size() == 3);
  for (size_t i = 0; i < all.size(); ++i) {
    CHECK(all[i].integrator);
    CHECK(all[i].lead == 1);
    CHECK(all[i].lag == 0);
    CHECK(all[i].notch == static_cast<int>(i));
  }
  CHECK(all[0].names() == std::vector<std::string>{"integrator", "lead"});
}

TEST_CASE("pid_shape_violation: zero while the PI corner is below the filter pole, ln of the excess above", "[synthesis][structure][pid]") {
  // C = k (s + wi)(s + zl) / (s (s + pl)) reads as a PID with all terms of one sign iff wi < pl
  // (Kd = k (pl - wi)(pl - zl) / pl^3 >= 0, partial fractions).
  Structure s;
  s.integrator = true;
  s.lead = 1;
  ParamSpace ps = make_param_space(s, {0.1, 100.0}, -2, 2, 1.0);
  ps.pid_shape = true;
  Zpk c;
  c.gain = 1.0;
  c.zeros = {Complex(-2.0, 0), Complex(-1.0, 0)};  // integrator corner 2, lead zero 1
  c.poles = {Complex(0, 0), Complex(-8.0, 0)};     // lead pole 8
  CHECK(pid_shape_violation(ps, c) == 0.0);
  c.zeros[0] = Complex(-20.0, 0);                  // corner above the filter pole
  CHECK(pid_shape_violation(ps, c) == Approx(std::log(20.0 / 8.0)));
  ps.pid_shape = false;
  CHECK(pid_shape_violation(ps, c) == 0.0);        // not asked for
}
