#include "polewright/model/pade.hpp"

#include <cmath>

namespace pw {

std::vector<double> pade_denominator_coefficients(int n) {
  // c_0 = 1, c_{k+1} = c_k (n - k) / ((2n - k)(k + 1)).
  std::vector<double> c(static_cast<size_t>(n) + 1);
  c[0] = 1.0;
  for (int k = 0; k < n; ++k)
    c[static_cast<size_t>(k) + 1] = c[static_cast<size_t>(k)] * (n - k) / ((2.0 * n - k) * (k + 1.0));
  return c;
}

Zpk pade_delay(double delay_s, int order) {
  Zpk out;
  if (delay_s <= 0.0 || order <= 0) return out;
  const std::vector<double> c = pade_denominator_coefficients(order);
  Poly descending(c.rbegin(), c.rend());  // D(x) in descending powers of x
  const Roots xr = poly_roots(descending);
  for (const Complex& r : xr) {
    out.poles.push_back(r / delay_s);
    out.zeros.push_back(-r / delay_s);
  }
  out.zeros = make_conjugate_symmetric(out.zeros);
  out.gain = (order % 2 == 0) ? 1.0 : -1.0;
  return out;
}

}  // namespace pw
