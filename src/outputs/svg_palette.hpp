// The report's colours: one colour per candidate (rank order, cycling), line dashes per plant
// variant, and the neutral colours of frames, grids, limits and the allowed region. Chosen to stay
// apart in lightness as well as hue, so they survive the common colour-vision deficiencies and a
// grey-scale print.
#pragma once

#include <string>

namespace pw {

// Colour of candidate `index` (0 = rank 1 or the checked compensator); cycles after 6.
const char* candidate_colour(int index);
constexpr int kCandidateColours = 6;

// Dash pattern of plant `index` (0 = nominal: solid ""); cycles after 4.
const char* variant_dash(int index);

namespace colour {
constexpr const char* kInk = "#22292f";        // text, frame
constexpr const char* kMuted = "#69737a";      // secondary text, minor marks
constexpr const char* kGrid = "#e6e8e3";       // grid lines
constexpr const char* kPaper = "#fcfcfa";      // plot background
constexpr const char* kRegionFill = "#d8eadf"; // allowed s-plane region / feasible area
constexpr const char* kRegionEdge = "#4f8a68";
constexpr const char* kLimit = "#9a3412";      // requirement limits (dashed)
constexpr const char* kOpenLoop = "#22292f";   // open-loop poles and zeros
constexpr const char* kMet = "#2f7d55";
constexpr const char* kNotMet = "#b3261e";
}  // namespace colour

}  // namespace pw
