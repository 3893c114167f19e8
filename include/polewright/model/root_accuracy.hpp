// How well the roots of a polynomial given by its coefficients are determined by them.
#pragma once

#include <vector>

#include "polewright/model/polynomial.hpp"

namespace pw {

// For each root: true when it is isolated, i.e. its first-order error bound for coefficient
// errors of a few ulp, 4 n eps sum |a_k| |r|^k / |p'(r)|, is below 1 % of the distance to the
// nearest other root. Newton polishing is only sound for isolated roots: polishing the members of
// a cluster one by one moves the cluster's centroid (which the eigenvalues had right).
std::vector<bool> isolated_roots(const Poly& p, const Roots& roots);

struct RootAccuracy {
  double worst_relative = 0.0;  // estimated relative error of the worst-determined root
  int cluster_size = 1;         // roots in that root's cluster (1: a simple root)
  Complex near{0.0, 0.0};       // that root, or the centroid of its cluster
};

// Estimated accuracy of `roots` (from poly_roots(p)); exact roots at the origin (trailing zero
// coefficients) count as exact. A simple root: its first-order bound. A cluster (non-isolated
// roots within 10 % of one another, linked): its spread about the centroid, at least
// eps^(1/m) for m roots, relative to the centroid: the roots of an m-fold factor perturbed by
// rounding spread on a circle of about that radius.
RootAccuracy root_accuracy(const Poly& p, const Roots& roots);

}  // namespace pw
