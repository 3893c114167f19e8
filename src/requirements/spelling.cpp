#include "polewright/requirements/spelling.hpp"

#include <algorithm>
#include <cctype>
#include <vector>

namespace pw {

int edit_distance(const std::string& a, const std::string& b) {
  const size_t n = a.size(), m = b.size();
  std::vector<std::vector<int>> d(n + 1, std::vector<int>(m + 1, 0));
  for (size_t i = 0; i <= n; ++i) d[i][0] = static_cast<int>(i);
  for (size_t j = 0; j <= m; ++j) d[0][j] = static_cast<int>(j);
  for (size_t i = 1; i <= n; ++i)
    for (size_t j = 1; j <= m; ++j) {
      const int cost = a[i - 1] == b[j - 1] ? 0 : 1;
      d[i][j] = std::min({d[i - 1][j] + 1, d[i][j - 1] + 1, d[i - 1][j - 1] + cost});
      if (i > 1 && j > 1 && a[i - 1] == b[j - 2] && a[i - 2] == b[j - 1])
        d[i][j] = std::min(d[i][j], d[i - 2][j - 2] + 1);
    }
  return d[n][m];
}

std::string key_stem(const std::string& key) {
  // Longest suffixes first, so "_rad_s" goes before "_s".
  static const char* const kUnits[] = {"_rad_s", "_pct", "_deg", "_db", "_s"};
  for (const char* u : kUnits) {
    const std::string unit(u);
    if (key.size() > unit.size() + 1 && key.compare(key.size() - unit.size(), unit.size(), unit) == 0)
      return key.substr(0, key.size() - unit.size());
  }
  return key;
}

namespace {

std::string lower(std::string s) {
  for (char& c : s) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  return s;
}

}  // namespace

std::string closest_word(const std::string& word, const std::vector<std::string>& candidates) {
  const std::string w = lower(word);
  const int limit = std::max(2, static_cast<int>(w.size()) / 3);
  // Rank: a case-only difference, then a key whose unit suffix was left off or misspelt
  // ("overshoot" for "overshoot_pct"), then plain edit distance over the whole key.
  // A word that starts exactly one candidate's words ("pade" for "pade_order") counts as its stem.
  std::string prefixed;
  int n_prefixed = 0;
  if (w.size() >= 3)
    for (const std::string& c : candidates) {
      const std::string lc = lower(c);
      if (lc.size() > w.size() + 1 && lc.compare(0, w.size() + 1, w + "_") == 0) {
        prefixed = c;
        ++n_prefixed;
      }
    }
  std::string best;
  int best_score = 3 * (limit + 1);
  for (const std::string& c : candidates) {
    const std::string lc = lower(c);
    int score;
    if (lc == w) score = 0;
    else if (n_prefixed == 1 && c == prefixed) score = 1;
    else {
      const std::string stem = key_stem(lc);
      const int d_stem = stem != lc ? edit_distance(w, stem) : limit + 1;
      const int d_full = edit_distance(w, lc);
      if (d_stem <= limit && d_stem < d_full) score = 1 + 3 * d_stem;
      else if (d_full <= limit) score = 2 + 3 * d_full;
      else continue;
    }
    if (score < best_score) {
      best_score = score;
      best = c;
    }
  }
  return best;
}

}  // namespace pw
