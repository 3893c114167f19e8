// Real polynomials in descending powers of s, and their roots by balanced companion eigenvalues.
#pragma once

#include <vector>

#include "polewright/model/types.hpp"

namespace pw {

// Coefficients in descending powers: {1, 24, 0} is s^2 + 24 s.
using Poly = std::vector<double>;

// Drops leading zero coefficients (an all-zero polynomial becomes {}).
Poly poly_trim(const Poly& p);

// Degree after trimming; -1 for the zero polynomial.
int poly_degree(const Poly& p);

Poly poly_multiply(const Poly& a, const Poly& b);

// Expands prod(s - r) for a conjugate-symmetric root set; the result is real.
Poly poly_from_roots(const Roots& roots);

Complex poly_evaluate(const Poly& p, Complex s);

// Roots of a polynomial with a non-zero leading coefficient. Exact zeros at the origin (trailing
// zero coefficients) are split off exactly; the rest come from the eigenvalues of the balanced
// companion matrix, each polished by Newton steps when that lowers the residual. The result is
// made exactly conjugate-symmetric. Throws NumericalError (model/eigen.hpp) when a coefficient
// is not finite, when the coefficients over the leading one overflow a double (the companion
// matrix cannot be formed), or when the eigenvalue iteration does not converge.
Roots poly_roots(const Poly& p);

// Pairs near-conjugate roots and makes them exact conjugates; snaps tiny imaginary parts to zero.
// Roots are ordered: real ones ascending, then pairs by real part, positive imaginary first.
Roots make_conjugate_symmetric(const Roots& roots, double rel_tol = 1e-9);

}  // namespace pw
