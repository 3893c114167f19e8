#include <catch2/catch.hpp>

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
