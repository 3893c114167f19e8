// libFuzzer target: sweep expressions. The input is the text of one expression, placed in a plant
// coefficient of a fixed sweep (parameters k and J, J down to 1e-8) and evaluated at every point:
// a value or a SpecError naming the field, never a crash or a hang.
#include <cstddef>
#include <cstdint>
#include <string>

#include <nlohmann/json.hpp>

#include "polewright/requirements/spec_parse.hpp"
#include "polewright/requirements/sweep_parse.hpp"

extern "C" int LLVMFuzzerTestOneInput(const uint8_t* data, size_t size) {
  if (size > 4096) return 0;
  const std::string text(reinterpret_cast<const char*>(data), size);
  nlohmann::json doc = {
      {"base",
       {{"plant", {{"numerator", {text}}, {"denominator", {"J", 1, 0}}}},
        {"requirements", {{"overshoot_pct", {{"max", 20}}}}}}},
      {"parameters", {{"k", {{"values", {0.5, -3, 1e-8, 1e8}}}}, {"J", {{"from", 1e-8}, {"to", 1e3}, {"count", 3}, {"scale", "log"}}}}}};
  try {
    const pw::SweepFile f = pw::parse_sweep(doc);
    const pw::SweepPoints points(f);
    for (long long i = 0; i < points.size(); ++i) {
      try {
        (void)pw::parse_spec(pw::point_spec(f, points.at(i), 1));
      } catch (const pw::SpecError&) {
      }
    }
  } catch (const pw::SpecError&) {
  } catch (const nlohmann::json::exception&) {
    // text that is not UTF-8 cannot be a JSON string: not the expression parser's input
  }
  return 0;
}
