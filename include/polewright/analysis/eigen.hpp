// Eigenvalues of real matrices, balanced first (Eigen's EigenSolver does not balance).
#pragma once

#include "polewright/model/types.hpp"

namespace pw {

// Diagonal similarity scaling by powers of two (the scaling step of LAPACK's gebal):
// on return A_bal = D^-1 A D, with D = diag(scale).
void balance(Mat& A, Vec& scale);

// Eigenvalues of A (balanced internally).
CVec eigenvalues_balanced(const Mat& A);

// Eigenvalues and right eigenvectors of A (balanced internally; vectors are for the original A).
struct EigenDecomposition {
  CVec values;
  CMat vectors;
  bool ok = false;  // false when the solver did not converge
};
EigenDecomposition eigen_decompose(const Mat& A);

}  // namespace pw
