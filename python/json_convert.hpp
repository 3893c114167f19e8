// Python values <-> nlohmann::json for the module: a spec given as a dict becomes the same JSON
// the CLI reads from a file, and a report's JSON becomes dicts, lists, str, int, float, bool, None.
#pragma once

#include <string>

#include <nlohmann/json.hpp>
#include <pybind11/pybind11.h>

namespace pwpy {

// A Python document (dict, list, tuple, str, int, float, bool, None; numpy scalars and arrays
// through their tolist()) as JSON. Throws pw::SpecError naming the offending element by its JSON
// path ("$.plant.poles[2]") for a non-finite number, a key that is not a string, a value of
// another type, or nesting deeper than the file reader accepts. Non-negative integers become
// unsigned numbers, as nlohmann's parser makes them, so a dict and the file it was read from give
// equal documents.
nlohmann::json to_json(pybind11::handle value, const std::string& path = "$");

// A spec, result or compensator argument: a dict (converted by to_json), or a path (str or
// os.PathLike) read with the CLI's file reader. Throws TypeError for anything else.
nlohmann::json document_argument(pybind11::handle value, const char* what);

// JSON as Python values (objects keep their key order).
pybind11::object to_python(const nlohmann::json& j);
pybind11::object to_python(const nlohmann::ordered_json& j);

}  // namespace pwpy
