#include "polewright/model/eigen.hpp"

#include <unsupported/Eigen/MatrixFunctions>

#include <cmath>

#include <Eigen/Eigenvalues>

namespace pw {

namespace {

// Powers of two between the smallest subnormal and the largest double.
constexpr int kMaxScalingSteps = 2100;

template <class M>
bool all_finite(const M& A) {
  for (int i = 0; i < A.rows(); ++i)
    for (int j = 0; j < A.cols(); ++j)
      if (!std::isfinite(A(i, j))) return false;
  return true;
}

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
      // A non-finite row or column cannot be balanced (and would loop forever below: inf / 4 is
      // inf); each scaling loop is capped at the exponent range of a double as well.
      if (c == 0.0 || r == 0.0 || !std::isfinite(c) || !std::isfinite(r)) continue;
      double g = r / radix, f = 1.0;
      const double s = c + r;
      for (int k = 0; k < kMaxScalingSteps && c < g; ++k) { f *= radix; c *= radix * radix; }
      g = r * radix;
      for (int k = 0; k < kMaxScalingSteps && c >= g; ++k) { f /= radix; c /= radix * radix; }
      if (!std::isfinite(f) || f == 0.0) continue;
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
  if (!all_finite(A_in)) throw NumericalError("eigenvalues: the matrix has entries beyond the range of a double");
  M A = A_in;
  V d;
  balance_impl(A, d);
  Eigen::EigenSolver<Eigen::MatrixXd> es(Eigen::MatrixXd(A), false);
  // The QR iteration is capped (Eigen: 40 sweeps per eigenvalue); when it stops unconverged the
  // values are not eigenvalues: return NaN, which no stability test accepts.
  if (es.info() != Eigen::Success) return CVec::Constant(A.rows(), Complex(std::nan(""), std::nan("")));
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
  if (!all_finite(A_in)) throw NumericalError("eigenvalues: the matrix has entries beyond the range of a double");
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

Mat zoh_exponential(const Mat& A, const Vec& B, double h) {
  const int n = static_cast<int>(A.rows());
  // The input column is scaled to the size of A h first: the last row of M is zero, so the
  // similarity diag(1, .., 1, 1/c) only scales that column of exp(M) by c, and balancing (which
  // cannot act on a zero row) is left with a matrix whose squarings lose no digits to a huge B.
  const double a = (A * h).cwiseAbs().maxCoeff(), b = (B * h).cwiseAbs().maxCoeff();
  const double c = (n > 0 && a > 0.0 && b > 0.0) ? b / a : 1.0;
  Mat M = Mat::Zero(n + 1, n + 1);
  M.topLeftCorner(n, n) = A * h;
  M.topRightCorner(n, 1) = B * (h / c);
  Vec d;
  balance(M, d);
  Mat E = M.exp();
  for (int i = 0; i < n + 1; ++i)
    for (int j = 0; j < n + 1; ++j) E(i, j) *= d(i) / d(j);
  E.topRightCorner(n, 1) *= c;
  return E;
}

}  // namespace pw
