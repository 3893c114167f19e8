// Internal helpers for reading JSON with JSON-path errors (not installed).
#pragma once

#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "polewright/requirements/spec.hpp"

namespace pw::detail {

using json = nlohmann::json;

std::string key_path(const std::string& parent, const std::string& key);
std::string index_path(const std::string& parent, size_t index);

// A short rendering of a value for messages: numbers, short strings, else the type name.
std::string describe(const json& j);

// Checks that j is an object whose keys are all in `allowed` (with a "did you mean" hint).
void expect_object(const json& j, const std::string& path, const std::vector<std::string>& allowed);

// A finite JSON number with |x| <= limit (strings such as "NaN" are rejected).
double read_number(const json& j, const std::string& path, double limit = 1e200);

// A whole number within [lo, hi] (2.0 counts as whole).
long long read_integer(const json& j, const std::string& path, long long lo, long long hi);

const json* member(const json& obj, const char* key);

}  // namespace pw::detail

namespace pw::detail {
// The same error with its path moved under `prefix` ("$.plant.x" under "$.spec" -> "$.spec.plant.x").
SpecError rerooted(const SpecError& e, const std::string& prefix, const std::string& suffix = "");
}  // namespace pw::detail
