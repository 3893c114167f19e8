#include "polewright/analysis/closed_loop.hpp"

#include <algorithm>
#include <cmath>

#include "polewright/analysis/eigen.hpp"
#include "polewright/model/pade.hpp"

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
  return parts;
}

ClosedLoop close_loop(const StateSpace& c, const StateSpace& g, double k) {
  const int nc = c.states(), ng = g.states(), n = nc + ng;
  ClosedLoop cl;
  const double Dc = k * c.D;
  const double delta = 1.0 + Dc * g.D;
  cl.well_posed = std::abs(delta) > 1e-12;
  const double inv = cl.well_posed ? 1.0 / delta : 0.0;
  // u = Fc xc + Fg xg + Fr r
  const RowVec Fc = (k * inv) * c.C;
  const RowVec Fg = (-Dc * inv) * g.C;
  const double Fr = Dc * inv;
  const RowVec Yg = g.C + g.D * Fg;  // y = Dg Fc xc + Yg xg + Dg Fr r
  cl.A = Mat(n, n);
  cl.A.topLeftCorner(nc, nc) = c.A - (c.B * g.D) * Fc;
  cl.A.topRightCorner(nc, ng) = -c.B * Yg;
  cl.A.bottomLeftCorner(ng, nc) = g.B * Fc;
  cl.A.bottomRightCorner(ng, ng) = g.A + g.B * Fg;
  cl.B = Vec(n);
  cl.B.head(nc) = c.B * (1.0 - g.D * Fr);
  cl.B.tail(ng) = g.B * Fr;
  cl.Cy = RowVec(n);
  cl.Cy.head(nc) = g.D * Fc;
  cl.Cy.tail(ng) = Yg;
  cl.Dy = g.D * Fr;
  cl.Cu = RowVec(n);
  cl.Cu.head(nc) = Fc;
  cl.Cu.tail(ng) = Fg;
  cl.Du = Fr;
  return cl;
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

PoleAnalysis analyze_poles(const ClosedLoop& loop, double threshold) {
  PoleAnalysis out;
  const int n = loop.states();
  if (n == 0) {
    out.stable = true;
    return out;
  }
  const EigenDecomposition ed = eigen_decompose(loop.A);
  out.stable = true;
  for (int i = 0; i < n; ++i) out.stable = out.stable && ed.values(i).real() < 0.0;

  // c_i = (C v_i) (W B)_i / lambda_i with W = V^-1.
  Eigen::PartialPivLU<CMat> lu(ed.vectors);
  out.eigvec_rcond = ed.ok ? lu.rcond() : 0.0;
  out.residues_reliable = ed.ok && out.eigvec_rcond > 1e-10;
  CVec wb = lu.solve(loop.B.cast<Complex>());
  CVec cv = (loop.Cy.cast<Complex>() * ed.vectors).transpose();
  std::vector<double> res(static_cast<size_t>(n), 0.0);
  double total = 0.0;
  for (int i = 0; i < n; ++i) {
    const Complex lam = ed.values(i);
    double r = std::abs(lam) > 0.0 ? std::abs(cv(i) * wb(i) / lam) : std::abs(cv(i) * wb(i));
    if (!std::isfinite(r)) {
      r = 0.0;
      out.residues_reliable = false;
    }
    res[static_cast<size_t>(i)] = r;
    total += r;
  }
  for (int i = 0; i < n; ++i) {
    PoleInfo p;
    p.pole = ed.values(i);
    p.natural_frequency = std::abs(p.pole);
    p.damping = damping_of(p.pole);
    p.residue = res[static_cast<size_t>(i)];
    p.share = total > 0.0 ? p.residue / total : 0.0;
    p.matters = !out.residues_reliable || p.share >= threshold;
    out.poles.push_back(p);
  }
  std::sort(out.poles.begin(), out.poles.end(), [](const PoleInfo& a, const PoleInfo& b) {
    if (a.pole.real() != b.pole.real()) return a.pole.real() > b.pole.real();
    return a.pole.imag() > b.pole.imag();
  });
  // Exact conjugate symmetry for the report.
  for (PoleInfo& p : out.poles)
    if (std::abs(p.pole.imag()) <= 1e-12 * std::max(1.0, p.natural_frequency)) p.pole.imag(0.0);
  return out;
}

}  // namespace pw
