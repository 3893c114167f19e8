// A compensator in service, factored into first- and second-order factors so that a retune can
// move each corner a little. Parameters, all in decades (log10):
//   x[0]                 log10 K, K the low-frequency (Bode-form) gain: the zpk gain times the
//                        product of |root| over the non-zero zeros, divided by that over the
//                        non-zero poles (corners move without changing the low-frequency gain)
//   real root r != 0     log10 |r| (the sign is kept: a root never crosses the imaginary axis)
//   complex pair         log10 wn and log10 |zeta| (the sign of zeta is kept; |zeta| < 1)
// Roots at the origin (integrators, differentiators) stay where they are. Added stages (only with
// --allow-new-stages) append their own parameters:
//   first-order stage    log10 centre, log10 ratio  -> zero c / sqrt(ratio), pole c sqrt(ratio)
//                        (ratio > 1 a lead, < 1 a lag, 1 the identity)
//   notch                log10 wn, log10 depth, log10 width -> zeros' zeta = depth * width
//   integrator (PI)      log10 wi                    -> (s + wi) / s
// The change distance is the Euclidean norm of the parameter change in decades over the factors
// the current design has, plus, per added stage, the RMS over the frequency range of
// |log10 |stage(jw)|| (how far the stage moves the loop's magnitude, in decades).
#pragma once

#include <cmath>
#include <string>
#include <utility>
#include <vector>

#include "polewright/model/zpk.hpp"
#include "polewright/synthesis/structure.hpp"

namespace pw {

enum class FactorKind { Gain, RealZero, RealPole, ZeroPair, PolePair, OriginZero, OriginPole };
enum class AddedStage { FirstOrder, Notch, Integrator };
const char* added_stage_name(AddedStage s);
// Order an added stage adds to the compensator.
int added_stage_order(AddedStage s);
// The design stage whose facts (structure.hpp's table) an added stage shares: a first-order stage
// is a lead or a lag (both have the same facts).
StageKind added_stage_kind(AddedStage s);
// Parameters of an added stage (the table's count).
int added_stage_parameters(AddedStage s);

struct Factor {
  FactorKind kind = FactorKind::Gain;
  Complex root;       // for roots: the root (the upper one of a pair)
  double sign = 1.0;  // sign of the real root, of zeta, or of the gain
  int first_param = -1;
};

struct RetuneSpace {
  std::vector<Factor> factors;           // the current design's factors
  std::vector<AddedStage> added;          // stages added after them
  std::vector<double> lower, upper;       // bounds of every parameter
  std::vector<double> current;            // the current design's parameters (added stages at identity)
  std::vector<std::string> names;
  std::pair<double, double> range;        // rad/s: where added corners may go
  int base_dim = 0;                       // parameters of the current design's factors
  int dim() const { return static_cast<int>(lower.size()); }
};

// Factors `current`; corners may move `corner_decades` either way, the gain `gain_decades`.
// Added stages have their corners inside `range`. A corner of `current` moves up to
// `corner_cap_rad_s` at most (the sampled design's cut below Nyquist, candidate.hpp), or stays
// where it is when it is above already. Throws std::invalid_argument for a compensator without a
// usable factorisation (a zero gain).
RetuneSpace make_retune_space(const Zpk& current, std::pair<double, double> range,
                              const std::vector<AddedStage>& added = {}, double corner_decades = 1.5,
                              double gain_decades = 2.0, double corner_cap_rad_s = INFINITY);

Zpk retune_to_zpk(const RetuneSpace& rs, const std::vector<double>& x);

// The parameters of `z` in the space of the current design's factors (no added stages): every
// factor kind (real zeros, zero pairs, real poles, pole pairs, roots at the origin) must come in the
// same number, with the same signs; roots are matched to the factors of their kind in order of
// magnitude. The bounds of `rs` are widened to hold the point. False when the structures differ.
bool retune_params_of(RetuneSpace& rs, const Zpk& z, std::vector<double>* x);

// Low-frequency (Bode-form) gain of a compensator: see the file comment.
double bode_gain(const Zpk& z);

// The change distance of x from the current design (see the file comment), in decades.
double change_distance(const RetuneSpace& rs, const std::vector<double>& x);

// A structure-free measure of how far apart two compensators are: the RMS over a log grid of
// `range` of |log10(a(jw) / b(jw))| with the complex logarithm (magnitude in decades and phase
// in radians / ln 10). Used to compare a retune with a fresh design of another structure.
double response_distance(const Zpk& a, const Zpk& b, std::pair<double, double> range, int points = 200);

}  // namespace pw
