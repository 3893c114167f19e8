// A discrete transfer function as a cascade of second-order sections (biquads) in direct form II
// transposed: H(z) = gain * prod_i B_i(z^-1) / A_i(z^-1), B_i = b0 + b1 z^-1 + b2 z^-2,
// A_i = 1 + a1 z^-1 + a2 z^-2.
//
// Pairing, ordering and gain rule (stated here and in docs/manual.md):
//  * each pole at z = 1 (an integrator) gets a first-order section of its own, so that anti-windup
//    can freeze exactly that state; each complex pole pair is a section; the remaining real poles
//    are sorted by radius and paired neighbour with neighbour (an odd one is a first-order section);
//  * zeros go to the sections by nearness: complex zero pairs first, the closest (two-pole section,
//    pair) match over all sections and pairs taken first (ties to the section nearest the unit
//    circle), pairs left over go to the nearest section with room (first-order sections are merged
//    when none has room); then real zeros the same way, the closest (section with room, zero) first;
//    a section left with fewer zeros than poles carries the difference as a delay (leading b
//    coefficients 0);
//  * each section is scaled to unit gain at z = 1 (DC) when that gain is finite and non-zero, else
//    to unit gain at z = -1 (Nyquist), else to unit magnitude at z = j; the overall gain g carries
//    the rest (it multiplies the last section's output);
//  * sections are ordered to keep the intermediate signals in range: integrators last, the others in
//    the order whose largest running peak max_w |H_1 ... H_i| (i before the last) is smallest (every
//    order up to 7 such sections), near ties (1 %) to the order closest to increasing pole radius
//    (the most resonant section last, the usual rule);
//  * each section reports its peak gain and where it is, and the running peak up to it.
#pragma once

#include <array>
#include <vector>

#include "polewright/model/zpk.hpp"

namespace pw {

struct Biquad {
  std::array<double, 3> b{{1.0, 0.0, 0.0}};
  std::array<double, 3> a{{1.0, 0.0, 0.0}};  // a[0] = 1
  Roots zeros, poles;                         // the z-plane roots the section realises
  bool integrator = false;                    // a first-order section with its pole at z = 1
  double peak_gain = 1.0;     // max |B(e^-jw) / A(e^-jw)| over 0 <= w <= pi (infinite for an integrator)
  double peak_at = 0.0;       // where, rad/sample
  double running_peak = 1.0;  // max over w of |H_1 ... H_i| for this section i and those before it
};

struct BiquadCascade {
  double gain = 1.0;
  std::vector<Biquad> sections;
};

// A peak of a magnitude response on the unit circle: the gain and where (rad/sample, 0..pi).
struct SectionPeak {
  double gain = 1.0;
  double at = 0.0;
};

// One section's value B(1/z) / A(1/z).
Complex section_value(const Biquad& s, Complex z);
// Peak of |H_1 ... H_n| (the first n sections, n <= secs.size()) on the unit circle: a 2048-point
// uniform grid in w plus 256 log-spaced points below 0.01 rad/sample and every pole angle, refined by
// golden section. Infinite when one of them is an integrator.
SectionPeak sections_peak(const std::vector<Biquad>& secs, size_t n);
SectionPeak section_peak(const Biquad& s);

// Requires a causal (proper) discrete transfer function with real coefficients.
BiquadCascade biquad_cascade(const Zpk& discrete);

// g * prod B_i(1/z) / A_i(1/z) at a point z.
Complex cascade_evaluate(const BiquadCascade& c, Complex z);

// Runs the cascade (direct form II transposed, double precision, zero initial state) over the input;
// the gain multiplies the last section's output.
std::vector<double> cascade_filter(const BiquadCascade& c, const std::vector<double>& input);

// Largest pole radius of a section after its a1, a2 are rounded to float (and in double).
struct SectionRadius {
  double double_radius = 0.0;
  double float_radius = 0.0;
};
SectionRadius section_pole_radius(const Biquad& s);

}  // namespace pw
