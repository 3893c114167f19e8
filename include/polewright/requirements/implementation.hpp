// The spec's `implementation` block: how the compensator will run (sample time, discretisation
// method, computation delay, coefficient word length). With it, `check` judges the sampled loop.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include <nlohmann/json_fwd.hpp>

#include "polewright/model/discretize.hpp"

namespace pw {

enum class WordLength { Double, Float };

const char* word_length_name(WordLength w);  // "double", "float"

// Largest computation delay accepted, in samples.
constexpr double kMaxComputeDelaySamples = 50.0;

struct Implementation {
  double sample_time_s = 0.0;                      // T > 0 (required)
  DiscreteMethod method = DiscreteMethod::Tustin;  // default tustin
  // Prewarp only: the warp point, 0 < w0 < pi / T. Without it the warp point is the nominal
  // loop's crossover (notches are always warped at their own centre).
  std::optional<double> prewarp_rad_s;
  // Samples between sampling y and applying u, >= 0; a fraction is exact (it is added to the
  // plant's dead time before sampling, which the modified zero-order hold handles exactly).
  double compute_delay_samples = 0.0;
  WordLength word_length = WordLength::Double;     // of the coefficients as they run
};

// Keys of the block (compared with the JSON Schema by a test).
const std::vector<std::string>& implementation_keys();

// Parses the block at `path` ("$.implementation"). Throws SpecError naming the JSON path of the
// first bad field: a missing or non-positive sample time, an unknown method or word length, a warp
// point at or above pi / T or given with another method, a negative computation delay, an unknown
// key (with a "did you mean" hint).
Implementation parse_implementation(const nlohmann::json& j, const std::string& path);

}  // namespace pw
