// The unity-feedback loop r -> e = r - y -> C(s) -> u -> G(s) (with Pade delay) -> y.
#pragma once

#include <vector>

#include "polewright/model/plant.hpp"
#include "polewright/model/state_space.hpp"

namespace pw {

// Closed loop from the reference r to the plant output y and the control effort u.
struct ClosedLoop {
  Mat A;
  Vec B;
  RowVec Cy;
  double Dy = 0.0;
  RowVec Cu;
  double Du = 0.0;
  bool well_posed = true;  // false when 1 + Dc Dg = 0 (the algebraic loop has no solution)
  int states() const { return static_cast<int>(A.rows()); }
};

// The open-loop pieces of one loop, realised once and reused.
struct LoopParts {
  StateSpace compensator;  // C(s)
  StateSpace plant;        // G(s) with the Pade approximant of its delay in series
  Zpk compensator_tf;      // C(s)
  Zpk plant_rational;      // G(s) Pade(s)
  Zpk loop_rational;       // C G Pade as zeros/poles/gain (root locus)
  Zpk loop_exact;          // C G without the delay (frequency response multiplies e^(-jwT))
  double delay_s = 0.0;
};

LoopParts make_loop_parts(const Zpk& compensator, const Plant& plant, int pade_order);

// Closed loop with the compensator scaled by gain_scale (1 = nominal).
ClosedLoop close_loop(const StateSpace& compensator, const StateSpace& plant, double gain_scale = 1.0);

// One closed-loop pole with its damping, natural frequency and share of the y step response.
struct PoleInfo {
  Complex pole;
  double damping = 1.0;         // zeta = -Re p / |p| (1 for p = 0)
  double natural_frequency = 0; // |p|
  double share = 1.0;           // |c_i| / sum |c_j|, y(t) = y(inf) + sum c_i e^(p_i t)
  double residue = 0.0;         // |c_i|
  bool matters = true;          // share >= the residue threshold (or residues unreliable)
};

// The modal form of the unit-step response: y(t) = y_f + sum cy_i e^(l_i t), u likewise.
struct ModalStep {
  CVec lambda;  // eigenvalues in solver order (conjugate pairs adjacent)
  CVec cy;      // residues of y
  CVec cu;      // residues of u
  double y_final = 0.0;
  double u_final = 0.0;
};

// Relative distance from the imaginary axis within which a pole counts as on it (numerical noise
// of the eigenvalues of a balanced matrix polished on the factored characteristic equation).
constexpr double kMarginalRel = 1e-11;

struct PoleAnalysis {
  std::vector<PoleInfo> poles;  // sorted by real part, descending (slowest first)
  // Strictly stable: every pole left of the axis by more than the noise band (kMarginalRel |p|,
  // at least kMarginalRel 1e-6 max |p|).
  bool stable = false;
  // No pole to the right, but one within the noise band of the axis: not stable, and this says
  // why (marginal_pole is the rightmost such pole).
  bool marginal = false;
  Complex marginal_pole{0.0, 0.0};
  // False for (nearly) defective eigenvector bases: the modal expansion then fails its two
  // consistency checks (y(0+) = Dy and y'(0+) = Cy B) and every pole counts as one that matters.
  bool residues_reliable = true;
  double modal_error = 0.0;  // relative mismatch of those checks
  ModalStep modal;
};

// Eigen-decomposition of the closed loop and the modal residues of the y step response.
PoleAnalysis analyze_poles(const ClosedLoop& loop, double residue_share_threshold);

// The same for the loop `parts` closed with the compensator scaled by gain_scale, cheaper: the
// eigenvalues alone, and the residues from the factored transfer functions,
// c_i = N(l_i) / (d l_i prod_{j != i} (l_i - l_j)). When that expansion fails the consistency
// checks it falls back to the eigenvector computation above.
PoleAnalysis analyze_poles(const ClosedLoop& loop, const LoopParts& parts, double gain_scale,
                           double residue_share_threshold);

// Refines closed-loop poles (eigenvalues of the loop closed with gain_scale k) by Newton steps on
// D(s) + k K N(s) = 0 with L = K N / D in factored form, keeping a step only when it lowers the
// relative residual |1 + kL| / (1 + |kL|) and is below a tenth of the distance to the nearest other
// pole (clustered poles are left as the eigen-solver gave them). Real values stay real.
CVec polish_closed_loop_poles(const CVec& values, const Zpk& loop_rational, double gain_scale);

// Just the eigenvalues (balanced), for cheap stability screening.
CVec closed_loop_eigenvalues(const ClosedLoop& loop);

// y(inf) = Dy - Cy A^-1 B for a stable loop.
double closed_loop_dc_gain(const ClosedLoop& loop);

double damping_of(Complex p);

}  // namespace pw
