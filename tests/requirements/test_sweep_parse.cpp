#include <catch2/catch.hpp>

#include <cmath>
#include <set>

#include "polewright/requirements/spec_parse.hpp"
#include "polewright/requirements/sweep_parse.hpp"

using namespace pw;
using nlohmann::json;

namespace {
const char* kSweep = R"({
  "base": {"plant": {"numerator": ["k"], "denominator": ["J", "2*zeta*wn*J", 0]},
           "requirements": {"overshoot_pct": {"max": "os"}, "steady_state_error": {"max": 0.1, "input": "ramp"}},
           "stages": {"lead": 1}},
  "parameters": {"J": {"from": 0.1, "to": 10, "count": 3, "scale": "log"},
                 "k": {"values": [40, 50]},
                 "os": {"from": 5, "to": 20, "count": 4},
                 "wn": {"values": [3]}, "zeta": {"values": [0.5]}},
  "job": "design", "seed": 9})";

std::string error_after(const std::function<void(json&)>& edit) {
  json j = json::parse(kSweep);
  edit(j);
  try {
    parse_sweep(j);
  } catch (const SpecError& e) {
    return e.what();
  }
  return "";
}
}  // namespace

TEST_CASE("a grid sweep: parameters alphabetical, the last fastest, ranges spaced as asked", "[requirements][sweep_parse]") {
  const SweepFile f = parse_sweep(json::parse(kSweep));
  REQUIRE(f.parameters.size() == 5);
  CHECK(f.parameters[0].name == "J");
  CHECK(f.point_count() == 3 * 2 * 4);
  CHECK(f.expressions.size() == 4);  // k, J, 2*zeta*wn*J, os ("ramp" is a word)
  const SweepPoints pts(f);
  // Log spacing 0.1, 1, 10 (exact end points); linear 5, 10, 15, 20.
  CHECK(pts.at(0) == std::vector<double>{0.1, 40, 5, 3, 0.5});
  CHECK(pts.at(1)[2] == Approx(10.0));
  CHECK(pts.at(3)[2] == 20.0);
  CHECK(pts.at(4)[1] == 50.0);
  CHECK(pts.at(8)[0] == Approx(1.0));
  CHECK(pts.at(23) == std::vector<double>{10, 50, 20, 3, 0.5});
}

TEST_CASE("a point's spec has every expression evaluated and its own seed", "[requirements][sweep_parse]") {
  const SweepFile f = parse_sweep(json::parse(kSweep));
  const SweepPoints pts(f);
  const json spec = point_spec(f, pts.at(8), point_seed(f.seed, 8));
  CHECK(spec["plant"]["denominator"][1].get<double>() == Approx(2 * 0.5 * 3 * 1.0));
  CHECK(spec["plant"]["numerator"][0].get<double>() == 40.0);
  CHECK(spec["requirements"]["steady_state_error"]["input"] == "ramp");
  CHECK(spec["search"]["seed"].get<unsigned long long>() == point_seed(9, 8));
  CHECK(parse_spec(spec).plants.size() == 1);
  // Seeds differ by point and by sweep seed, and stay below 2^53 (exact in JSON).
  std::set<unsigned long long> seeds;
  for (long long i = 0; i < 1000; ++i) seeds.insert(point_seed(9, i));
  CHECK(seeds.size() == 1000);
  CHECK(point_seed(9, 0) != point_seed(10, 0));
  CHECK(*seeds.rbegin() < (1ULL << 53));
}

TEST_CASE("sobol and latin samples stay in range and are reproducible", "[requirements][sweep_parse]") {
  for (const char* method : {"sobol", "latin"}) {
    json j = json::parse(kSweep);
    j["sample"] = {{"method", method}, {"count", 64}};
    const SweepFile f = parse_sweep(j);
    CHECK(f.point_count() == 64);
    const SweepPoints a(f), b(f);
    std::set<double> distinct;
    for (long long i = 0; i < 64; ++i) {
      const std::vector<double> v = a.at(i);
      CHECK(v == b.at(i));
      CHECK(v[0] >= 0.1);
      CHECK(v[0] <= 10.0);
      CHECK((v[1] == 40.0 || v[1] == 50.0));
      distinct.insert(v[2]);
    }
    CHECK(distinct.size() == 64);
  }
}

TEST_CASE("bad sweep files: one line naming the field", "[requirements][sweep_parse]") {
  using Catch::StartsWith;
  CHECK_THAT(error_after([](json& j) { j["base"]["requirements"]["overshoot_pct"]["max"] = "os2"; }),
             StartsWith("$.base.requirements.overshoot_pct.max: expression \"os2\" uses the unknown name \"os2\""));
  CHECK_THAT(error_after([](json& j) { j["base"]["plant"]["numerator"][0] = "k*(2"; }),
             StartsWith("$.base.plant.numerator[0]: expression \"k*(2\""));
  CHECK_THAT(error_after([](json& j) { j["parameters"]["J"]["to"] = 0.01; }), StartsWith("$.parameters.J.to: must be greater"));
  CHECK_THAT(error_after([](json& j) { j["parameters"]["J"]["from"] = -1; }), StartsWith("$.parameters.J.from: must be > 0"));
  CHECK_THAT(error_after([](json& j) { j["parameters"]["k"]["values"] = json::array(); }), StartsWith("$.parameters.k.values"));
  CHECK_THAT(error_after([](json& j) { j["parameters"]["os"].erase("count"); }), StartsWith("$.parameters.os.count: is missing"));
  CHECK_THAT(error_after([](json& j) { j["parameters"]["2x"] = {{"values", {1}}}; }), StartsWith("$.parameters.2x"));
  CHECK_THAT(error_after([](json& j) { j["sample"] = {{"method", "random"}}; }), StartsWith("$.sample.method"));
  CHECK_THAT(error_after([](json& j) { j["sample"] = {{"method", "grid"}, {"count", 3}}; }), StartsWith("$.sample.count"));
  CHECK_THAT(error_after([](json& j) { j["job"] = "plot"; }), StartsWith("$.job"));
  CHECK_THAT(error_after([](json& j) { j["job"] = "check"; }), StartsWith("$.base.current: is missing"));
  CHECK_THAT(error_after([](json& j) { j["parameterz"] = 1; }), StartsWith("$.parameterz: unknown key (did you mean"));
  CHECK_THAT(error_after([](json& j) { j.erase("base"); }), StartsWith("$.base: is missing"));
  // "Did you mean" at every level of the sweep file, and spec keys beside base (issue 17).
  CHECK(error_after([](json& j) { j["samples"] = {{"method", "grid"}}; }) == "$.samples: unknown key (did you mean \"sample\"?)");
  CHECK(error_after([](json& j) { j["sample"] = {{"methods", "grid"}}; }) ==
        "$.sample.methods: unknown key (did you mean \"method\"?)");
  CHECK(error_after([](json& j) { j["parameters"]["k"] = {{"value", {1}}, {"values", {1}}}; }) ==
        "$.parameters.k.value: unknown key (did you mean \"values\"?)");
  CHECK(error_after([](json& j) { j["parameters"]["os"]["scales"] = "log"; }) ==
        "$.parameters.os.scales: unknown key (did you mean \"scale\"?)");
  CHECK(error_after([](json& j) { j["requirements"] = json::object(); }) ==
        "$.requirements: unknown key here (a spec key: it belongs in $.base)");
  CHECK_THAT(error_after([](json& j) { j["base"]["requirements"]["overshoot"] = {{"max", 5}}; }),
             StartsWith("$.base.requirements.overshoot: unknown key (did you mean \"overshoot_pct\"?)"));
  CHECK_THAT(error_after([](json& j) { j["base"]["plant"]["denominatr"] = {1, 2}; }), StartsWith("$.base.plant.denominatr: unknown key"));
  CHECK_THAT(error_after([](json& j) { j["base"]["plant"]["denominator"][0] = "J - 0.1"; }),
             Catch::Contains("(at the first point)"));
  CHECK_THAT(error_after([](json& j) { j["base"]["plant"]["numerator"][0] = "k / (J - 0.1)"; }),
             StartsWith("$.base.plant.numerator[0]: expression \"k / (J - 0.1)\" is not finite"));
  CHECK(error_after([](json&) {}).empty());
}

TEST_CASE("expressions are pure: no assignment, no list of values", "[requirements][sweep_parse]") {
  using Catch::StartsWith;
  using Catch::Contains;
  // "k=7" would set k at every point while the k column shows the swept values; "k,3" is a list
  // whose last value (3) is used. Both are refused, naming the field.
  CHECK_THAT(error_after([](json& j) { j["base"]["plant"]["numerator"][0] = "k=7"; }),
             StartsWith("$.base.plant.numerator[0]: expression \"k=7\" assigns a value"));
  CHECK_THAT(error_after([](json& j) { j["base"]["plant"]["numerator"][0] = "k+=1"; }), Contains("assigns a value"));
  CHECK_THAT(error_after([](json& j) { j["base"]["plant"]["numerator"][0] = "k,3"; }),
             StartsWith("$.base.plant.numerator[0]: expression \"k,3\" is a list of values"));
  CHECK_THAT(error_after([](json& j) { j["base"]["plant"]["numerator"][0] = "(k),(3)"; }), Contains("list of values"));
  // Comparisons and function arguments are expressions: 40 == 40 is 1, min(40, 45) = 40, k <= 45 is 1 at k = 40.
  for (const char* ok : {"k*(k==40)", "min(k,45)", "k*(k<=45)", "k*(k!=3)", "k*(k>=40)"}) {
    INFO(ok);
    CHECK(error_after([&](json& j) { j["base"]["plant"]["numerator"][0] = ok; }).empty());
    json j = json::parse(kSweep);
    j["base"]["plant"]["numerator"][0] = ok;
    const SweepFile f = parse_sweep(j);
    const SweepPoints pts(f);
    CHECK(point_spec(f, pts.at(0), 1)["plant"]["numerator"][0] == 40.0);  // k = 40 at the first point
  }
}

TEST_CASE("expression and parameter messages blame the right thing", "[requirements][sweep_parse]") {
  using Catch::StartsWith;
  // 1e400 overflows a double (max about 1.8e308, IEEE 754): said so, not "unknown name e400".
  CHECK_THAT(error_after([](json& j) { j["base"]["plant"]["numerator"][0] = "1e400*k"; }),
             StartsWith("$.base.plant.numerator[0]: expression \"1e400*k\": the number 1e400 is beyond double range"));
  CHECK(error_after([](json& j) { j["base"]["plant"]["numerator"][0] = "1e300*k*1e-300"; }).empty());
  // A parameter named like the expression language's own constants or functions is blamed on itself.
  for (const char* name : {"_pi", "_e", "sin", "sqrt"}) {
    INFO(name);
    CHECK_THAT(error_after([&](json& j) { j["parameters"][name] = {{"values", {1}}}; }),
               StartsWith(std::string("$.parameters.") + name + ": is a name the expression language defines"));
  }
}

TEST_CASE("a parameter that no expression uses is warned about", "[requirements][sweep_parse]") {
  json j = json::parse(kSweep);
  CHECK(parse_sweep(j).warnings.empty());
  j["parameters"]["unused"] = {{"values", {1, 2, 3}}};
  const SweepFile f = parse_sweep(j);
  REQUIRE(f.warnings.size() == 1);
  CHECK_THAT(f.warnings[0], Catch::StartsWith("$.parameters.unused: no expression of the base uses it"));
  CHECK(f.point_count() == 3 * 2 * 4 * 3);  // it still multiplies the grid: the reason to warn
}

TEST_CASE("per-point limits: read and range-checked", "[requirements][sweep_parse]") {
  using Catch::StartsWith;
  json j = json::parse(kSweep);
  CHECK(parse_sweep(j).point_evaluations == 0);
  CHECK(parse_sweep(j).point_seconds == kDefaultPointSeconds);
  j["point_limit"] = {{"evaluations", 500}, {"seconds", 2.5}};
  CHECK(parse_sweep(j).point_evaluations == 500);
  CHECK(parse_sweep(j).point_seconds == 2.5);
  CHECK_THAT(error_after([](json& d) { d["point_limit"] = {{"evaluations", 0}}; }), StartsWith("$.point_limit.evaluations"));
  CHECK_THAT(error_after([](json& d) { d["point_limit"] = {{"seconds", -1}}; }), StartsWith("$.point_limit.seconds: must be > 0"));
  CHECK_THAT(error_after([](json& d) { d["point_limit"] = {{"secs", 1}}; }), StartsWith("$.point_limit.secs: unknown key"));
}

TEST_CASE("sample points are the same in any order of asking (streamed generation)", "[requirements][sweep_parse]") {
  for (const char* method : {"sobol", "latin"}) {
    json j = json::parse(kSweep);
    j["sample"] = {{"method", method}, {"count", 37}};
    const SweepFile f = parse_sweep(j);
    const SweepPoints forward(f), backward(f);
    std::vector<std::vector<double>> a, b(37);
    for (long long i = 0; i < 37; ++i) a.push_back(forward.at(i));
    for (long long i = 36; i >= 0; --i) b[static_cast<size_t>(i)] = backward.at(i);
    CHECK(a == b);
    if (std::string(method) == "latin") {
      // Latin hypercube property (McKay, Beckman and Conover 1979): every one of the 37 strata of
      // each range parameter holds exactly one point. J is log-scaled over [0.1, 10].
      std::set<int> strata;
      for (const auto& v : a) strata.insert(static_cast<int>(std::floor(std::log(v[0] / 0.1) / std::log(100.0) * 37)));
      CHECK(strata.size() == 37);
    }
  }
}

namespace {
// Every property name of the spec schema whose value may be a string (type "string", an enum or a
// const), at any depth: the keys a sweep base may hold words at.
void string_keys(const json& schema, const std::string& key, std::set<std::string>& out) {
  if (schema.is_object()) {
    bool words = schema.contains("type") && schema["type"] == "string";
    if (schema.contains("const")) words = words || schema["const"].is_string();  // not "const": true
    if (schema.contains("enum"))
      for (const json& v : schema["enum"]) words = words || v.is_string();
    if (!key.empty() && words) out.insert(key);
    for (auto it = schema.begin(); it != schema.end(); ++it) {
      if (it.key() == "properties" && it->is_object()) {
        for (auto p = it->begin(); p != it->end(); ++p) string_keys(p.value(), p.key(), out);
      } else {
        const bool same_key = it.key() == "oneOf" || it.key() == "anyOf" || it.key() == "allOf" || it.key() == "items";
        string_keys(it.value(), same_key ? key : "", out);
      }
    }
  } else if (schema.is_array()) {
    for (const json& v : schema) string_keys(v, key, out);
  }
}
}  // namespace

TEST_CASE("the word keys of a sweep base are the string-valued keys of the spec schema", "[requirements][sweep_parse]") {
  // specs/spec.schema.json is the outside reference: a key added there with string values must be
  // a word key too, or a sweep base holding it would read "tustin" as an expression.
  const json schema = read_json_file(std::string(POLEWRIGHT_SOURCE_DIR) + "/specs/spec.schema.json");
  std::set<std::string> keys;
  string_keys(schema, "", keys);
  REQUIRE(keys.count("method") == 1);
  for (const std::string& k : keys) {
    INFO(k);
    CHECK(sweep_word_key(k));
  }
  CHECK_FALSE(sweep_word_key("gain"));
  CHECK_FALSE(sweep_word_key("sample_time_s"));
  CHECK(keys.count("file") == 1);                // a measured plant's CSV path
  CHECK(keys.count("measured_loop") == 0);       // "const": true is not a word
  // A base with an implementation block: the method and word length stay words, T is swept.
  json j = json::parse(kSweep);
  j["base"]["implementation"] = {{"sample_time_s", "0.001 * J"}, {"method", "tustin"}, {"word_length", "float"}};
  const SweepFile f = parse_sweep(j);
  CHECK(f.expressions.size() == 5);
}
