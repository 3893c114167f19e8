// libFuzzer target: compensator and plant objects. A parsed one is also realised and evaluated, so
// the model layer sees whatever the parser lets through.
#include <cstddef>
#include <cstdint>
#include <string>

#include "polewright/model/state_space.hpp"
#include "polewright/requirements/spec_parse.hpp"

extern "C" int LLVMFuzzerTestOneInput(const uint8_t* data, size_t size) {
  const std::string text(reinterpret_cast<const char*>(data), size);
  try {
    const nlohmann::json j = pw::parse_json_text(text);
    const pw::Zpk c = pw::parse_compensator(j, "$");
    const pw::StateSpace ss = pw::realize(c);
    (void)pw::ss_evaluate(ss, pw::Complex(0.0, 1.0));
    (void)c.evaluate(pw::Complex(0.0, 1.0));
  } catch (const pw::SpecError&) {
  }
  try {
    const pw::Plant p = pw::parse_plant_object(pw::parse_json_text(text), "$", false);
    (void)pw::realize(p.tf);
  } catch (const pw::SpecError&) {
  }
  return 0;
}
