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
