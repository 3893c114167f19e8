#include "svg_palette.hpp"

namespace pw {

const char* candidate_colour(int index) {
  static const char* const kColours[kCandidateColours] = {
      "#0b6e79",  // deep teal
      "#c77c0e",  // ochre
      "#5b3f97",  // indigo violet
      "#d4688f",  // rose
      "#2f4858",  // slate
      "#8a6d3b",  // umber
  };
  const int i = ((index % kCandidateColours) + kCandidateColours) % kCandidateColours;
  return kColours[i];
}

const char* variant_dash(int index) {
  static const char* const kDashes[4] = {"", "7 4", "2 3", "9 3 2 3"};
  return kDashes[((index % 4) + 4) % 4];
}

}  // namespace pw
