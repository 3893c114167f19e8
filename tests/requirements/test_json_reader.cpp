#include <catch2/catch.hpp>

#include "requirements/json_reader.hpp"

using namespace pw;
using namespace pw::detail;

TEST_CASE("json paths, typed reads and unknown-key hints", "[requirements][json_reader]") {
  CHECK(key_path("$", "plant") == "$.plant");
  CHECK(key_path("$", "odd key") == "$[\"odd key\"]");
  CHECK(index_path("$.plant.numerator", 2) == "$.plant.numerator[2]");
  CHECK(read_number(json(2.5), "$.x") == 2.5);
  CHECK_THROWS_WITH(read_number(json("NaN"), "$.x"), Catch::Contains("$.x") && Catch::Contains("string"));
  CHECK_THROWS_WITH(read_number(json(1e300), "$.x"), Catch::Contains("beyond"));
  CHECK(read_integer(json(2.0), "$.k", 0, 4) == 2);
  CHECK_THROWS_WITH(read_integer(json(2.5), "$.k", 0, 4), Catch::Contains("whole number"));
  CHECK_THROWS_WITH(read_integer(json(7), "$.k", 0, 4), Catch::Contains("within 0..4"));
  CHECK_THROWS_WITH(expect_object(json::parse(R"({"lede": 1})"), "$.stages", {"lead", "lag"}),
                    Catch::Contains("$.stages.lede") && Catch::Contains("did you mean \"lead\""));
  CHECK_THROWS_WITH(expect_object(json::array(), "$.stages", {"lead"}), Catch::Contains("must be an object"));
  CHECK(describe(json("abc")) == "\"abc\"");
  const json o = json::parse(R"({"a": 1})");
  CHECK(member(o, "a") != nullptr);
  CHECK(member(o, "b") == nullptr);
}
