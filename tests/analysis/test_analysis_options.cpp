#include <catch2/catch.hpp>

#include "polewright/analysis/analysis_options.hpp"

using namespace pw;

TEST_CASE("AnalysisOptions defaults are valid; bad values are named", "[analysis][options]") {
  AnalysisOptions o;
  std::string err;
  CHECK(o.IsValid(&err));
  o.pade_order = 13;
  CHECK_FALSE(o.IsValid(&err));
  CHECK(err.find("pade_order") != std::string::npos);
  const AnalysisOptions s = AnalysisOptions::Screening(AnalysisOptions{});
  CHECK_FALSE(s.step.exact_refinement);
  CHECK_FALSE(s.step.adaptive_samples);
  CHECK(s.IsValid(&err));
}
