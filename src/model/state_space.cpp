#include "polewright/model/state_space.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <stdexcept>

namespace pw {

namespace {

// One section: a first- or second-order pole factor with the zeros assigned to it.
struct Section {
  Roots poles;  // one real pole, or two (a conjugate pair or two reals)
  Roots zeros;  // at most as many as poles
};

// Second-order block with given A (2x2) and B; C and D solved so that the block realises
// (s^2 + n1 s + n0) or (n1 s + n0) over det(sI - A) with leading numerator coefficient b2.
StateSpace second_order_block(const Eigen::Matrix2d& A, const Eigen::Vector2d& B, double b2, double n1,
                              double n0) {
  // N(s) - b2 det(sI - A) = r1 s + r0, with det = s^2 - tr s + det(A).
  const double tr = A.trace();
  const double dt = A.determinant();
  const double r1 = n1 + b2 * tr;
  const double r0 = n0 - b2 * dt;
  // C adj(sI - A) B = s (c1 B1 + c2 B2) + c1 (-a22 B1 + a12 B2) + c2 (a21 B1 - a11 B2).
  Eigen::Matrix2d M;
  M << B(0), B(1), -A(1, 1) * B(0) + A(0, 1) * B(1), A(1, 0) * B(0) - A(0, 0) * B(1);
  const Eigen::Vector2d c = M.fullPivLu().solve(Eigen::Vector2d(r1, r0));
  StateSpace s;
  s.A = A;
  s.B = B;
  s.C = c.transpose();
  s.D = b2;
  return s;
}

StateSpace realize_section(const Section& sec) {
  StateSpace s;
  if (sec.poles.size() == 1) {
    const double p = sec.poles[0].real();
    s.A = Mat::Constant(1, 1, p);
    s.B = Vec::Constant(1, 1.0);
    if (sec.zeros.empty()) {
      s.C = RowVec::Constant(1, 1.0);
      s.D = 0.0;
    } else {
      const double z = sec.zeros[0].real();
      s.C = RowVec::Constant(1, p - z);
      s.D = 1.0;
    }
    return s;
  }
  Eigen::Matrix2d A;
  Eigen::Vector2d B;
  const Complex p0 = sec.poles[0];
  if (p0.imag() != 0.0) {
    const double sigma = p0.real();
    const double omega = std::abs(p0.imag());
    A << sigma, omega, -omega, sigma;
    B << 0.0, omega;
  } else {
    // Two real poles in series: x1' = p1 x1 + u, x2' = p2 x2 + x1 (scaled by |p1| to keep gains O(1)).
    const double p1 = sec.poles[0].real();
    const double p2 = sec.poles[1].real();
    const double k = std::max(1.0, std::abs(p1));
    A << p1, 0.0, k, p2;
    B << 1.0, 0.0;
  }
  // Numerator polynomial of the assigned zeros.
  double b2 = 0.0, n1 = 0.0, n0 = 1.0;  // N(s) = b2 s^2 + n1 s + n0
  if (sec.zeros.size() == 1) {
    n1 = 1.0;
    n0 = -sec.zeros[0].real();
  } else if (sec.zeros.size() == 2) {
    b2 = 1.0;
    n1 = -(sec.zeros[0] + sec.zeros[1]).real();
    n0 = (sec.zeros[0] * sec.zeros[1]).real();
  }
  return second_order_block(A, B, b2, n1, n0);
}

// Groups roots into conjugate pairs and reals.
void split(const Roots& roots, Roots& reals, std::vector<std::pair<Complex, Complex>>& pairs) {
  for (const Complex& r : roots) {
    if (r.imag() > 0.0) pairs.push_back({r, std::conj(r)});
    else if (r.imag() == 0.0) reals.push_back(r);
  }
}

std::vector<Section> make_sections(const Zpk& z) {
  Roots pole_reals, zero_reals;
  std::vector<std::pair<Complex, Complex>> pole_pairs, zero_pairs;
  split(z.poles, pole_reals, pole_pairs);
  split(z.zeros, zero_reals, zero_pairs);

  std::vector<Section> secs;
  for (const auto& pp : pole_pairs) secs.push_back({{pp.first, pp.second}, {}});
  std::vector<bool> real_used(pole_reals.size(), false);

  // Complex zero pairs: onto the nearest free complex pole pair, else onto two real poles.
  for (const auto& zp : zero_pairs) {
    const double wz = std::abs(zp.first);
    int best = -1;
    double best_d = std::numeric_limits<double>::infinity();
    for (size_t i = 0; i < secs.size(); ++i) {
      if (!secs[i].zeros.empty() || secs[i].poles.size() != 2) continue;
      const double d = std::abs(std::log(std::abs(secs[i].poles[0]) / wz));
      if (d < best_d) { best_d = d; best = static_cast<int>(i); }
    }
    if (best >= 0) {
      secs[static_cast<size_t>(best)].zeros = {zp.first, zp.second};
      continue;
    }
    std::vector<size_t> free_idx;
    for (size_t i = 0; i < pole_reals.size(); ++i)
      if (!real_used[i]) free_idx.push_back(i);
    if (free_idx.size() < 2) throw std::invalid_argument("realize: improper transfer function");
    std::sort(free_idx.begin(), free_idx.end(), [&](size_t a, size_t b) {
      return std::abs(std::abs(pole_reals[a]) - wz) < std::abs(std::abs(pole_reals[b]) - wz);
    });
    real_used[free_idx[0]] = real_used[free_idx[1]] = true;
    secs.push_back({{pole_reals[free_idx[0]], pole_reals[free_idx[1]]}, {zp.first, zp.second}});
  }
  for (size_t i = 0; i < pole_reals.size(); ++i)
    if (!real_used[i]) secs.push_back({{pole_reals[i]}, {}});

  // Real zeros: onto the nearest first-order section, else onto a second-order one with room.
  for (const Complex& zr : zero_reals) {
    int best = -1;
    double best_d = std::numeric_limits<double>::infinity();
    for (int pass = 0; pass < 2 && best < 0; ++pass) {
      for (size_t i = 0; i < secs.size(); ++i) {
        const bool first_order = secs[i].poles.size() == 1;
        if (pass == 0 && !first_order) continue;
        if (secs[i].zeros.size() >= secs[i].poles.size()) continue;
        const double d = std::abs(secs[i].poles[0] - zr);
        if (d < best_d) { best_d = d; best = static_cast<int>(i); }
      }
    }
    if (best < 0) throw std::invalid_argument("realize: improper transfer function");
    secs[static_cast<size_t>(best)].zeros.push_back(zr);
  }
  return secs;
}

}  // namespace

StateSpace series(const StateSpace& first, const StateSpace& second) {
  const int n1 = first.states(), n2 = second.states();
  StateSpace s;
  s.A = Mat::Zero(n1 + n2, n1 + n2);
  s.A.topLeftCorner(n1, n1) = first.A;
  s.A.bottomRightCorner(n2, n2) = second.A;
  s.A.bottomLeftCorner(n2, n1) = second.B * first.C;
  s.B = Vec(n1 + n2);
  s.B.head(n1) = first.B;
  s.B.tail(n2) = second.B * first.D;
  s.C = RowVec(n1 + n2);
  s.C.head(n1) = second.D * first.C;
  s.C.tail(n2) = second.C;
  s.D = second.D * first.D;
  return s;
}

StateSpace realize(const Zpk& z) {
  if (!z.is_proper()) throw std::invalid_argument("realize: improper transfer function");
  StateSpace out;
  out.A = Mat(0, 0);
  out.B = Vec(0);
  out.C = RowVec(0);
  out.D = 1.0;
  // Each section is scaled to a gain of about 1 at its own frequency w_s (the geometric mean of
  // its non-zero root magnitudes; |H_s(j w_s)| ~ w_s^(zeros - poles)) and the overall gain is
  // spread evenly, in log, over the sections. Without this a plant of order 30 with roots over
  // eight decades carries a gain near 1e60 on its last output and the closed-loop eigenvalues
  // lose six digits; with it no signal of the cascade is far larger than the others.
  const std::vector<Section> secs = make_sections(z);
  if (secs.empty() || z.gain == 0.0) {
    for (const Section& sec : secs) out = series(out, realize_section(sec));
    out.C *= z.gain;
    out.D *= z.gain;
    return out;
  }
  std::vector<double> log_norm(secs.size(), 0.0);
  double log_total = std::log(std::abs(z.gain));
  for (size_t i = 0; i < secs.size(); ++i) {
    double sum = 0.0;
    int count = 0;
    for (const Roots* set : {&secs[i].poles, &secs[i].zeros})
      for (const Complex& r : *set)
        if (std::abs(r) > 0.0) {
          sum += std::log(std::abs(r));
          ++count;
        }
    const double log_ws = count ? sum / count : 0.0;
    log_norm[i] = log_ws * static_cast<double>(secs[i].poles.size() - secs[i].zeros.size());
    log_total -= log_norm[i];
  }
  const double log_share = log_total / static_cast<double>(secs.size());
  for (size_t i = 0; i < secs.size(); ++i) {
    StateSpace s = realize_section(secs[i]);
    double k = std::exp(log_norm[i] + log_share);
    if (i == 0 && z.gain < 0.0) k = -k;
    s.C *= k;
    s.D *= k;
    out = series(out, s);
  }
  return out;
}

Complex ss_evaluate(const StateSpace& sys, Complex s) {
  const int n = sys.states();
  if (n == 0) return Complex(sys.D, 0.0);
  CMat M = -sys.A.cast<Complex>();
  M.diagonal().array() += s;
  const CVec x = M.partialPivLu().solve(sys.B.cast<Complex>());
  return (sys.C.cast<Complex>() * x)(0, 0) + sys.D;
}

}  // namespace pw
