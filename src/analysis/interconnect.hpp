// The unity-feedback interconnection algebra, written once for every matrix storage: the
// continuous loop (StateSpace -> ClosedLoop, fixed maximum size) and the sampled loop of
// discrete_loop.cpp (dynamic size, for long dead times) both use it. Private to the library.
#pragma once

#include <cmath>

namespace pw {

// Closes u = k C(r - y) around y = G u. `Sys` has A, B, C, D (states x' = A x + B u, y = C x + D u);
// `Loop` has A, B, Cy, Dy, Cu, Du, well_posed, with Eigen types of the same storage. The algebraic
// loop is solved: 1 + k Dc Dg = 0 (|.| <= 1e-12) has no solution and is reported as not well posed.
template <class Loop, class Sys>
Loop interconnect(const Sys& c, const Sys& g, double k) {
  using M = decltype(Loop::A);
  using V = decltype(Loop::B);
  using R = decltype(Loop::Cy);
  const int nc = c.states(), ng = g.states(), n = nc + ng;
  Loop cl;
  const double Dc = k * c.D;
  const double delta = 1.0 + Dc * g.D;
  cl.well_posed = std::abs(delta) > 1e-12;
  const double inv = cl.well_posed ? 1.0 / delta : 0.0;
  // u = Fc xc + Fg xg + Fr r
  const R Fc = (k * inv) * c.C;
  const R Fg = (-Dc * inv) * g.C;
  const double Fr = Dc * inv;
  const R Yg = g.C + g.D * Fg;  // y = Dg Fc xc + Yg xg + Dg Fr r
  cl.A = M(n, n);
  cl.A.topLeftCorner(nc, nc) = c.A - (c.B * g.D) * Fc;
  cl.A.topRightCorner(nc, ng) = -c.B * Yg;
  cl.A.bottomLeftCorner(ng, nc) = g.B * Fc;
  cl.A.bottomRightCorner(ng, ng) = g.A + g.B * Fg;
  cl.B = V(n);
  cl.B.head(nc) = c.B * (1.0 - g.D * Fr);
  cl.B.tail(ng) = g.B * Fr;
  cl.Cy = R(n);
  cl.Cy.head(nc) = g.D * Fc;
  cl.Cy.tail(ng) = Yg;
  cl.Dy = g.D * Fr;
  cl.Cu = R(n);
  cl.Cu.head(nc) = Fc;
  cl.Cu.tail(ng) = Fg;
  cl.Du = Fr;
  return cl;
}

}  // namespace pw
