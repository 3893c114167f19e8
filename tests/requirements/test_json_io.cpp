#include <catch2/catch.hpp>

#include <cstdio>
#include <fstream>
#include <string>

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
