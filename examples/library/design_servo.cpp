// Designs a lead compensator for a small servo axis (4 / (s (s + 2)), a scenario of our own) through
// the library API: build the spec in code, run the design job, print the best candidate.
#include <cstdio>

#include <polewright/polewright.hpp>  // the whole public API in one include

int main() {
  pw::Spec spec;
  spec.name = "bench-top servo axis";
  pw::Plant axis;
  axis.name = "nominal";
  axis.tf.gain = 4.0;
  axis.tf.poles = {pw::Complex(0.0, 0.0), pw::Complex(-2.0, 0.0)};
  spec.plants = {axis};
  spec.requirements.items = {{pw::MetricId::DampingRatio, pw::Sense::AtLeast, 0.5},
                             {pw::MetricId::NaturalFrequency, pw::Sense::AtLeast, 4.0},
                             {pw::MetricId::PhaseMargin, pw::Sense::AtLeast, 45.0}};
  spec.stages.lead = 1;
  spec.stages.frequency_range_rad_s = std::make_pair(0.1, 100.0);

  pw::DesignOptions options = pw::DesignOptions::FromSpec(spec);
  std::string error;
  if (!options.IsValid(&error)) {
    std::fprintf(stderr, "bad options: %s\n", error.c_str());
    return 2;
  }
  const pw::DesignReport report = pw::run_design(spec, options);
  if (report.candidates.empty()) return 1;
  const pw::Candidate& best = report.candidates.front();
  std::printf("polewright %s\n", pw::kToolVersion);
  std::printf("best: C(s) = %s\n", pw::zpk_to_string(best.compensator).c_str());
  std::printf("meets every requirement: %s\n", best.meets ? "yes" : "no");
  std::printf("peak effort %.4g, phase margin %.4g deg\n", *best.worst[static_cast<size_t>(pw::MetricId::PeakEffort)].value,
              *best.worst[static_cast<size_t>(pw::MetricId::PhaseMargin)].value);
  std::printf("%s\n", report.summary.FullReport().c_str());
  std::printf("caution: %s\n", pw::kCautions);
  return best.meets ? 0 : 1;
}
