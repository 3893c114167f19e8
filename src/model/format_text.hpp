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

}  // namespace pw::detail
