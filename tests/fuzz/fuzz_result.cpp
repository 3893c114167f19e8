// libFuzzer target: result files read back by report and export. Any byte string becomes a
// ResultInput or a SpecError; a parsed result is also rendered as the HTML report, which reads
// further keys of the document (the change list of a retune result, the candidates).
#include <cstddef>
#include <cstdint>
#include <string>

#include "polewright/outputs/report.hpp"
#include "polewright/requirements/result_parse.hpp"
#include "polewright/requirements/spec_parse.hpp"

extern "C" int LLVMFuzzerTestOneInput(const uint8_t* data, size_t size) {
  const std::string text(reinterpret_cast<const char*>(data), size);
  try {
    const pw::ResultInput in = pw::parse_result(pw::parse_json_text(text));
    (void)pw::report_html(in);
  } catch (const pw::SpecError&) {
  }
  return 0;
}
