// libFuzzer target: the spec parser must turn any byte string into a Spec or a SpecError, never
// crash, hang or trip a sanitizer.
#include <cstddef>
#include <cstdint>
#include <string>

#include "polewright/requirements/spec_parse.hpp"

extern "C" int LLVMFuzzerTestOneInput(const uint8_t* data, size_t size) {
  const std::string text(reinterpret_cast<const char*>(data), size);
  try {
    const pw::Spec spec = pw::parse_spec(pw::parse_json_text(text));
    (void)spec;
  } catch (const pw::SpecError&) {
  }
  return 0;
}
