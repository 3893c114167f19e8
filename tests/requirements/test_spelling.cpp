#include <catch2/catch.hpp>

#include "polewright/requirements/spelling.hpp"

using namespace pw;

TEST_CASE("edit distance and closest word", "[requirements][spelling]") {
  CHECK(edit_distance("kitten", "sitting") == 3);  // classic example
  CHECK(edit_distance("ab", "ba") == 1);           // a transposition counts once
  CHECK(closest_word("overshot_pct", {"overshoot_pct", "rise_time_s"}) == "overshoot_pct");
  CHECK(closest_word("denominatr", {"numerator", "denominator"}) == "denominator");
  CHECK(closest_word("zzzz", {"overshoot_pct"}).empty());
}
