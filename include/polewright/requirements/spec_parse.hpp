// Spec and compensator parsing with one-line errors naming the field as a JSON path.
#pragma once

#include <string>

#include <nlohmann/json_fwd.hpp>

#include "polewright/requirements/spec.hpp"

namespace pw {

// Largest spec or compensator file accepted, in bytes.
constexpr size_t kMaxInputBytes = 8u << 20;
// Deepest nesting of arrays and objects accepted.
constexpr int kMaxNesting = 64;

// Reads and parses a JSON file; SpecError("$", ...) for an unreadable file, a directory, a file
// over the size limit, nesting over the limit, or invalid JSON (with line and column).
nlohmann::json read_json_file(const std::string& path);

// Parses JSON text with the same checks as read_json_file.
nlohmann::json parse_json_text(const std::string& text);

Spec parse_spec(const nlohmann::json& doc);

// A compensator object (either form) at `path` (used for `current` and --compensator files).
Zpk parse_compensator(const nlohmann::json& j, const std::string& path);

// A plant object without variants (used for the nominal plant; exposed for tests and fuzzing).
// `current` is the compensator in service, which a measured loop (measured_loop: true) needs.
Plant parse_plant_object(const nlohmann::json& j, const std::string& path, bool allow_name, const Zpk* current = nullptr);

// Keys the parser accepts for each object kind (compared with the JSON Schema by a test).
const std::vector<std::string>& known_keys(const std::string& object_kind);

}  // namespace pw
