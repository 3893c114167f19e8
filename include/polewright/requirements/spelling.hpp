// "Did you mean" hints for misspelled keys.
#pragma once

#include <string>
#include <vector>

namespace pw {

// Edit distance (insertions, deletions, substitutions, adjacent transpositions).
int edit_distance(const std::string& a, const std::string& b);

// The closest candidate within a distance of max(2, |word| / 3), or "" when none is close.
std::string closest_word(const std::string& word, const std::vector<std::string>& candidates);

}  // namespace pw
