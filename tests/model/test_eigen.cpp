#include <catch2/catch.hpp>

#include <algorithm>

#include "polewright/model/eigen.hpp"

using namespace pw;

TEST_CASE("balance is a similarity transform that evens row and column norms", "[model][eigen]") {
  Mat A(3, 3);
  A << 1, 1e6, 0, 1e-6, 2, 1e4, 0, 1e-4, 3;
  Mat B = A;
  Vec d;
  balance(B, d);
  const Mat back = d.asDiagonal() * B * d.cwiseInverse().asDiagonal();
  CHECK((back - A).norm() <= 1e-9 * A.norm());
  CHECK(B.cwiseAbs().maxCoeff() < 1e3);
}

TEST_CASE("eigenvalues of a badly scaled matrix and eigenvectors of the original", "[model][eigen]") {
  // Companion of (s + 1)(s + 100)(s + 1e4): eigenvalues -1, -100, -1e4 exactly.
  Mat A(3, 3);
  A << -(1 + 100 + 1e4), -(100 + 1e4 + 1e6), -1e6, 1, 0, 0, 0, 1, 0;
  CVec ev = eigenvalues_balanced(A);
  std::vector<double> re;
  for (int i = 0; i < 3; ++i) re.push_back(ev(i).real());
  std::sort(re.begin(), re.end());
  CHECK(re[0] == Approx(-1e4).epsilon(1e-12));
  CHECK(re[1] == Approx(-100).epsilon(1e-12));
  CHECK(re[2] == Approx(-1).epsilon(1e-12));
  const EigenDecomposition ed = eigen_decompose(A);
  REQUIRE(ed.ok);
  const CMat r = A.cast<Complex>() * ed.vectors - ed.vectors * ed.values.asDiagonal();
  CHECK(r.norm() <= 1e-8 * A.norm() * ed.vectors.norm());
}

TEST_CASE("dynamic-size overloads: beyond the fixed maximum size", "[model][eigen][export]") {
  // An upper-triangular 100 x 100 matrix has its diagonal as eigenvalues (closed form); the entries
  // above the diagonal spread over many decades so balancing has work to do.
  const int n = 100;
  Eigen::MatrixXd A = Eigen::MatrixXd::Zero(n, n);
  for (int i = 0; i < n; ++i) {
    A(i, i) = -(i + 1.0);
    for (int j = i + 1; j < n; ++j) A(i, j) = std::pow(10.0, (j - i) % 7 - 3);
  }
  CVec ev = eigenvalues_balanced(A);
  std::vector<double> re;
  for (int i = 0; i < n; ++i) re.push_back(ev(i).real());
  std::sort(re.begin(), re.end());
  for (int i = 0; i < n; ++i) CHECK(re[static_cast<size_t>(i)] == Approx(-(n - i)).epsilon(1e-6));
  Eigen::MatrixXd B = A;
  Eigen::VectorXd d;
  balance(B, d);
  CHECK((d.asDiagonal().inverse() * A * d.asDiagonal() - B).norm() <= 1e-12 * A.norm());
  const EigenDecomposition ed = eigen_decompose(A);
  REQUIRE(ed.ok);
  for (int i = 0; i < n; i += 17)
    CHECK((A * ed.vectors.col(i).real() - ed.values(i).real() * ed.vectors.col(i).real()).norm() <=
          1e-8 * ed.vectors.col(i).norm() * A.norm());
}

TEST_CASE("the zero-order-hold exponential of a first-order system (closed form)", "[model][eigen]") {
  // x' = -a x + b u: over a step h, x -> e^(-a h) x + (b / a)(1 - e^(-a h)) u (closed form).
  Mat A(1, 1);
  A(0, 0) = -3.0;
  Vec B(1);
  B(0) = 2.0;
  const Mat E = zoh_exponential(A, B, 0.4);
  REQUIRE(E.rows() == 2);
  CHECK(E(0, 0) == Approx(std::exp(-1.2)).epsilon(1e-14));
  CHECK(E(0, 1) == Approx(2.0 / 3.0 * (1.0 - std::exp(-1.2))).epsilon(1e-14));
  CHECK(E(1, 0) == 0.0);
  CHECK(E(1, 1) == Approx(1.0));
  // Entries spread over thirteen decades (a gain of 5e9 on a 1e-3 pole): the closed form still holds
  // (without scaling the input column first, both entries were 1.7e-7 off: balancing cannot act
  // on the zero last row, and the squarings lost the digits).
  A(0, 0) = -1e-3;
  B(0) = 5e9;
  const Mat F = zoh_exponential(A, B, 2.0);
  CHECK(F(0, 0) == Approx(std::exp(-2e-3)).epsilon(1e-14));
  CHECK(F(0, 1) == Approx(-5e9 / 1e-3 * std::expm1(-2e-3)).epsilon(1e-12));
}

TEST_CASE("balancing skips non-finite rows and the eigenvalue routine refuses them", "[analysis][eigen]") {
  // Issue 18: an infinite entry made the power-of-two loops of balancing run for ever (inf / 4 = inf).
  Mat A = Mat::Zero(2, 2);
  A(0, 1) = -INFINITY;
  A(1, 0) = 1.0;
  Vec d;
  balance(A, d);  // returns: the row with an infinite sum is left alone
  CHECK(d(0) == 1.0);
  Mat B = Mat::Zero(2, 2);
  B(0, 1) = -INFINITY;
  B(1, 0) = 1.0;
  CHECK_THROWS_AS(eigenvalues_balanced(B), NumericalError);
  CHECK_THROWS_AS(eigen_decompose(B), NumericalError);
}
