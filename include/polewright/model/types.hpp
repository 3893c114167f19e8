// Shared numeric types. Matrices carry a fixed maximum size so that the evaluation hot path never
// touches the heap: the storage lives inside the object, the used size is dynamic.
#pragma once

#include <Eigen/Dense>
#include <complex>
#include <vector>

namespace pw {

using Complex = std::complex<double>;
using Roots = std::vector<Complex>;

// Largest state dimension of any closed loop: plant (30) + Pade delay (12) + compensator (20),
// plus room for the augmented zero-order-hold matrix.
constexpr int kMaxPlantOrder = 30;
constexpr int kMaxCompensatorOrder = 20;
constexpr int kMaxPadeOrder = 12;
constexpr int kMaxStates = kMaxPlantOrder + kMaxPadeOrder + kMaxCompensatorOrder;  // 62
constexpr int kMaxAug = kMaxStates + 2;

using Mat = Eigen::Matrix<double, Eigen::Dynamic, Eigen::Dynamic, 0, kMaxAug, kMaxAug>;
using Vec = Eigen::Matrix<double, Eigen::Dynamic, 1, 0, kMaxAug, 1>;
using RowVec = Eigen::Matrix<double, 1, Eigen::Dynamic, Eigen::RowMajor, 1, kMaxAug>;
// Complex matrices live on the heap: std::complex value-initialises, so a fixed-maximum complex
// matrix would clear all of its 64 KiB storage at every construction.
using CMat = Eigen::MatrixXcd;
using CVec = Eigen::VectorXcd;

}  // namespace pw
