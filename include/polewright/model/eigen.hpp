// Eigenvalues of real matrices, balanced first (Eigen's EigenSolver does not balance).
#pragma once

#include <stdexcept>
#include <string>

#include "polewright/model/types.hpp"

namespace pw {

// A numerical routine that cannot give a meaningful answer (non-finite input, an iteration
// that did not converge within its cap). The message says which and why.
struct NumericalError : std::runtime_error {
  explicit NumericalError(const std::string& what) : std::runtime_error(what) {}
};

// Diagonal similarity scaling by powers of two (the scaling step of LAPACK's gebal):
// on return A_bal = D^-1 A D, with D = diag(scale). At most 100 sweeps; rows or columns with
// non-finite sums are left alone.
void balance(Mat& A, Vec& scale);

// Eigenvalues of A (balanced internally). Throws NumericalError when A has a non-finite entry;
// NaN values when the QR iteration did not converge within Eigen's cap.
CVec eigenvalues_balanced(const Mat& A);

// Eigenvalues and right eigenvectors of A (balanced internally; vectors are for the original A).
struct EigenDecomposition {
  CVec values;
  CMat vectors;
  bool ok = false;  // false when the solver did not converge
};
EigenDecomposition eigen_decompose(const Mat& A);

// exp([[A h, B h], [0, 0]]) = [[e^(A h), int_0^h e^(A s) ds B], [0, 1]]: the exact zero-order-hold
// map of x' = A x + B u over a step h. Balanced first (exp(D^-1 M D) = D^-1 exp(M) D): a loop with
// large gains has entries spread over many decades, and scaling-and-squaring on the unbalanced
// matrix loses the answer.
Mat zoh_exponential(const Mat& A, const Vec& B, double h);

// The same for dynamic-size matrices (a sampled loop with a long dead time holds more states than Mat).
void balance(Eigen::MatrixXd& A, Eigen::VectorXd& scale);
CVec eigenvalues_balanced(const Eigen::MatrixXd& A);
EigenDecomposition eigen_decompose(const Eigen::MatrixXd& A);

}  // namespace pw
