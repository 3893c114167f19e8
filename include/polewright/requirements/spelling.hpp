// "Did you mean" hints for misspelled keys.
#pragma once

#include <string>
#include <vector>

namespace pw {

// Edit distance (insertions, deletions, substitutions, adjacent transpositions).
int edit_distance(const std::string& a, const std::string& b);

// A key without its unit suffix (_rad_s, _pct, _deg, _db, _s): "overshoot_pct" -> "overshoot".
std::string key_stem(const std::string& key);

// The closest candidate, ignoring case, within a distance of max(2, |word| / 3) of either the whole
// candidate or its stem (so a key written without its unit, "band" for "band_pct", is found), or ""
// when none is close. A match on the stem wins over an equally close match on the whole key. A word
// of 3 or more letters that begins exactly one candidate's words ("pade" for "pade_order") matches
// it as a stem.
std::string closest_word(const std::string& word, const std::vector<std::string>& candidates);

}  // namespace pw
