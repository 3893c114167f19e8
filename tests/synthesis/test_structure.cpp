#include <catch2/catch.hpp>

#include "polewright/synthesis/structure.hpp"

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
