#include <catch2/catch.hpp>

#include <cmath>

#include <nlohmann/json.hpp>

#include "polewright/requirements/implementation.hpp"
#include "polewright/requirements/spec.hpp"

using namespace pw;
using nlohmann::json;

namespace {
std::string error_of(const char* text) {
  try {
    parse_implementation(json::parse(text), "$.implementation");
  } catch (const SpecError& e) {
    return e.what();
  }
  return "";
}
}  // namespace

TEST_CASE("an implementation block with every key parses", "[implementation]") {
  const Implementation im = parse_implementation(
      json::parse(R"({"sample_time_s": 0.002, "method": "prewarp", "prewarp_rad_s": 45,
                      "compute_delay_samples": 0.5, "word_length": "float"})"),
      "$.implementation");
  CHECK(im.sample_time_s == 0.002);
  CHECK(im.method == DiscreteMethod::Prewarp);
  REQUIRE(im.prewarp_rad_s);
  CHECK(*im.prewarp_rad_s == 45.0);
  CHECK(im.compute_delay_samples == 0.5);
  CHECK(im.word_length == WordLength::Float);
}

TEST_CASE("an implementation block takes its defaults: tustin, no delay, double", "[implementation]") {
  const Implementation im = parse_implementation(json::parse(R"({"sample_time_s": 0.01})"), "$.implementation");
  CHECK(im.method == DiscreteMethod::Tustin);
  CHECK(!im.prewarp_rad_s);
  CHECK(im.compute_delay_samples == 0.0);
  CHECK(im.word_length == WordLength::Double);
  for (const char* m : {"tustin", "zoh", "matched"}) {
    const json j = {{"sample_time_s", 0.01}, {"method", m}};
    CHECK(discrete_method_name(parse_implementation(j, "$.implementation").method) == std::string(m));
  }
  CHECK(word_length_name(WordLength::Double) == std::string("double"));
  CHECK(word_length_name(WordLength::Float) == std::string("float"));
}

TEST_CASE("implementation errors are one line naming the JSON path", "[implementation]") {
  CHECK(error_of(R"({})") == "$.implementation.sample_time_s: is missing: an implementation needs its sample time");
  CHECK(error_of(R"({"sample_time_s": 0})").rfind("$.implementation.sample_time_s: must be > 0", 0) == 0);
  CHECK(error_of(R"({"sample_time_s": -1})").rfind("$.implementation.sample_time_s: must be > 0", 0) == 0);
  CHECK(error_of(R"({"sample_time_s": "2ms"})").rfind("$.implementation.sample_time_s: must be a number", 0) == 0);
  CHECK(error_of(R"({"sample_time_s": 0.01, "method": "bilinear"})").rfind("$.implementation.method: must be", 0) == 0);
  CHECK(error_of(R"({"sample_time_s": 0.01, "method": 3})").rfind("$.implementation.method: must be", 0) == 0);
  CHECK(error_of(R"({"sample_time_s": 0.01, "compute_delay_samples": -0.5})")
            .rfind("$.implementation.compute_delay_samples: must be >= 0", 0) == 0);
  CHECK(error_of(R"({"sample_time_s": 0.01, "word_length": "int16"})")
            .rfind("$.implementation.word_length: must be \"double\" or \"float\"", 0) == 0);
  CHECK(error_of(R"({"sample_time_s": 0.01, "prewarp_rad_s": 10})")
            .rfind("$.implementation.prewarp_rad_s: applies to the prewarp method only", 0) == 0);
  CHECK(error_of("[1]").rfind("$.implementation: must be an object", 0) == 0);
  for (const char* t : {R"({})", R"({"sample_time_s": 0.01, "method": "x"})", R"({"sample_time_s": 0.01, "smaple": 1})"})
    CHECK(error_of(t).find('\n') == std::string::npos);
}

TEST_CASE("the warp point must lie below the Nyquist frequency pi / T", "[implementation]") {
  // pi / T at T = 0.01 s is 314.159... rad/s (Nyquist = half the sample rate 2 pi / T).
  const double nyq = M_PI / 0.01;
  json j = {{"sample_time_s", 0.01}, {"method", "prewarp"}, {"prewarp_rad_s", nyq * 0.999}};
  CHECK(parse_implementation(j, "$.implementation").prewarp_rad_s);
  j["prewarp_rad_s"] = nyq * 1.001;
  CHECK_THROWS_WITH(parse_implementation(j, "$.implementation"),
                    Catch::StartsWith("$.implementation.prewarp_rad_s: must be below the Nyquist frequency"));
  j["prewarp_rad_s"] = 0.0;
  CHECK_THROWS_WITH(parse_implementation(j, "$.implementation"), Catch::StartsWith("$.implementation.prewarp_rad_s: must be > 0"));
}

TEST_CASE("unknown implementation keys are rejected with a did-you-mean hint", "[implementation]") {
  CHECK(error_of(R"({"sample_time_s": 0.01, "compute_delay": 1})") ==
        "$.implementation.compute_delay: unknown key (did you mean \"compute_delay_samples\"?)");
  CHECK(error_of(R"({"sample_time": 0.01})") == "$.implementation.sample_time: unknown key (did you mean \"sample_time_s\"?)");
  CHECK(error_of(R"({"sample_time_s": 0.01, "zzz": 1})").rfind("$.implementation.zzz: unknown key; allowed here:", 0) == 0);
}
