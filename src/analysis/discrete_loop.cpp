#include "polewright/analysis/discrete_loop.hpp"

#include <algorithm>
#include <cmath>
#include <functional>
#include <stdexcept>
#include <vector>

#include <Eigen/Sparse>

#include "polewright/analysis/closed_loop.hpp"
#include "polewright/model/eigen.hpp"
#include "interconnect.hpp"

namespace pw {

bool DiscreteLoopOptions::IsValid(std::string* error) const {
  auto fail = [&](const char* msg) {
    if (error) *error = msg;
    return false;
  };
  if (!(sample_time_s > 0.0) || !std::isfinite(sample_time_s)) return fail("sample_time_s must be > 0 and finite");
  if (compute_delay < 0 || compute_delay > kMaxDiscreteStates) return fail("compute_delay must be within 0..400 samples");
  if (!(band > 0.0 && band < 1.0)) return fail("band must be within (0, 1)");
  if (!(residue_share > 0.0 && residue_share < 1.0)) return fail("residue_share must be within (0, 1)");
  if (min_samples < 0 || max_samples < 10 || min_samples > max_samples) return fail("need 0 <= min_samples <= max_samples, max_samples >= 10");
  if (window_samples < 0) return fail("window_samples must be >= 0");
  if (points_per_sample < 4 || points_per_sample > 1000) return fail("points_per_sample must be within 4..1000");
  return frequency.IsValid(error);
}

namespace {

// [[e^(A h), int_0^h e^(A s) ds B], [0, 1]], balanced before the exponential.
Mat zoh_block(const StateSpace& g, double h) { return zoh_exponential(g.A, g.B, h); }

}  // namespace

SampledPlant sample_plant(const Plant& plant, double T, int compute_delay) {
  if (!(T > 0.0) || !std::isfinite(T)) throw std::invalid_argument("the sample time must be > 0");
  if (compute_delay < 0) throw std::invalid_argument("the computation delay must be >= 0 samples");
  const StateSpace g = realize(plant.tf);
  const int n = g.states();
  SampledPlant p;
  p.sample_time_s = T;
  const double ratio = plant.delay_s / T;
  if (!(ratio < 1e6)) throw std::invalid_argument("the dead time spans more than a million samples");
  double whole = std::floor(ratio + 1e-9);
  double frac = ratio - whole;
  if (frac < 1e-9) frac = 0.0;
  p.delay_samples = static_cast<int>(whole) + compute_delay;
  p.fraction = frac;
  p.core = g;
  if (n == 0) return p;
  const double delta = frac * T;
  const Mat E0 = zoh_block(g, T - delta);
  p.core.A = frac > 0.0 ? Mat(zoh_block(g, T).topLeftCorner(n, n)) : Mat(E0.topLeftCorner(n, n));
  p.core.B = E0.topRightCorner(n, 1);
  if (frac > 0.0) {
    const Mat E1 = zoh_block(g, delta);
    p.gamma1 = E0.topLeftCorner(n, n) * E1.topRightCorner(n, 1);
  }
  const Eigen::HessenbergDecomposition<Eigen::MatrixXd> hd(Eigen::MatrixXd(p.core.A));
  const Eigen::MatrixXd Q = hd.matrixQ();
  p.hess = hd.matrixH();
  p.hb = Q.transpose() * Eigen::VectorXd(p.core.B);
  if (p.gamma1.size() > 0) p.hg = Q.transpose() * Eigen::VectorXd(p.gamma1);
  p.hc = Eigen::RowVectorXd(p.core.C) * Q;
  const EigenDecomposition ed = eigen_decompose(p.core.A);
  if (ed.ok) {
    const Eigen::PartialPivLU<CMat> lu(ed.vectors);
    const CMat Vi = lu.inverse();
    const double cond = ed.vectors.cwiseAbs().colwise().sum().maxCoeff() * Vi.cwiseAbs().colwise().sum().maxCoeff();
    if (std::isfinite(cond) && cond <= 1e4) {
      const CVec cv = (p.core.C.cast<Complex>() * ed.vectors).transpose();
      const CVec wb = Vi * p.core.B.cast<Complex>();
      const CVec wg = p.gamma1.size() > 0 ? CVec(Vi * p.gamma1.cast<Complex>()) : CVec(CVec::Zero(n));
      for (int i = 0; i < n; ++i) {
        p.lambda.push_back(ed.values(i));
        p.rb.push_back(cv(i) * wb(i));
        p.rg.push_back(cv(i) * wg(i));
      }
    }
  }
  return p;
}

namespace {

using DMat = Eigen::MatrixXd;
using DVec = Eigen::VectorXd;
using DRow = Eigen::RowVectorXd;

// Dynamic-size state space: a dead time of many samples needs more states than Mat holds.
struct DSys {
  DMat A;
  DVec B;
  DRow C;
  double D = 0.0;
  int states() const { return static_cast<int>(A.rows()); }
};

// The closed loop r -> y, u, as ClosedLoop but of dynamic size.
struct DLoop {
  DMat A;
  DVec B;
  DRow Cy;
  double Dy = 0.0;
  DRow Cu;
  double Du = 0.0;
  bool well_posed = true;
  int states() const { return static_cast<int>(A.rows()); }
};

// The four matrices of a state-space form, copied into another (fixed <-> dynamic size).
template <class To, class From>
To with_matrices_of(const From& s) {
  To t;
  t.A = s.A;
  t.B = s.B;
  t.C = s.C;
  t.D = s.D;
  return t;
}

DSys to_dynamic(const StateSpace& s) { return with_matrices_of<DSys>(s); }

DSys plant_system(const SampledPlant& p) {
  const int nx = p.core.states();
  const bool frac = p.gamma1.size() > 0;
  const int m = p.delay_samples + (frac || p.fraction > 0.0 ? 1 : 0);
  if (nx + m > kMaxDiscreteStates)
    throw std::invalid_argument("the dead time spans " + std::to_string(m) + " samples: the sampled plant would need " +
                                std::to_string(nx + m) + " states, at most " + std::to_string(kMaxDiscreteStates));
  const int n = nx + m;
  DSys s;
  s.A = DMat::Zero(n, n);
  s.B = DVec::Zero(n);
  s.C = DRow::Zero(n);
  s.A.topLeftCorner(nx, nx) = p.core.A;
  s.C.head(nx) = p.core.C;
  // Register i (1-based) holds u[k - i], at state index nx + i - 1.
  auto reg = [nx](int i) { return nx + i - 1; };
  if (m > 0) s.B(reg(1)) = 1.0;
  for (int i = 2; i <= m; ++i) s.A(reg(i), reg(i - 1)) = 1.0;
  const int n0 = p.delay_samples;
  if (nx > 0) {
    if (n0 == 0) s.B.head(nx) = p.core.B;
    else s.A.block(0, reg(n0), nx, 1) = p.core.B;
    if (frac) s.A.block(0, reg(n0 + 1), nx, 1) = p.gamma1;
  }
  const int nd = n0 + (p.fraction > 0.0 ? 1 : 0);
  if (nd == 0) s.D = p.core.D;
  else s.C(reg(nd)) += p.core.D;
  return s;
}

DLoop sampled_closed_loop(const Zpk& cd, const SampledPlant& sp, double k) {
  const DSys g = plant_system(sp);
  const DSys c = to_dynamic(realize(cd));
  if (g.states() + c.states() > kMaxDiscreteStates)
    throw std::invalid_argument("the sampled loop would need " + std::to_string(g.states() + c.states()) +
                                " states, at most " + std::to_string(kMaxDiscreteStates));
  return interconnect<DLoop>(c, g, k);  // the algebra of close_loop, on dynamic-size matrices
}

}  // namespace

StateSpace sampled_plant_state_space(const SampledPlant& p) {
  const DSys d = plant_system(p);
  if (d.states() > kMaxStates)
    throw std::invalid_argument("the sampled plant has " + std::to_string(d.states()) +
                                " states, more than a StateSpace holds (" + std::to_string(kMaxStates) + ")");
  return with_matrices_of<StateSpace>(d);
}

namespace {

// a / b in plain real arithmetic (std::complex division goes through the slow C99 Annex G
// helper); |b|^2 stays far inside double range for the values of a frequency response.
inline Complex quotient(Complex a, Complex b) {
  const double d = std::norm(b);
  return Complex((a.real() * b.real() + a.imag() * b.imag()) / d, (a.imag() * b.real() - a.real() * b.imag()) / d);
}

// z^n for n >= 0 by repeated squaring (std::pow(complex, int) goes through exp and log).
inline Complex integer_power(Complex z, int n) {
  Complex r(1.0, 0.0);
  while (n > 0) {
    if (n & 1) r *= z;
    z *= z;
    n >>= 1;
  }
  return r;
}

// C (zI - H)^-1 (b + zi g) for upper Hessenberg H: Gaussian elimination with the pivot chosen
// between the two rows that hold column k (stable as partial pivoting), then back substitution.
// NaN when zI - H is singular.
Complex hessenberg_response(const SampledPlant& p, Complex z, Complex zi) {
  const int n = static_cast<int>(p.hess.rows());
  thread_local std::vector<Complex> work;  // n x n row-major, reused: no allocation per point
  thread_local std::vector<Complex> rhs;
  work.resize(static_cast<size_t>(n) * static_cast<size_t>(n));
  rhs.resize(static_cast<size_t>(n));
  auto M = [&](int i, int j) -> Complex& { return work[static_cast<size_t>(i) * static_cast<size_t>(n) + static_cast<size_t>(j)]; };
  for (int i = 0; i < n; ++i) {
    for (int j = 0; j < n; ++j) M(i, j) = Complex(j >= i - 1 ? -p.hess(i, j) : 0.0, 0.0);
    M(i, i) += z;
    rhs[static_cast<size_t>(i)] = p.hb(i) + (p.hg.size() > 0 ? zi * p.hg(i) : Complex(0.0, 0.0));
  }
  for (int k = 0; k + 1 < n; ++k) {
    if (std::norm(M(k + 1, k)) > std::norm(M(k, k))) {
      for (int j = k; j < n; ++j) std::swap(M(k, j), M(k + 1, j));
      std::swap(rhs[static_cast<size_t>(k)], rhs[static_cast<size_t>(k + 1)]);
    }
    if (M(k + 1, k) == 0.0) continue;
    if (M(k, k) == 0.0) return Complex(NAN, NAN);
    const Complex l = quotient(M(k + 1, k), M(k, k));
    for (int j = k + 1; j < n; ++j) M(k + 1, j) -= l * M(k, j);
    rhs[static_cast<size_t>(k + 1)] -= l * rhs[static_cast<size_t>(k)];
  }
  Complex v(0.0, 0.0);
  for (int i = n - 1; i >= 0; --i) {
    Complex s = rhs[static_cast<size_t>(i)];
    for (int j = i + 1; j < n; ++j) s -= M(i, j) * rhs[static_cast<size_t>(j)];
    if (M(i, i) == 0.0) return Complex(NAN, NAN);
    rhs[static_cast<size_t>(i)] = quotient(s, M(i, i));
    v += p.hc(i) * rhs[static_cast<size_t>(i)];
  }
  return v;
}

}  // namespace

Complex sampled_plant_response(const SampledPlant& p, Complex z) {
  const int nx = p.core.states();
  Complex v(0.0, 0.0);
  const Complex zi = quotient(Complex(1.0, 0.0), z);
  const bool hessenberg = nx > 0 && p.hess.rows() == nx && p.hess.cols() == nx && p.hb.size() == nx &&
                          p.hc.size() == nx && p.hg.size() == p.gamma1.size();
  const bool modal = nx > 0 && p.lambda.size() == static_cast<size_t>(nx) && p.rb.size() == p.lambda.size() &&
                     p.rg.size() == p.lambda.size();
  if (modal) {
    for (size_t i = 0; i < p.lambda.size(); ++i) v += quotient(p.rb[i] + p.rg[i] * zi, z - p.lambda[i]);
  } else if (hessenberg) {
    v = hessenberg_response(p, z, zi);
  } else if (nx > 0) {
    CMat M = -p.core.A.cast<Complex>();
    for (int i = 0; i < nx; ++i) M(i, i) += z;
    CVec b = p.core.B.cast<Complex>();
    if (p.gamma1.size() > 0) b += zi * p.gamma1.cast<Complex>();
    const CVec x = M.partialPivLu().solve(b);
    v = p.core.C.cast<Complex>() * x;
  }
  v += p.core.D * (p.fraction > 0.0 ? zi : Complex(1.0, 0.0));
  return v * integer_power(zi, p.delay_samples);
}

Complex sampled_loop_response(const Zpk& cd, const SampledPlant& p, double w) {
  const Complex z = std::polar(1.0, w * p.sample_time_s);
  return cd.evaluate(z) * sampled_plant_response(p, z);
}

namespace {

DiscretePole make_pole(Complex z, double T) {
  DiscretePole d;
  d.z = z;
  if (std::abs(z) == 0.0) {
    d.s = Complex(-INFINITY, 0.0);
    d.damping = 1.0;
    d.natural_frequency = INFINITY;
    return d;
  }
  d.s = std::log(z) / T;
  d.natural_frequency = std::abs(d.s);
  d.damping = damping_of(d.s);
  return d;
}

// The modal expansion of the sampled step: y[k] = y_f + sum c_i z_i^k, u[k] = u_f + sum d_i z_i^k,
// c_i = -(Cy v_i)(w_i B) / (1 - z_i) and d_i the same with Cu (v_i, w_i right and left
// eigenvectors). `reliable` when y[0] = Dy holds for the expansion (not for a nearly defective
// basis); `reliable_u` when u[0] = Du holds too, to 1e-9 of the coefficients.
struct Modal {
  CVec z, c, d;
  double total = 0.0;  // sum |c_i|
  bool reliable = false, reliable_u = false;
};

Modal modal_expansion(const DLoop& cl, const EigenDecomposition& ed, double y_final, double u_final) {
  Modal m;
  const int n = static_cast<int>(ed.values.size());
  m.z = ed.values;
  m.c = CVec::Zero(n);
  m.d = CVec::Zero(n);
  m.reliable = ed.ok;
  if (!ed.ok || n == 0) return m;
  Eigen::PartialPivLU<CMat> lu(ed.vectors);
  const CVec wb = lu.solve(cl.B.cast<Complex>());
  const CVec cy = (cl.Cy.cast<Complex>() * ed.vectors).transpose();
  const CVec cu = (cl.Cu.cast<Complex>() * ed.vectors).transpose();
  Complex sum(0.0, 0.0), sum_u(0.0, 0.0);
  double total_u = 0.0;
  for (int i = 0; i < n; ++i) {
    const Complex x = wb(i) / (1.0 - ed.values(i));
    m.c(i) = -cy(i) * x;
    m.d(i) = -cu(i) * x;
    sum += m.c(i);
    sum_u += m.d(i);
    m.total += std::abs(m.c(i));
    total_u += std::abs(m.d(i));
  }
  const double err = std::abs(y_final + sum - cl.Dy), err_u = std::abs(u_final + sum_u - cl.Du);
  const double scale = std::max({m.total, std::abs(y_final), 1e-300});
  const double scale_u = std::max({total_u, std::abs(u_final), 1e-300});
  m.reliable = std::isfinite(m.total) && err <= 1e-6 * scale;
  m.reliable_u = m.reliable && err <= 1e-9 * scale && std::isfinite(total_u) && err_u <= 1e-9 * scale_u;
  return m;
}

// Poles with their shares of the sampled step response (see Modal). When the expansion is not
// reliable every pole counts as one that matters.
std::vector<DiscretePole> poles_with_shares(const Modal& m, double T, double threshold) {
  const int n = static_cast<int>(m.z.size());
  std::vector<DiscretePole> out;
  for (int i = 0; i < n; ++i) {
    DiscretePole p = make_pole(m.z(i), T);
    if (m.reliable) p.residue = std::abs(m.c(i));
    if (m.reliable && m.total > 0.0) {
      p.share = std::abs(m.c(i)) / m.total;
      p.matters = p.share >= threshold;
    }
    out.push_back(p);
  }
  std::stable_sort(out.begin(), out.end(), [](const DiscretePole& a, const DiscretePole& b) {
    if (std::abs(a.z) != std::abs(b.z)) return std::abs(a.z) > std::abs(b.z);
    return a.z.imag() > b.z.imag();
  });
  return out;
}

bool all_inside_unit_circle(const CVec& z) {
  for (int i = 0; i < z.size(); ++i)
    if (!(std::abs(z(i)) < 1.0)) return false;
  return true;
}

// The steady state of the step: y_f and u_f from (I - A) x_f = B.
std::pair<double, double> final_values(const DLoop& cl) {
  const int n = cl.states();
  if (n == 0) return {cl.Dy, cl.Du};
  const Eigen::MatrixXd I = Eigen::MatrixXd::Identity(n, n);
  const Eigen::VectorXd xf = (I - cl.A).partialPivLu().solve(cl.B);
  return {cl.Cy.dot(xf) + cl.Dy, cl.Cu.dot(xf) + cl.Du};
}

// The sampled unit-step response and its figures at the sample instants (rise and settling
// interpolated linearly between samples, as the continuous figures are between their samples).
StepMetrics sampled_step(const DLoop& cl, double y_final, double u_final, const std::vector<DiscretePole>& poles,
                         const Modal* modal, double T, const DiscreteLoopOptions& o, bool& truncated) {
  // Horizon, as in continuous time: the first k with sum |c_i| |z_i|^k below a tenth of the band
  // (the remaining transient is then provably inside it), found by bisection below the bound where
  // every term is under a tenth of the band over the pole count. Without reliable residues each
  // |c_i| is taken as |y_f| + 10 (generous). A loop still outside the band at the end has no
  // settling time.
  const double target = 0.1 * o.band * std::max(std::abs(y_final), 1e-12);
  const double each = target / static_cast<double>(std::max<size_t>(poles.size(), 1));
  auto coef = [&](const DiscretePole& p) { return p.residue >= 0.0 ? p.residue : std::abs(y_final) + 10.0; };
  double hi = 10.0;
  for (const DiscretePole& p : poles) {
    const double r = std::abs(p.z), c = coef(p);
    if (r > 0.0 && r < 1.0 && c > each) hi = std::max(hi, std::log(each / c) / std::log(r));
  }
  auto envelope = [&](double k) {
    double sum = 0.0;
    for (const DiscretePole& p : poles) sum += coef(p) * std::pow(std::abs(p.z), k);
    return sum;
  };
  double lo_k = 0.0;
  for (int it = 0; it < 60 && hi - lo_k > 0.5; ++it) {
    const double m = 0.5 * (lo_k + hi);
    (envelope(m) <= target ? hi : lo_k) = m;
  }
  const double k = std::max(10.0, std::ceil(hi) + 1.0);
  truncated = k > o.max_samples;
  int n = static_cast<int>(std::min<double>(o.max_samples, k));
  n = std::min(o.max_samples, std::max(n, o.min_samples));
  if (o.window_samples > 0 && n > o.window_samples) {
    n = std::max(o.window_samples, 10);
    truncated = false;
  }
  StepMetrics m;
  m.samples = n;
  m.horizon_s = (n - 1) * T;
  m.final_value = y_final;
  std::vector<double> y(static_cast<size_t>(n)), u(static_cast<size_t>(n));
  // Two state buffers swapped each step: no allocation inside the loop. A small loop runs on a
  // plain row-major copy of A; a long dead time makes A mostly a shift, kept sparse.
  const int ns = cl.states();
  if (modal && modal->reliable_u) {
    // One complex power per real pole or conjugate pair (the pair's sum is twice the real part).
    // Structure of arrays (the weight folded into c and d), so the inner loop vectorises; every
    // 32 samples a term whose remaining size |c_i| |z_i|^k and |d_i| |z_i|^k is below 1e-16 of the
    // signals' scale is dropped (it no longer changes a double).
    std::vector<double> zr, zi, cr, ci, dr, di, wr, wi;
    double scale_y = std::abs(y_final), scale_u = std::abs(u_final);
    for (int i = 0; i < modal->z.size(); ++i) {
      const Complex z = modal->z(i);
      if (z.imag() < 0.0 || std::abs(z) == 0.0) continue;  // the pair's partner; z = 0 only at k = 0
      const double weight = z.imag() > 0.0 ? 2.0 : 1.0;
      zr.push_back(z.real());
      zi.push_back(z.imag());
      cr.push_back(weight * modal->c(i).real());
      ci.push_back(weight * modal->c(i).imag());
      dr.push_back(weight * modal->d(i).real());
      di.push_back(weight * modal->d(i).imag());
      wr.push_back(1.0);
      wi.push_back(0.0);
      scale_y += weight * std::abs(modal->c(i));
      scale_u += weight * std::abs(modal->d(i));
    }
    y[0] = cl.Dy;
    u[0] = cl.Du;
    size_t nt = zr.size();
    for (int k = 1; k < n; ++k) {
      double yk = y_final, uk = u_final;
      for (size_t i = 0; i < nt; ++i) {
        const double a = wr[i] * zr[i] - wi[i] * zi[i], b = wr[i] * zi[i] + wi[i] * zr[i];
        wr[i] = a;
        wi[i] = b;
        yk += cr[i] * a - ci[i] * b;
        uk += dr[i] * a - di[i] * b;
      }
      y[static_cast<size_t>(k)] = yk;
      u[static_cast<size_t>(k)] = uk;
      if ((k & 31) == 0) {
        size_t j = 0;
        for (size_t i = 0; i < nt; ++i) {
          // Squared sizes: no square root in the loop.
          const double w2 = wr[i] * wr[i] + wi[i] * wi[i], ty = 1e-16 * scale_y, tu = 1e-16 * scale_u;
          const bool gone = w2 * (cr[i] * cr[i] + ci[i] * ci[i]) <= ty * ty && w2 * (dr[i] * dr[i] + di[i] * di[i]) <= tu * tu;
          if (gone) continue;
          zr[j] = zr[i]; zi[j] = zi[i]; cr[j] = cr[i]; ci[j] = ci[i]; dr[j] = dr[i]; di[j] = di[i]; wr[j] = wr[i]; wi[j] = wi[i];
          ++j;
        }
        nt = j;
      }
    }
  } else if (ns <= 48) {
    const size_t w = static_cast<size_t>(ns);
    std::vector<double> A(w * w), x(w, 0.0), next(w), B(w), Cy(w), Cu(w);
    for (int i = 0; i < ns; ++i) {
      for (int j = 0; j < ns; ++j) A[static_cast<size_t>(i) * w + static_cast<size_t>(j)] = cl.A(i, j);
      B[static_cast<size_t>(i)] = cl.B(i);
      Cy[static_cast<size_t>(i)] = cl.Cy(i);
      Cu[static_cast<size_t>(i)] = cl.Cu(i);
    }
    for (int k = 0; k < n; ++k) {
      double yk = cl.Dy, uk = cl.Du;
      for (size_t j = 0; j < w; ++j) {
        yk += Cy[j] * x[j];
        uk += Cu[j] * x[j];
      }
      y[static_cast<size_t>(k)] = yk;
      u[static_cast<size_t>(k)] = uk;
      for (size_t i = 0; i < w; ++i) {
        const double* row = &A[i * w];
        double v = B[i];
        for (size_t j = 0; j < w; ++j) v += row[j] * x[j];
        next[i] = v;
      }
      x.swap(next);
    }
  } else {
    Eigen::VectorXd x = Eigen::VectorXd::Zero(ns), next(ns);
    const Eigen::SparseMatrix<double> A = cl.A.sparseView();
    for (int k = 0; k < n; ++k) {
      y[static_cast<size_t>(k)] = cl.Cy.dot(x) + cl.Dy;
      u[static_cast<size_t>(k)] = cl.Cu.dot(x) + cl.Du;
      next.noalias() = A * x;
      next += cl.B;
      x.swap(next);
    }
  }
  const double yf = y_final, ay = std::abs(yf), sg = yf >= 0.0 ? 1.0 : -1.0;
  double peak = -INFINITY, effort = 0.0, under = 0.0;
  int kpeak = 0;
  for (int k = 0; k < n; ++k) {
    const double v = sg * y[static_cast<size_t>(k)];
    if (v > peak) {
      peak = v;
      kpeak = k;
    }
    under = std::max(under, -v);
    effort = std::max(effort, std::abs(u[static_cast<size_t>(k)]));
  }
  m.peak_effort = effort;
  if (ay > 0.0) {
    m.overshoot_pct = std::max(0.0, 100.0 * (peak - ay) / ay);
    if (peak > ay) m.peak_time_s = kpeak * T;
    m.undershoot_pct = 100.0 * under / ay;
    auto first_reach = [&](double level) -> std::optional<double> {
      for (int k = 0; k < n; ++k) {
        const double v = sg * y[static_cast<size_t>(k)];
        if (v >= level) {
          if (k == 0) return 0.0;
          const double v0 = sg * y[static_cast<size_t>(k - 1)];
          return (k - 1 + (level - v0) / (v - v0)) * T;
        }
      }
      return std::nullopt;
    };
    const auto t10 = first_reach(0.1 * ay), t90 = first_reach(0.9 * ay);
    if (t10 && t90) m.rise_time_s = *t90 - *t10;
    const double band = o.band * ay;
    int last = -1;
    for (int k = n - 1; k >= 0; --k)
      if (std::abs(y[static_cast<size_t>(k)] - yf) > band) {
        last = k;
        break;
      }
    if (last < 0) m.settling_time_s = 0.0;
    else if (last + 1 < n) {
      const double e0 = std::abs(y[static_cast<size_t>(last)] - yf), e1 = std::abs(y[static_cast<size_t>(last + 1)] - yf);
      m.settling_time_s = (last + (e0 - band) / std::max(e0 - e1, 1e-300)) * T;
    }
  }
  if (o.keep_trace) {
    m.trace.dt = T;
    m.trace.y = y;
    m.trace.u = u;
  }
  return m;
}


// The continuous plant output between the samples of the step response (see
// DiscreteLoopOptions::between_samples). The plant's own states sit at [nc, nc + nx) of the loop
// state and are its continuous states at the instants; inside interval k the plant input is
// u[k - n - 1] on [0, delta) and u[k - n] on [delta, T) (dead time n T + delta).
void between_samples(const DLoop& cl, int nc, const StateSpace& g, const SampledPlant& sp, double y_final,
                     const DiscreteLoopOptions& o, StepMetrics& m) {
  const int n = m.samples;
  if (n < 2) return;
  const double T = o.sample_time_s;
  const int nx = g.states();
  const int n0 = sp.delay_samples;
  const double delta = sp.fraction * T;
  // Loop simulation again, keeping the plant states and u.
  std::vector<double> u(static_cast<size_t>(n));
  DMat X(std::max(nx, 1), n);
  {
    Eigen::VectorXd x = Eigen::VectorXd::Zero(cl.states());
    const Eigen::SparseMatrix<double> A = cl.A.sparseView();
    for (int k = 0; k < n; ++k) {
      u[static_cast<size_t>(k)] = cl.Cu.dot(x) + cl.Du;
      if (nx > 0) X.col(k) = x.segment(nc, nx);
      x = A * x + cl.B;
    }
  }
  auto u_at = [&](int j) { return j >= 0 ? u[static_cast<size_t>(j)] : 0.0; };
  const DRow Cc = g.C;
  const double Dc = g.D;
  // Segments of one interval: {start offset, length, which input (1: u[k-n-1], 0: u[k-n])}.
  struct Seg {
    double start, length;
    int lag;
  };
  std::vector<Seg> segs;
  if (delta > 0.0) segs.push_back({0.0, delta, 1});
  segs.push_back({delta, T - delta, 0});
  // Points per interval: at most points_per_sample, fewer when the horizon is very long.
  const double budget = 2e8 / (static_cast<double>(n) * (nx + 1.0) * (nx + 1.0));
  const int M = std::max(4, std::min(o.points_per_sample, static_cast<int>(budget)));
  struct Map {
    DMat P;
    DVec G;
  };
  auto map_of = [&](double h) {
    Map mp;
    if (nx == 0) return mp;
    const Mat E = zoh_exponential(g.A, g.B, h);
    mp.P = E.topLeftCorner(nx, nx);
    mp.G = E.topRightCorner(nx, 1);
    return mp;
  };
  std::vector<int> steps;
  std::vector<Map> maps, seg_maps;
  for (const Seg& sg : segs) {
    const int ms = std::max(1, static_cast<int>(std::lround(M * sg.length / T)));
    steps.push_back(ms);
    maps.push_back(map_of(sg.length / ms));
    seg_maps.push_back(map_of(sg.length));
  }
  // Dense points: time, y, and where (interval, segment, step).
  struct Pt {
    double t, y;
    int k, seg, j;
  };
  std::vector<Pt> pts;
  pts.reserve(static_cast<size_t>(n - 1) * static_cast<size_t>(M + 2) + 1);
  auto seg_start_state = [&](int k, size_t s) {
    DVec x = nx > 0 ? DVec(X.col(k)) : DVec();
    for (size_t q = 0; q < s; ++q)
      if (nx > 0) x = seg_maps[q].P * x + seg_maps[q].G * u_at(k - n0 - segs[q].lag);
    return x;
  };
  for (int k = 0; k + 1 < n; ++k) {
    DVec x = nx > 0 ? DVec(X.col(k)) : DVec();
    for (size_t s = 0; s < segs.size(); ++s) {
      const double v = u_at(k - n0 - segs[s].lag);
      const double h = segs[s].length / steps[s];
      for (int j = 0; j < steps[s]; ++j) {
        const double y = (nx > 0 ? Cc.dot(x) : 0.0) + Dc * v;
        pts.push_back({k * T + segs[s].start + j * h, y, k, static_cast<int>(s), j});
        if (nx > 0) x = maps[s].P * x + maps[s].G * v;
      }
    }
  }
  {
    const double y_last = (nx > 0 ? Cc.dot(DVec(X.col(n - 1))) : 0.0) + Dc * u_at(n - 1 - n0 - (delta > 0.0 ? 1 : 0));
    pts.push_back({(n - 1) * T, y_last, n - 1, 0, 0});
  }
  // Exact y at offset r into segment s of interval k.
  auto exact = [&](int k, int s, double r) {
    const double v = u_at(k - n0 - segs[static_cast<size_t>(s)].lag);
    if (nx == 0) return Dc * v;
    const DVec x0 = seg_start_state(k, static_cast<size_t>(s));
    const Mat E = zoh_exponential(g.A, g.B, r);
    const DVec x = DMat(E.topLeftCorner(nx, nx)) * x0 + DVec(E.topRightCorner(nx, 1)) * v;
    return Cc.dot(x) + Dc * v;
  };
  // Golden-section maximum of f on the segment of dense point i, over [its offset - h, + h]
  // clipped to the segment (the part before it belongs to the previous point's segment).
  auto refine_max = [&](size_t i, const std::function<double(double)>& f) {
    std::pair<double, double> best{pts[i].t, f(pts[i].y)};
    auto search = [&](const Pt& p, double lo, double hi) {
      const Seg& sg = segs[static_cast<size_t>(p.seg)];
      const double base = p.k * T + sg.start;
      lo = std::max(lo, 0.0);
      hi = std::min(hi, sg.length);
      if (!(hi > lo)) return;
      const double gr = 0.5 * (std::sqrt(5.0) - 1.0);
      double a = lo, b = hi, c = b - gr * (b - a), d = a + gr * (b - a);
      double fc = f(exact(p.k, p.seg, c)), fd = f(exact(p.k, p.seg, d));
      for (int it = 0; it < 40 && b - a > 1e-12 * T; ++it) {
        if (fc >= fd) {
          b = d; d = c; fd = fc; c = b - gr * (b - a); fc = f(exact(p.k, p.seg, c));
        } else {
          a = c; c = d; fc = fd; d = a + gr * (b - a); fd = f(exact(p.k, p.seg, d));
        }
      }
      const double r = fc >= fd ? c : d, val = std::max(fc, fd);
      if (val > best.second) best = {base + r, val};
    };
    const Pt& p = pts[i];
    const double h = segs[static_cast<size_t>(p.seg)].length / steps[static_cast<size_t>(p.seg)];
    const double off = p.t - (p.k * T + segs[static_cast<size_t>(p.seg)].start);
    if (p.k + 1 < n) search(p, off, off + h);
    if (i > 0) {
      const Pt& q = pts[i - 1];
      const double hq = segs[static_cast<size_t>(q.seg)].length / steps[static_cast<size_t>(q.seg)];
      const double offq = q.t - (q.k * T + segs[static_cast<size_t>(q.seg)].start);
      search(q, offq, offq + hq);
    }
    return best;
  };
  const double yf = y_final, ay = std::abs(yf), sgn = yf >= 0.0 ? 1.0 : -1.0;
  if (!(ay > 0.0)) return;
  // Overshoot: the three largest local maxima of sgn y on the dense grid, refined.
  {
    std::vector<size_t> peaks;
    for (size_t i = 0; i < pts.size(); ++i) {
      const double v = sgn * pts[i].y;
      const bool left = i == 0 || v >= sgn * pts[i - 1].y, right = i + 1 == pts.size() || v >= sgn * pts[i + 1].y;
      if (left && right) peaks.push_back(i);
    }
    std::sort(peaks.begin(), peaks.end(), [&](size_t a, size_t b) { return sgn * pts[a].y > sgn * pts[b].y; });
    if (peaks.size() > 3) peaks.resize(3);
    double peak = -INFINITY, tpeak = 0.0;
    for (size_t i : peaks) {
      const auto r = refine_max(i, [&](double y) { return sgn * y; });
      if (r.second > peak) {
        peak = r.second;
        tpeak = r.first;
      }
    }
    double under = 0.0;
    for (const Pt& p : pts) under = std::max(under, -sgn * p.y);
    m.overshoot_pct = std::max(0.0, 100.0 * (peak - ay) / ay);
    m.peak_time_s.reset();
    if (peak > ay) m.peak_time_s = tpeak;
    m.undershoot_pct = std::max(m.undershoot_pct, 100.0 * under / ay);
  }
  // Settling: the last time |y - y_f| exceeds the band, with hidden excursions after the last dense
  // point outside it (a local maximum of |y - y_f| above half the band, refined) and the crossing
  // back into the band bisected on the exact map.
  {
    const double band = o.band * ay;
    auto err = [&](double y) { return std::abs(y - yf); };
    long last = -1;
    for (long i = static_cast<long>(pts.size()) - 1; i >= 0; --i)
      if (err(pts[static_cast<size_t>(i)].y) > band) {
        last = i;
        break;
      }
    double t_out = last >= 0 ? pts[static_cast<size_t>(last)].t : 0.0;
    size_t from = last >= 0 ? static_cast<size_t>(last) : 0;
    bool outside = last >= 0;
    for (size_t i = pts.size() - 1; i > from; --i) {
      const double e = err(pts[i].y);
      const bool local = e >= err(pts[i - 1].y) && (i + 1 == pts.size() || e >= err(pts[i + 1].y));
      if (!local || e <= 0.5 * band) continue;
      const auto r = refine_max(i, err);
      if (r.second > band) {
        t_out = r.first;
        outside = true;
        break;
      }
    }
    if (!outside) m.settling_time_s = 0.0;
    else if (t_out >= pts.back().t) m.settling_time_s.reset();
    else {
      // The point at t_out lies in the segment of the last dense point at or before it; the next
      // dense point is inside the band.
      size_t i = 0;
      while (i + 1 < pts.size() && pts[i + 1].t <= t_out) ++i;
      const Pt& p = pts[i];
      const double base = p.k * T + segs[static_cast<size_t>(p.seg)].start;
      double a = t_out - base, b = pts[i + 1].t - base;
      for (int it = 0; it < 50 && b - a > 1e-12 * T; ++it) {
        const double mid = 0.5 * (a + b);
        (err(exact(p.k, p.seg, mid)) > band ? a : b) = mid;
      }
      m.settling_time_s = base + b;
    }
  }
}

int roots_at_one(const Roots& r) {
  int n = 0;
  for (const Complex& z : r) n += std::abs(z - 1.0) <= 1e-12;
  return n;
}

SteadyState discrete_steady_state(const Zpk& cd, const Plant& plant, double T, TestSignal signal) {
  // The discrete error constant lim (z - 1)^n / T^n Cd(z) Gd(z): the ZOH keeps the plant's
  // lim s^m G(s) exactly (step invariance), the compensator's part is read off its roots.
  SteadyState ss;
  const int nc = roots_at_one(cd.poles) - roots_at_one(cd.zeros);
  const int ng = zpk_integrators(plant.tf);
  ss.loop_type = nc + ng;
  Complex kc(cd.gain, 0.0);
  for (const Complex& z : cd.zeros)
    if (std::abs(z - 1.0) > 1e-12) kc *= 1.0 - z;
  for (const Complex& p : cd.poles)
    if (std::abs(p - 1.0) > 1e-12) kc /= 1.0 - p;
  const double K = kc.real() / std::pow(T, nc) * zpk_low_frequency_gain(plant.tf);
  const int need = static_cast<int>(signal);
  if (ss.loop_type > need) {
    ss.error_constant = INFINITY;
    ss.error = 0.0;
  } else if (ss.loop_type == need) {
    ss.error_constant = K;
    const double e = need == 0 ? 1.0 / (1.0 + K) : 1.0 / K;
    if (std::isfinite(e)) ss.error = std::abs(e);
  } else {
    ss.error_constant = 0.0;
  }
  return ss;
}

}  // namespace

DiscretePoles discrete_closed_loop_poles(const Zpk& cd, const SampledPlant& sp, double k, double share) {
  const DLoop cl = sampled_closed_loop(cd, sp, k);
  DiscretePoles out;
  out.well_posed = cl.well_posed;
  if (!cl.well_posed) return out;
  const EigenDecomposition ed = eigen_decompose(cl.A);
  out.stable = ed.ok && all_inside_unit_circle(ed.values);
  const auto [y_final, u_final] = out.stable ? final_values(cl) : std::make_pair(0.0, 0.0);
  out.poles = poles_with_shares(modal_expansion(cl, ed, y_final, u_final), sp.sample_time_s, share);
  return out;
}

namespace {

// Frequency response of the sampled loop on (0, pi / T]: frequency_grid placed by the plant's roots
// and the s-plane equivalents ln(z) / T of the compensator's roots, limited below Nyquist, plus a
// dense last decade; the upper end is the phase crossing at Nyquist where L(-1) < 0.
FrequencyMetrics sampled_frequency_metrics(const Zpk& cd, const Plant& plant, const SampledPlant& sp,
                                           const DiscreteLoopOptions& o, double nyquist_rad_s) {
  const double T = o.sample_time_s;
  Zpk placement = plant.tf;
  placement.gain = 1.0;
  for (const Complex& z : cd.zeros)
    if (std::abs(z) > 0.0 && std::abs(z + 1.0) > 1e-9) placement.zeros.push_back(std::log(z) / T);
  for (const Complex& p : cd.poles)
    if (std::abs(p) > 0.0) placement.poles.push_back(std::log(p) / T);
  const double top = nyquist_rad_s * (1.0 - 1e-9);
  auto Lw = [&](double w) { return sampled_loop_response(cd, sp, w); };
  ResponseLimits lim;
  lim.type = roots_at_one(cd.poles) - roots_at_one(cd.zeros) + zpk_integrators(plant.tf);
  if (lim.type == 0) lim.low_frequency_gain = (cd.evaluate(1.0) * sampled_plant_response(sp, 1.0)).real();
  const Complex Lnyq = cd.evaluate(-1.0) * sampled_plant_response(sp, -1.0);
  if (Lnyq.real() < 0.0 && std::abs(Lnyq) > 0.0) lim.upper_crossing = std::make_pair(nyquist_rad_s, 1.0 / std::abs(Lnyq));
  double lo = INFINITY;
  for (const Roots* set : {&placement.zeros, &placement.poles})
    for (const Complex& r : *set)
      if (std::abs(r) > 0.0) lo = std::min(lo, std::abs(r));
  lo = std::min(std::isfinite(lo) ? lo / 100.0 : top / 1000.0, top / 1000.0);
  for (int i = 0; i < 6 && lim.type > 0 && std::abs(Lw(lo)) < 1.0; ++i) lo /= 10.0;
  FrequencyOptions fo = o.frequency;
  fo.w_min = lo;
  fo.w_max = top;
  std::vector<double> grid;
  for (double w : frequency_grid(placement, plant.delay_s + o.compute_delay * T, fo))
    if (w > 0.0 && w <= top) grid.push_back(w);
  const int dense = 4 * fo.points_per_decade;
  const double ratio = std::pow(10.0, 1.0 / dense);  // one pow, then products
  double w = top / 10.0;
  for (int i = 0; i < dense; ++i, w *= ratio) grid.push_back(w);
  grid.push_back(top);
  std::sort(grid.begin(), grid.end());
  grid.erase(std::unique(grid.begin(), grid.end()), grid.end());
  while (!grid.empty() && grid.back() > top) grid.pop_back();
  return frequency_metrics_of(Lw, grid, lim, fo);
}

}  // namespace

namespace {

// sample_plant of the last plant this thread sampled: a search evaluates thousands of compensators
// on the same plant, and the exponentials and decompositions depend on the plant alone. Exact
// comparison of what sample_plant reads, so the result is the same with or without the cache.
const SampledPlant& sample_plant_cached(const Plant& plant, double T, int compute_delay) {
  struct Entry {
    bool set = false;
    Zpk tf;
    double delay_s = 0.0, T = 0.0;
    int compute_delay = 0;
    SampledPlant sp;
  };
  thread_local Entry e;
  const bool same = e.set && e.T == T && e.compute_delay == compute_delay && e.delay_s == plant.delay_s &&
                    e.tf.gain == plant.tf.gain && e.tf.zeros == plant.tf.zeros && e.tf.poles == plant.tf.poles;
  if (!same) {
    e.set = false;
    e.sp = sample_plant(plant, T, compute_delay);  // may throw: the entry stays unset
    e.tf = plant.tf;
    e.delay_s = plant.delay_s;
    e.T = T;
    e.compute_delay = compute_delay;
    e.set = true;
  }
  return e.sp;
}

}  // namespace

DiscreteLoopAnalysis analyze_discrete_loop(const Zpk& cd, const Plant& plant, const DiscreteLoopOptions& o) {
  std::string err;
  if (!o.IsValid(&err)) throw std::invalid_argument(err);
  const double T = o.sample_time_s;
  DiscreteLoopAnalysis a;
  a.nyquist_rad_s = M_PI / T;
  const SampledPlant sp = sample_plant_cached(plant, T, o.compute_delay);
  const DLoop cl = sampled_closed_loop(cd, sp, 1.0);
  a.states = cl.states();
  a.well_posed = cl.well_posed;
  if (!a.well_posed) return a;

  // Closed-loop poles; stable iff every |z| < 1 (an unconverged eigen-solve counts as unstable).
  const EigenDecomposition ed = eigen_decompose(cl.A);
  a.stable = ed.ok && all_inside_unit_circle(ed.values);
  const auto [y_final, u_final] = a.stable ? final_values(cl) : std::make_pair(0.0, 0.0);
  const Modal modal = modal_expansion(cl, ed, y_final, u_final);
  a.poles = poles_with_shares(modal, T, o.residue_share);
  for (const DiscretePole& p : a.poles)
    if (p.matters) {
      a.dominant = p;
      break;
    }
  if (!a.stable && o.stop_if_unstable) return a;

  if (o.frequency_response) a.frequency = sampled_frequency_metrics(cd, plant, sp, o, a.nyquist_rad_s);
  a.steady_state = discrete_steady_state(cd, plant, T, o.error_signal);

  const bool modal_step = o.modal_step && !o.between_samples;
  if (a.stable && (!o.step_gate || o.step_gate(a)))
    a.step = sampled_step(cl, y_final, u_final, a.poles, modal_step ? &modal : nullptr, T, o, a.step_truncated);
  if (a.step && o.between_samples) {
    a.step_at_samples = a.step;
    a.step_at_samples->trace = StepTrace{};
    const StateSpace g = realize(plant.tf);
    const int nc = cl.states() - plant_system(sp).states();
    between_samples(cl, nc, g, sp, y_final, o, *a.step);
  }
  return a;
}

}  // namespace pw
