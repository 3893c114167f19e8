#include "json_reader.hpp"

#include <cmath>
#include <cstdio>

#include "polewright/requirements/spelling.hpp"

namespace pw::detail {

std::string key_path(const std::string& parent, const std::string& key) {
  bool plain = !key.empty();
  for (char c : key) plain = plain && (std::isalnum(static_cast<unsigned char>(c)) || c == '_' || c == '$');
  return plain ? parent + "." + key : parent + "[" + json(key).dump() + "]";
}

std::string index_path(const std::string& parent, size_t index) {
  return parent + "[" + std::to_string(index) + "]";
}

std::string describe(const json& j) {
  if (j.is_number()) {
    char buf[64];
    std::snprintf(buf, sizeof buf, "%.17g", j.get<double>());
    return buf;
  }
  if (j.is_string()) {
    const std::string s = j.get<std::string>();
    return s.size() <= 40 ? json(s).dump() : "a long string";
  }
  if (j.is_boolean()) return j.get<bool>() ? "true" : "false";
  if (j.is_null()) return "null";
  if (j.is_array()) return "an array";
  return "an object";
}

void expect_object(const json& j, const std::string& path, const std::vector<std::string>& allowed) {
  if (!j.is_object()) throw SpecError(path, "must be an object (got " + describe(j) + ")");
  for (auto it = j.begin(); it != j.end(); ++it) {
    bool ok = false;
    for (const std::string& a : allowed) ok = ok || a == it.key();
    if (ok) continue;
    const std::string hint = closest_word(it.key(), allowed);
    std::string msg = "unknown key";
    if (!hint.empty()) msg += " (did you mean \"" + hint + "\"?)";
    else {
      msg += "; allowed here:";
      for (const std::string& a : allowed) msg += " " + a;
    }
    throw SpecError(key_path(path, it.key()), msg);
  }
}

double read_number(const json& j, const std::string& path, double limit) {
  if (!j.is_number()) {
    if (j.is_string()) throw SpecError(path, "must be a number, not the string " + describe(j));
    throw SpecError(path, "must be a number (got " + describe(j) + ")");
  }
  const double v = j.get<double>();
  if (!std::isfinite(v)) throw SpecError(path, "must be a finite number");
  if (std::abs(v) > limit) {
    char buf[64];
    std::snprintf(buf, sizeof buf, "%g", limit);
    throw SpecError(path, "magnitude " + describe(j) + " is beyond the supported " + buf);
  }
  return v;
}

long long read_integer(const json& j, const std::string& path, long long lo, long long hi) {
  const std::string range = " within " + std::to_string(lo) + ".." + std::to_string(hi);
  if (!j.is_number()) throw SpecError(path, "must be a whole number" + range + " (got " + describe(j) + ")");
  const double v = j.get<double>();
  if (!std::isfinite(v) || std::floor(v) != v) throw SpecError(path, "must be a whole number (got " + describe(j) + ")");
  if (v < static_cast<double>(lo) || v > static_cast<double>(hi))
    throw SpecError(path, "must be" + range + " (got " + describe(j) + ")");
  if (j.is_number_unsigned()) return static_cast<long long>(j.get<unsigned long long>());
  if (j.is_number_integer()) return j.get<long long>();
  return static_cast<long long>(v);
}

const json* member(const json& obj, const char* key) {
  auto it = obj.find(key);
  return it == obj.end() ? nullptr : &*it;
}

}  // namespace pw::detail

namespace pw::detail {
SpecError rerooted(const SpecError& e, const std::string& prefix, const std::string& suffix) {
  const std::string& inner = e.path();
  const std::string what = e.what();
  const std::string message = what.substr(std::min(what.size(), inner.size() + 2));
  return SpecError(prefix + (inner.empty() ? std::string() : inner.substr(1)), message + suffix);
}
}  // namespace pw::detail
