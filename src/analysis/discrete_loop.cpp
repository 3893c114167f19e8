#include "polewright/analysis/discrete_loop.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

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

Complex sampled_plant_response(const SampledPlant& p, Complex z) {
  const int nx = p.core.states();
  Complex v(0.0, 0.0);
  const Complex zi = 1.0 / z;
  if (nx > 0) {
    CMat M = -p.core.A.cast<Complex>();
    for (int i = 0; i < nx; ++i) M(i, i) += z;
    CVec b = p.core.B.cast<Complex>();
    if (p.gamma1.size() > 0) b += zi * p.gamma1.cast<Complex>();
    const CVec x = M.partialPivLu().solve(b);
    v = p.core.C.cast<Complex>() * x;
  }
  v += p.core.D * (p.fraction > 0.0 ? zi : Complex(1.0, 0.0));
  return v * std::pow(zi, p.delay_samples);
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

// Poles with their shares of the sampled step response y[k] = y_f + sum c_i z_i^k, where
// c_i = -(Cy v_i)(w_i B) / (1 - z_i) (v_i, w_i right and left eigenvectors). When y[0] = Dy does
// not hold for the expansion (a nearly defective basis) every pole counts as one that matters.
std::vector<DiscretePole> poles_with_shares(const DLoop& cl, double y_final, double T, double threshold) {
  const EigenDecomposition ed = eigen_decompose(cl.A);
  const int n = static_cast<int>(ed.values.size());
  bool reliable = ed.ok;
  CVec c = CVec::Zero(n);
  double total = 0.0;
  if (reliable && n > 0) {
    Eigen::PartialPivLU<CMat> lu(ed.vectors);
    const CVec wb = lu.solve(cl.B.cast<Complex>());
    const CVec cv = (cl.Cy.cast<Complex>() * ed.vectors).transpose();
    Complex sum(0.0, 0.0);
    for (int i = 0; i < n; ++i) {
      c(i) = -cv(i) * wb(i) / (1.0 - ed.values(i));
      sum += c(i);
      total += std::abs(c(i));
    }
    const double err = std::abs(y_final + sum - cl.Dy);
    reliable = std::isfinite(total) && err <= 1e-6 * std::max({total, std::abs(y_final), 1e-300});
  }
  std::vector<DiscretePole> out;
  for (int i = 0; i < n; ++i) {
    DiscretePole p = make_pole(ed.values(i), T);
    if (reliable) p.residue = std::abs(c(i));
    if (reliable && total > 0.0) {
      p.share = std::abs(c(i)) / total;
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

// The sampled unit-step response and its figures at the sample instants (rise and settling
// interpolated linearly between samples, as the continuous figures are between their samples).
StepMetrics sampled_step(const DLoop& cl, double y_final, const std::vector<DiscretePole>& poles, double T,
                         const DiscreteLoopOptions& o, bool& truncated) {
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
  StepMetrics m;
  m.samples = n;
  m.horizon_s = (n - 1) * T;
  m.final_value = y_final;
  std::vector<double> y(static_cast<size_t>(n)), u(static_cast<size_t>(n));
  // The delayed samples make A mostly a shift: a sparse copy keeps long dead times cheap.
  Eigen::VectorXd x = Eigen::VectorXd::Zero(cl.states());
  const Eigen::SparseMatrix<double> A = cl.A.sparseView();
  for (int k = 0; k < n; ++k) {
    y[static_cast<size_t>(k)] = cl.Cy.dot(x) + cl.Dy;
    u[static_cast<size_t>(k)] = cl.Cu.dot(x) + cl.Du;
    x = A * x + cl.B;
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
  const CVec ev = eigenvalues_balanced(cl.A);
  out.stable = true;
  for (int i = 0; i < ev.size(); ++i) out.stable = out.stable && std::abs(ev(i)) < 1.0;
  double y_final = 0.0;
  const int n = cl.states();
  if (out.stable && n > 0) {
    const Eigen::MatrixXd I = Eigen::MatrixXd::Identity(n, n);
    const Eigen::VectorXd xf = (I - cl.A).partialPivLu().solve(cl.B);
    y_final = cl.Cy.dot(xf) + cl.Dy;
  }
  out.poles = poles_with_shares(cl, y_final, sp.sample_time_s, share);
  return out;
}

DiscreteLoopAnalysis analyze_discrete_loop(const Zpk& cd, const Plant& plant, const DiscreteLoopOptions& o) {
  std::string err;
  if (!o.IsValid(&err)) throw std::invalid_argument(err);
  const double T = o.sample_time_s;
  DiscreteLoopAnalysis a;
  a.nyquist_rad_s = M_PI / T;
  const SampledPlant sp = sample_plant(plant, T, o.compute_delay);
  const DLoop cl = sampled_closed_loop(cd, sp, 1.0);
  a.states = cl.states();
  a.well_posed = cl.well_posed;
  if (!a.well_posed) return a;

  // Closed-loop poles; stable iff every |z| < 1.
  const int n = cl.states();
  double y_final = NAN;
  {
    const CVec ev = eigenvalues_balanced(cl.A);
    a.stable = true;
    for (int i = 0; i < ev.size(); ++i) a.stable = a.stable && std::abs(ev(i)) < 1.0;
    if (a.stable && n == 0) y_final = cl.Dy;
    if (a.stable && n > 0) {
      const Eigen::MatrixXd I = Eigen::MatrixXd::Identity(n, n);
      const Eigen::VectorXd xf = (I - cl.A).partialPivLu().solve(cl.B);
      y_final = cl.Cy.dot(xf) + cl.Dy;
    }
  }
  a.poles = poles_with_shares(cl, a.stable ? y_final : 0.0, T, o.residue_share);
  for (const DiscretePole& p : a.poles)
    if (p.matters) {
      a.dominant = p;
      break;
    }
  if (a.stable) a.step = sampled_step(cl, y_final, a.poles, T, o, a.step_truncated);

  // Frequency response on (0, pi / T): frequency_grid placed by the plant's roots and the
  // s-plane equivalents ln(z) / T of the compensator's roots, limited below Nyquist, plus a dense
  // last decade; the upper end is the phase crossing at Nyquist where L(-1) < 0.
  Zpk placement = plant.tf;
  placement.gain = 1.0;
  for (const Complex& z : cd.zeros)
    if (std::abs(z) > 0.0 && std::abs(z + 1.0) > 1e-9) placement.zeros.push_back(std::log(z) / T);
  for (const Complex& p : cd.poles)
    if (std::abs(p) > 0.0) placement.poles.push_back(std::log(p) / T);
  const double top = a.nyquist_rad_s * (1.0 - 1e-9);
  auto Lw = [&](double w) { return sampled_loop_response(cd, sp, w); };
  ResponseLimits lim;
  lim.type = roots_at_one(cd.poles) - roots_at_one(cd.zeros) + zpk_integrators(plant.tf);
  if (lim.type == 0) lim.low_frequency_gain = (cd.evaluate(1.0) * sampled_plant_response(sp, 1.0)).real();
  const Complex Lnyq = cd.evaluate(-1.0) * sampled_plant_response(sp, -1.0);
  if (Lnyq.real() < 0.0 && std::abs(Lnyq) > 0.0) lim.upper_crossing = std::make_pair(a.nyquist_rad_s, 1.0 / std::abs(Lnyq));
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
  for (int i = 0; i <= dense; ++i) grid.push_back(top * std::pow(10.0, -1.0 + static_cast<double>(i) / dense));
  grid.push_back(top);
  std::sort(grid.begin(), grid.end());
  grid.erase(std::unique(grid.begin(), grid.end()), grid.end());
  while (!grid.empty() && grid.back() > top) grid.pop_back();
  a.frequency = frequency_metrics_of(Lw, grid, lim, fo);
  a.steady_state = discrete_steady_state(cd, plant, T, o.error_signal);
  return a;
}

}  // namespace pw
