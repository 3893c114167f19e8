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

TEST_CASE("a key written without its unit finds the key with it", "[requirements][spelling]") {
  // The two cases of issue 17: edit distance 4 from the full key, 0 from its stem.
  CHECK(edit_distance("overshoot", "overshoot_pct") == 4);
  CHECK(closest_word("overshoot", {"overshoot_pct", "settling_time_s", "rise_time_s"}) == "overshoot_pct");
  CHECK(closest_word("band", {"max", "band_pct"}) == "band_pct");
  CHECK(closest_word("settling_time", {"overshoot_pct", "settling_time_s", "rise_time_s"}) == "settling_time_s");
  CHECK(closest_word("phase_margin", {"phase_margin_deg", "gain_margin_db"}) == "phase_margin_deg");
  CHECK(closest_word("gain_margin", {"phase_margin_deg", "gain_margin_db"}) == "gain_margin_db");
  CHECK(closest_word("frequency_range", {"lead", "frequency_range_rad_s"}) == "frequency_range_rad_s");
  CHECK(closest_word("delay", {"gain", "delay_s", "poles"}) == "delay_s");
  CHECK(closest_word("Overshoot_PCT", {"overshoot_pct"}) == "overshoot_pct");  // case only
  CHECK(closest_word("overshot", {"overshoot_pct"}) == "overshoot_pct");       // misspelt stem
  // A stem never matches a word far from it.
  CHECK(closest_word("delta", {"overshoot_pct", "band_pct"}).empty());
  CHECK(closest_word("pade", {"pade_order", "samples", "horizon_s"}) == "pade_order");
  CHECK(closest_word("gain", {"gain_margin_db", "gain_tolerance_pct", "rise_time_s"}).empty());  // two begin so
  CHECK(key_stem("crossover_rad_s") == "crossover");
  CHECK(key_stem("rise_time_s") == "rise_time");
  CHECK(key_stem("gain") == "gain");
  CHECK(key_stem("_s") == "_s");
}
