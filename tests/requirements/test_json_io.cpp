#include <catch2/catch.hpp>

#include <cstdio>
#include <fstream>
#include <string>
#include <sstream>

#include <dirent.h>

#include "polewright/requirements/spec_parse.hpp"

using namespace pw;

namespace {
std::string error_of(const std::function<void()>& f) {
  try {
    f();
  } catch (const SpecError& e) {
    return e.what();
  }
  return "";
}
}  // namespace

TEST_CASE("JSON text: syntax errors name line and column; nesting and size limits", "[requirements][json_io]") {
  const std::string e = error_of([] { parse_json_text("{\n  \"plant\": [1,,2]\n}"); });
  CHECK(e.rfind("$: invalid JSON at line 2", 0) == 0);
  CHECK(error_of([] { parse_json_text(std::string(100, '[') + std::string(100, ']')); }).find("nesting") != std::string::npos);
  CHECK(error_of([] { parse_json_text("[\"[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[\"]"); }).empty());
  CHECK(error_of([] { parse_json_text(std::string(kMaxInputBytes + 1, ' ')); }).find("larger") != std::string::npos);
}

TEST_CASE("JSON files: missing, directory, readable", "[requirements][json_io]") {
  CHECK(error_of([] { read_json_file("/nonexistent/spec.json"); }).find("no such file") != std::string::npos);
  CHECK(error_of([] { read_json_file("/tmp"); }).find("directory") != std::string::npos);
  const std::string path = "/tmp/polewright-test-json-io.json";
  { std::ofstream(path) << "{\"a\": 1}"; }
  CHECK(read_json_file(path).at("a") == 1);
  std::remove(path.c_str());
}

TEST_CASE("a number beyond double range is bad input, not a crash (fuzzer finding)", "[requirements][json_io]") {
  CHECK(error_of([] { parse_json_text("{\"denominator\": [1e777, 2]}"); }).rfind("$: invalid JSON: number overflow", 0) == 0);
}

TEST_CASE("every input the fuzzers once crashed on is now a clean SpecError or a spec", "[requirements][json_io][fuzz]") {
  const std::string dir = std::string(POLEWRIGHT_SOURCE_DIR) + "/tests/fuzz/regressions";
  DIR* d = opendir(dir.c_str());
  REQUIRE(d);
  int count = 0;
  while (dirent* e = readdir(d)) {
    if (e->d_name[0] == '.') continue;
    INFO(e->d_name);
    std::ifstream in(dir + "/" + e->d_name, std::ios::binary);
    std::stringstream ss;
    ss << in.rdbuf();
    try {
      const nlohmann::json j = parse_json_text(ss.str());
      (void)parse_spec(j);
    } catch (const SpecError&) {
    }
    ++count;
  }
  closedir(d);
  CHECK(count >= 2);
}

TEST_CASE("a key given twice in one object is refused with its JSON path, at any depth", "[requirements][json_io]") {
  // RFC 8259 section 4: names within an object SHOULD be unique; a parser that keeps the last one
  // silently (nlohmann does) turns a pasted second "plant" into a different design.
  CHECK(error_of([] { parse_json_text(R"({"plant": 1, "plant": 2})"); }) == "$.plant: appears twice in one object (a duplicate key)");
  CHECK(error_of([] { parse_json_text(R"({"a": {"b": [0, {"c": 1, "c": 1}]}})"); }).rfind("$.a.b[1].c: appears twice", 0) == 0);
  CHECK(error_of([] { parse_json_text(R"([[1, 2], {"x": 1}, {"y": {"z": 1, "z": 2}}])"); }).rfind("$[2].y.z: appears twice", 0) == 0);
  CHECK(error_of([] { parse_json_text(R"({"odd key": 1, "odd key": 1})"); }).rfind("$[\"odd key\"]: appears twice", 0) == 0);
  // The same key in sibling objects, or as a value, is fine.
  CHECK(error_of([] { parse_json_text(R"({"a": {"k": 1}, "b": {"k": 2}, "k": "k", "l": [{"k": 1}, {"k": 2}]})"); }).empty());
  CHECK(parse_json_text(R"({"a": {"k": 1}, "b": [{"k": 2}]})").at("b").at(0).at("k") == 2);
}

TEST_CASE("a NUL character in a string or key is refused with its path", "[requirements][json_io]") {
  CHECK(error_of([] { parse_json_text(R"({"name": "wafer\u0000stage"})"); }).rfind("$.name: holds a NUL character", 0) == 0);
  CHECK(error_of([] { parse_json_text(R"({"a": ["x", "y\u0000"]})"); }).rfind("$.a[1]: holds a NUL character", 0) == 0);
  CHECK(error_of([] { parse_json_text(R"({"a": {"b\u0000": 1}})"); }).rfind("$.a: has a key with a NUL character", 0) == 0);
  CHECK(error_of([] { parse_json_text(R"({"name": "wafer \u00e9 stage \u0001"})"); }).empty());  // other characters are text
}
