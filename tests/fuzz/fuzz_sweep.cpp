// libFuzzer target: sweep files. Any byte string becomes a SweepFile or a SpecError; a parsed sweep
// also has a few of its points generated and their specs built and parsed (never a crash, a hang
// or a sanitizer report).
#include <cstddef>
#include <cstdint>
#include <string>

#include "polewright/requirements/spec_parse.hpp"
#include "polewright/requirements/sweep_parse.hpp"

extern "C" int LLVMFuzzerTestOneInput(const uint8_t* data, size_t size) {
  const std::string text(reinterpret_cast<const char*>(data), size);
  try {
    const pw::SweepFile f = pw::parse_sweep(pw::parse_json_text(text));
    const pw::SweepPoints points(f);
    const long long n = points.size();
    for (long long i : {0LL, n / 2, n - 1}) {
      if (i < 0 || i >= n) continue;
      try {
        (void)pw::parse_spec(pw::point_spec(f, points.at(i), pw::point_seed(f.seed, i)));
      } catch (const pw::SpecError&) {
        // a bad point: the sweep records it as such
      }
    }
  } catch (const pw::SpecError&) {
  }
  return 0;
}
