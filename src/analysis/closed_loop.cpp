#include "polewright/analysis/closed_loop.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "polewright/model/eigen.hpp"
#include "polewright/model/pade.hpp"
#include "interconnect.hpp"

namespace pw {

LoopParts make_loop_parts(const Zpk& compensator, const Plant& plant, int pade_order) {
  LoopParts parts;
  parts.delay_s = plant.delay_s;
  parts.compensator = realize(compensator);
  const Zpk pade = pade_delay(plant.delay_s, pade_order);
  parts.plant = realize(plant.tf);
  if (!pade.poles.empty()) parts.plant = series(realize(pade), parts.plant);
  parts.loop_exact = zpk_series(compensator, plant.tf);
  parts.loop_rational = zpk_series(parts.loop_exact, pade);
  parts.compensator_tf = compensator;
  parts.plant_rational = zpk_series(plant.tf, pade);
  return parts;
}

ClosedLoop close_loop(const StateSpace& c, const StateSpace& g, double k) {
  return interconnect<ClosedLoop>(c, g, k);
}

double damping_of(Complex p) {
  const double wn = std::abs(p);
  return wn > 0.0 ? -p.real() / wn : 1.0;
}

CVec closed_loop_eigenvalues(const ClosedLoop& loop) { return eigenvalues_balanced(loop.A); }

double closed_loop_dc_gain(const ClosedLoop& loop) {
  if (loop.states() == 0) return loop.Dy;
  const Vec x = loop.A.partialPivLu().solve(loop.B);
  return loop.Dy - loop.Cy.dot(x);
}

namespace {

// From residues cy, cu (in solver order) to the checked pole list.
void finish_analysis(const ClosedLoop& loop, const CVec& values, const CVec& slope_terms, bool finite, double threshold,
                     PoleAnalysis& out) {
  const int n = static_cast<int>(values.size());
  ModalStep& m = out.modal;
  Complex sum_y(0.0, 0.0), sum_u(0.0, 0.0), slope(0.0, 0.0);
  double total = 0.0, slope_scale = 0.0;
  for (int i = 0; i < n; ++i) {
    sum_y += m.cy(i);
    sum_u += m.cu(i);
    slope += slope_terms(i);
    slope_scale += std::abs(slope_terms(i));
    total += std::abs(m.cy(i));
    finite = finite && std::isfinite(std::abs(m.cy(i))) && std::isfinite(std::abs(m.cu(i)));
  }
  m.y_final = loop.Dy - sum_y.real();
  m.u_final = loop.Du - sum_u.real();
  // Two checks of the expansion: y_f from a direct solve of A x = B, and y'(0+) = Cy B.
  const double yf_direct = out.stable ? closed_loop_dc_gain(loop) : m.y_final;
  const double slope_direct = loop.Cy.dot(loop.B);
  out.modal_error = std::max(std::abs(m.y_final - yf_direct) / (total + std::abs(yf_direct) + 1e-300),
                             std::abs(slope - slope_direct) / (slope_scale + std::abs(slope_direct) + 1e-300));
  if (!std::isfinite(out.modal_error)) out.modal_error = 1.0;
  out.residues_reliable = finite && out.modal_error < 1e-7;
  if (out.stable && out.residues_reliable) m.y_final = yf_direct;

  out.poles.clear();
  for (int i = 0; i < n; ++i) {
    PoleInfo p;
    p.pole = values(i);
    p.natural_frequency = std::abs(p.pole);
    p.damping = damping_of(p.pole);
    p.residue = finite ? std::abs(m.cy(i)) : 0.0;
    p.share = (finite && total > 0.0) ? p.residue / total : 0.0;
    p.matters = !out.residues_reliable || p.share >= threshold;
    out.poles.push_back(p);
  }
  std::sort(out.poles.begin(), out.poles.end(), [](const PoleInfo& a, const PoleInfo& b) {
    if (a.pole.real() != b.pole.real()) return a.pole.real() > b.pole.real();
    return a.pole.imag() > b.pole.imag();
  });
  for (PoleInfo& p : out.poles)
    if (std::abs(p.pole.imag()) <= 1e-12 * std::max(1.0, p.natural_frequency)) p.pole.imag(0.0);
}

// Strictly stable: every pole further left of the imaginary axis than numerical noise. A pole
// with |Re p| <= kMarginalRel max(|p|, 1e-6 max_j |p_j|) and none to the right is marginal: the
// loop sits on the stability boundary (a critical gain), which no rounding may turn into a pass.
void judge_stability(const CVec& v, PoleAnalysis& out) {
  double scale = 0.0;
  for (int i = 0; i < v.size(); ++i) scale = std::max(scale, std::abs(v(i)));
  out.stable = true;
  out.marginal = false;
  bool unstable = false;
  for (int i = 0; i < v.size(); ++i) {
    const double re = v(i).real();
    if (!(re < 0.0) && !(std::abs(re) <= kMarginalRel * std::max(std::abs(v(i)), 1e-6 * scale))) {
      unstable = true;
    } else if (!(re < -kMarginalRel * std::max(std::abs(v(i)), 1e-6 * scale))) {
      if (!out.marginal || re > out.marginal_pole.real()) out.marginal_pole = v(i);
      out.marginal = true;
    }
  }
  if (unstable) out.marginal = false;
  out.stable = !unstable && !out.marginal;
}

// gain * prod(s - zeros) / (lead * s * prod_{j != skip} (s - poles_j)), interleaved to stay in range.
Complex residue_at(Complex s, double gain, const Roots& zeros, const Roots* zeros2, const CVec& poles, int skip,
                   double lead) {
  Complex acc(gain / lead, 0.0);
  acc /= s;
  size_t zi = 0, zj = 0;
  for (int j = 0; j < poles.size(); ++j) {
    if (zi < zeros.size()) acc *= (s - zeros[zi++]);
    else if (zeros2 && zj < zeros2->size()) acc *= (s - (*zeros2)[zj++]);
    if (j != skip) acc /= (s - poles(j));
  }
  for (; zi < zeros.size(); ++zi) acc *= (s - zeros[zi]);
  if (zeros2)
    for (; zj < zeros2->size(); ++zj) acc *= (s - (*zeros2)[zj]);
  return acc;
}

// Relative residual |1 + q| / (1 + |q|) of the characteristic equation at s, with q = k L(s), and
// the Newton step for D(s) + k K N(s) = 0: (1 + q) / (sum 1/(s - p) + q sum 1/(s - z)).
// False when s sits exactly on a root of L. Plain real arithmetic (std::complex multiply and
// divide go through the slow C99 Annex G helpers; this runs on the search's hot path).
bool newton_on_loop(Complex s, const Zpk& L, double k, double& residual, Complex& step) {
  const double sr = s.real(), si = s.imag();
  double qr = k * L.gain, qi = 0.0;          // q
  double pr = 0.0, pi = 0.0, zr = 0.0, zi = 0.0;  // sum 1/(s - p), sum 1/(s - z)
  const size_t n = std::max(L.zeros.size(), L.poles.size());
  for (size_t i = 0; i < n; ++i) {
    if (i < L.zeros.size()) {
      const double dr = sr - L.zeros[i].real(), di = si - L.zeros[i].imag();
      const double m = dr * dr + di * di;
      if (m == 0.0) return false;
      const double t = qr * dr - qi * di;
      qi = qr * di + qi * dr;
      qr = t;
      zr += dr / m;
      zi -= di / m;
    }
    if (i < L.poles.size()) {
      const double dr = sr - L.poles[i].real(), di = si - L.poles[i].imag();
      const double m = dr * dr + di * di;
      if (m == 0.0) return false;
      const double t = (qr * dr + qi * di) / m;
      qi = (qi * dr - qr * di) / m;
      qr = t;
      pr += dr / m;
      pi -= di / m;
    }
  }
  const double qm = std::hypot(qr, qi);
  const double fr = 1.0 + qr, fi = qi;                       // 1 + q
  const double gr = pr + qr * zr - qi * zi, gi = pi + qr * zi + qi * zr;  // P + q Z
  const double gm = gr * gr + gi * gi;
  if (!std::isfinite(qm) || !(gm > 0.0) || !std::isfinite(gm)) return false;
  residual = std::hypot(fr, fi) / (1.0 + qm);
  step = Complex((fr * gr + fi * gi) / gm, (fi * gr - fr * gi) / gm);
  return std::isfinite(residual) && std::isfinite(step.real()) && std::isfinite(step.imag());
}

}  // namespace

CVec polish_closed_loop_poles(const CVec& values, const Zpk& L, double k) {
  CVec out = values;
  const int n = static_cast<int>(values.size());
  for (int i = 0; i < n; ++i) {
    Complex s = values(i);
    double res = 0.0;
    Complex step;
    if (!newton_on_loop(s, L, k, res, step)) continue;
    // A residual at rounding level leaves nothing to gain (the common, well-conditioned case).
    if (res <= 1e-13) continue;
    double sep = INFINITY;
    for (int j = 0; j < n; ++j)
      if (j != i) sep = std::min(sep, std::abs(values(i) - values(j)));
    for (int it = 0; it < 6 && res > 0.0; ++it) {
      // Only a small step is trusted: a larger one means the pole is not isolated (a cluster),
      // where the eigenvalues are right as a set and Newton would pull them apart or together.
      if (!(std::abs(step) < 0.1 * sep)) break;
      const Complex cand = s - step;
      double cres = 0.0;
      Complex cstep;
      if (!newton_on_loop(cand, L, k, cres, cstep) || !(cres < res)) break;
      s = cand;
      res = cres;
      step = cstep;
      if (std::abs(step) <= 4.0 * std::numeric_limits<double>::epsilon() * std::abs(s)) break;
    }
    out(i) = values(i).imag() == 0.0 ? Complex(s.real(), 0.0) : s;
  }
  return out;
}

PoleAnalysis analyze_poles(const ClosedLoop& loop, double threshold) {
  PoleAnalysis out;
  const int n = loop.states();
  if (n == 0) {
    out.stable = true;
    out.modal.y_final = loop.Dy;
    out.modal.u_final = loop.Du;
    return out;
  }
  const EigenDecomposition ed = eigen_decompose(loop.A);
  judge_stability(ed.values, out);
  // c_i = (C v_i) (W B)_i / lambda_i with W = V^-1.
  Eigen::PartialPivLU<CMat> lu(ed.vectors);
  const CVec wb = lu.solve(loop.B.cast<Complex>());
  const CVec cvy = (loop.Cy.cast<Complex>() * ed.vectors).transpose();
  const CVec cvu = (loop.Cu.cast<Complex>() * ed.vectors).transpose();
  ModalStep& m = out.modal;
  m.lambda = ed.values;
  m.cy = CVec(n);
  m.cu = CVec(n);
  CVec slope(n);
  for (int i = 0; i < n; ++i) {
    const Complex lam = ed.values(i);
    const Complex inv = std::abs(lam) > 0.0 ? 1.0 / lam : Complex(0.0, 0.0);
    m.cy(i) = cvy(i) * wb(i) * inv;
    m.cu(i) = cvu(i) * wb(i) * inv;
    slope(i) = cvy(i) * wb(i);
  }
  finish_analysis(loop, ed.values, slope, ed.ok, threshold, out);
  return out;
}

PoleAnalysis analyze_poles(const ClosedLoop& loop, const LoopParts& parts, double k, double threshold) {
  const int n = loop.states();
  const Zpk& L = parts.loop_rational;
  if (n == 0 || static_cast<int>(L.poles.size()) != n) return analyze_poles(loop, threshold);
  PoleAnalysis out;
  // Eigenvalues of the balanced closed-loop matrix, refined on the factored characteristic
  // equation: the matrix of a high-order loop can lose digits the factored form still has.
  const CVec values = polish_closed_loop_poles(eigenvalues_balanced(loop.A), L, k);
  judge_stability(values, out);
  // Closed-loop denominator D + k N: monic unless the loop is biproper.
  const double lead = L.relative_degree() == 0 ? 1.0 + k * L.gain : 1.0;
  const Zpk& C = parts.compensator_tf;
  const Zpk& G = parts.plant_rational;
  ModalStep& m = out.modal;
  m.lambda = values;
  m.cy = CVec(n);
  m.cu = CVec(n);
  CVec slope(n);
  bool finite = lead != 0.0;
  for (int i = 0; i < n && finite; ++i) {
    const Complex lam = values(i);
    if (std::abs(lam) == 0.0) { finite = false; break; }
    m.cy(i) = residue_at(lam, k * L.gain, L.zeros, nullptr, values, i, lead);
    m.cu(i) = residue_at(lam, k * C.gain, C.zeros, &G.poles, values, i, lead);
    slope(i) = m.cy(i) * lam;
  }
  if (!finite) return analyze_poles(loop, threshold);
  finish_analysis(loop, values, slope, true, threshold, out);
  if (!out.residues_reliable) return analyze_poles(loop, threshold);
  return out;
}

}  // namespace pw
