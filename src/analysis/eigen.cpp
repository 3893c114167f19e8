#include "polewright/analysis/eigen.hpp"

#include <cmath>

#include <Eigen/Eigenvalues>

namespace pw {

void balance(Mat& A, Vec& scale) {
  const int n = static_cast<int>(A.rows());
  scale = Vec::Ones(n);
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

CVec eigenvalues_balanced(const Mat& A_in) {
  if (A_in.rows() == 0) return CVec(0);
  Mat A = A_in;
  Vec d;
  balance(A, d);
  Eigen::EigenSolver<Eigen::MatrixXd> es(Eigen::MatrixXd(A), false);
  return es.eigenvalues();
}

EigenDecomposition eigen_decompose(const Mat& A_in) {
  EigenDecomposition out;
  if (A_in.rows() == 0) {
    out.values = CVec(0);
    out.vectors = CMat(0, 0);
    out.ok = true;
    return out;
  }
  Mat A = A_in;
  Vec d;
  balance(A, d);
  Eigen::EigenSolver<Eigen::MatrixXd> es(Eigen::MatrixXd(A), true);
  out.ok = es.info() == Eigen::Success;
  out.values = es.eigenvalues();
  out.vectors = es.eigenvectors();
  for (int i = 0; i < out.vectors.rows(); ++i) out.vectors.row(i) *= d(i);
  return out;
}

}  // namespace pw
