#include <catch2/catch.hpp>

#include <cmath>
#include <set>
#include <string>

#include "outputs/svg_palette.hpp"

using namespace pw;

namespace {

struct Rgb {
  double r, g, b;
};

// sRGB to linear light (IEC 61966-2-1 transfer curve).
double linear(double c) { return c <= 0.04045 ? c / 12.92 : std::pow((c + 0.055) / 1.055, 2.4); }

Rgb parse(const std::string& hex) {
  auto h = [&](int i) { return std::stoi(hex.substr(static_cast<size_t>(i), 2), nullptr, 16) / 255.0; };
  return {linear(h(1)), linear(h(3)), linear(h(5))};
}

// Relative luminance (WCAG 2 definition).
double luminance(const Rgb& c) { return 0.2126 * c.r + 0.7152 * c.g + 0.0722 * c.b; }

// Dichromat simulations in linear RGB (Machado, Oliveira and Fernandes 2009, severity 1.0; matrices
// from memory).
Rgb deutan(const Rgb& c) {
  return {0.367322 * c.r + 0.860646 * c.g - 0.227968 * c.b, 0.280085 * c.r + 0.672501 * c.g + 0.047413 * c.b,
          -0.011820 * c.r + 0.042940 * c.g + 0.968881 * c.b};
}
Rgb protan(const Rgb& c) {
  return {0.152286 * c.r + 1.052583 * c.g - 0.204868 * c.b, 0.114503 * c.r + 0.786281 * c.g + 0.099216 * c.b,
          -0.003882 * c.r - 0.048116 * c.g + 1.051998 * c.b};
}

// Distance in gamma-encoded space (closer to perceived difference than linear light). The
// thresholds below (0.15 for normal vision, 0.08 under simulation) are our own rule of thumb
// (common practice: "tell the lines apart at a glance"), not a standard.
double dist(const Rgb& a, const Rgb& b) {
  auto g = [](double v) { return std::pow(std::max(0.0, std::min(1.0, v)), 1.0 / 2.2); };
  return std::sqrt(std::pow(g(a.r) - g(b.r), 2) + std::pow(g(a.g) - g(b.g), 2) + std::pow(g(a.b) - g(b.b), 2));
}

}  // namespace

TEST_CASE("candidate colours are distinct, cycle, and stay apart for dichromats", "[outputs][svg]") {
  std::set<std::string> seen;
  for (int i = 0; i < kCandidateColours; ++i) seen.insert(candidate_colour(i));
  CHECK(seen.size() == static_cast<size_t>(kCandidateColours));
  CHECK(std::string(candidate_colour(kCandidateColours)) == candidate_colour(0));
  CHECK(std::string(candidate_colour(-1)) == candidate_colour(kCandidateColours - 1));
  for (int i = 0; i < kCandidateColours; ++i)
    for (int j = i + 1; j < kCandidateColours; ++j) {
      const Rgb a = parse(candidate_colour(i)), b = parse(candidate_colour(j));
      INFO(candidate_colour(i) << " vs " << candidate_colour(j));
      CHECK(dist(a, b) > 0.15);
      CHECK(dist(deutan(a), deutan(b)) > 0.08);
      CHECK(dist(protan(a), protan(b)) > 0.08);
    }
  // Every candidate colour reads on white paper: contrast ratio at least 3 (WCAG 2 for graphics).
  for (int i = 0; i < kCandidateColours; ++i) CHECK((1.05) / (luminance(parse(candidate_colour(i))) + 0.05) >= 3.0);
}

TEST_CASE("variant dashes: solid nominal, distinct patterns, cycling", "[outputs][svg]") {
  CHECK(std::string(variant_dash(0)).empty());
  std::set<std::string> d;
  for (int i = 0; i < 4; ++i) d.insert(variant_dash(i));
  CHECK(d.size() == 4);
  CHECK(std::string(variant_dash(4)) == variant_dash(0));
}
