#include "polewright/analysis/eigen.hpp"

#include <cmath>

#include <Eigen/Eigenvalues>

namespace pw {

namespace {

template <class M, class V>
void balance_impl(M& A, V& scale) {
  const int n = static_cast<int>(A.rows());
  scale = V::Ones(n);
  constexpr double radix = 2.0;
  bool converged = false;
  for (int sweep = 0; sweep < 100 && !converged; ++sweep) {
    converged = true;
    for (int i = 0; i < n; ++i) {
      double c = 0.0, r = 0.0;
      for (int j = 0; j < n; ++j) {
        if (j == i) continue;
        c += std::abs(A(j, i));
        r += std::abs(A(i, j));
      }
      if (c == 0.0 || r == 0.0) continue;
      double g = r / radix, f = 1.0;
      const double s = c + r;
      while (c < g) { f *= radix; c *= radix * radix; }
      g = r * radix;
      while (c >= g) { f /= radix; c /= radix * radix; }
      if ((c + r) / f < 0.95 * s) {
        converged = false;
        scale(i) *= f;
        A.row(i) /= f;
        A.col(i) *= f;
      }
    }
  }
}

template <class M, class V>
CVec eigenvalues_impl(const M& A_in) {
  if (A_in.rows() == 0) return CVec(0);
  M A = A_in;
  V d;
  balance_impl(A, d);
  Eigen::EigenSolver<Eigen::MatrixXd> es(Eigen::MatrixXd(A), false);
  return es.eigenvalues();
}

template <class M, class V>
EigenDecomposition decompose_impl(const M& A_in) {
  EigenDecomposition out;
  if (A_in.rows() == 0) {
    out.values = CVec(0);
    out.vectors = CMat(0, 0);
    out.ok = true;
    return out;
  }
  M A = A_in;
  V d;
  balance_impl(A, d);
  Eigen::EigenSolver<Eigen::MatrixXd> es(Eigen::MatrixXd(A), true);
  out.ok = es.info() == Eigen::Success;
  out.values = es.eigenvalues();
  out.vectors = es.eigenvectors();
  for (int i = 0; i < out.vectors.rows(); ++i) out.vectors.row(i) *= d(i);
  return out;
}

}  // namespace

void balance(Mat& A, Vec& scale) { balance_impl(A, scale); }
void balance(Eigen::MatrixXd& A, Eigen::VectorXd& scale) { balance_impl(A, scale); }
CVec eigenvalues_balanced(const Mat& A) { return eigenvalues_impl<Mat, Vec>(A); }
CVec eigenvalues_balanced(const Eigen::MatrixXd& A) { return eigenvalues_impl<Eigen::MatrixXd, Eigen::VectorXd>(A); }
EigenDecomposition eigen_decompose(const Mat& A) { return decompose_impl<Mat, Vec>(A); }
EigenDecomposition eigen_decompose(const Eigen::MatrixXd& A) { return decompose_impl<Eigen::MatrixXd, Eigen::VectorXd>(A); }

}  // namespace pw
