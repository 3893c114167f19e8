// Private helper (not installed): a message with up to three numbers in a printf pattern, for the
// one-line errors and notes of every layer. It lives in the lowest layer so that all may use it.
#pragma once

#include <cstdio>
#include <string>

namespace pw::detail {

inline std::string fmt(const char* pattern, double a, double b = 0.0, double c = 0.0) {
  char buf[256];
  std::snprintf(buf, sizeof buf, pattern, a, b, c);
  return buf;
}

// "no integrator", "1 integrator", "2 integrators".
inline std::string integrators_words(int n) {
  if (n == 0) return "no integrator";
  return std::to_string(n) + (n == 1 ? " integrator" : " integrators");
}

}  // namespace pw::detail
