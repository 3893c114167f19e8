// Pade (n, n) approximant of the dead time e^(-sT).
#pragma once

#include "polewright/model/zpk.hpp"

namespace pw {

// Coefficients c_k (ascending powers of x = sT) of the Pade denominator: the approximant is
// D(-x) / D(x) with D(x) = sum c_k x^k, c_k = (2n-k)! n! / ((2n)! k! (n-k)!).
std::vector<double> pade_denominator_coefficients(int order);

// e^(-sT) as zeros/poles/gain. T = 0 gives the empty (unit) transfer function.
Zpk pade_delay(double delay_s, int order);

}  // namespace pw
