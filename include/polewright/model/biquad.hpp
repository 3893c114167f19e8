// A discrete transfer function as a cascade of second-order sections (biquads) in direct form II
// transposed: H(z) = gain * prod_i B_i(z^-1) / A_i(z^-1), B_i = b0 + b1 z^-1 + b2 z^-2,
// A_i = 1 + a1 z^-1 + a2 z^-2.
//
// Pairing, ordering and gain rule (stated here and in docs/manual.md):
//  * each pole at z = 1 (an integrator) gets a first-order section of its own, so that anti-windup
//    can freeze exactly that state; each complex pole pair is a section; the remaining real poles
//    are sorted by radius and paired neighbour with neighbour (an odd one is a first-order section);
//  * zeros go to the sections in order of decreasing pole radius (the section nearest the unit
//    circle chooses first): each two-pole section takes the complex zero pair nearest its poles
//    (pairs left over go to the nearest section with room; first-order sections are merged when
//    none has room), then each section takes the real zeros nearest its poles while it has room;
//    a section left with fewer zeros than poles carries the difference as a delay (leading b
//    coefficients 0);
//  * sections are ordered by increasing pole radius (the most resonant section last), ties by
//    pole angle;
//  * each section is scaled to unit gain at z = 1 (DC) when that gain is finite and non-zero, else
//    to unit gain at z = -1 (Nyquist), else to unit magnitude at z = j; the overall gain g carries
//    the rest.
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
};

struct BiquadCascade {
  double gain = 1.0;
  std::vector<Biquad> sections;
};

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
