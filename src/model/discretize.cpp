#include "polewright/model/discretize.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

#include <Eigen/Eigenvalues>

#include "polewright/model/eigen.hpp"

namespace pw {

const char* discrete_method_name(DiscreteMethod m) {
  switch (m) {
    case DiscreteMethod::Tustin: return "tustin";
    case DiscreteMethod::Prewarp: return "prewarp";
    case DiscreteMethod::Zoh: return "zoh";
    case DiscreteMethod::Matched: return "matched";
  }
  return "?";
}

std::optional<DiscreteMethod> parse_discrete_method(const std::string& name) {
  for (DiscreteMethod m : {DiscreteMethod::Tustin, DiscreteMethod::Prewarp, DiscreteMethod::Zoh, DiscreteMethod::Matched})
    if (name == discrete_method_name(m)) return m;
  return std::nullopt;
}

bool DiscretizeOptions::IsValid(std::string* error) const {
  auto fail = [&](const char* msg) {
    if (error) *error = msg;
    return false;
  };
  if (!(sample_time_s > 0.0) || !std::isfinite(sample_time_s)) return fail("sample_time_s must be > 0 and finite");
  if (method == DiscreteMethod::Prewarp) {
    if (!(prewarp_rad_s > 0.0) || !std::isfinite(prewarp_rad_s)) return fail("prewarp_rad_s must be > 0 and finite");
    if (!(prewarp_rad_s * sample_time_s < M_PI)) return fail("prewarp_rad_s must be below the Nyquist frequency pi / T");
  }
  return true;
}

Complex tustin_root(Complex a, double c) { return (c + a) / (c - a); }

double prewarp_constant(double w0, double sample_time_s) { return w0 / std::tan(0.5 * w0 * sample_time_s); }

std::optional<double> notch_centre_of(const Zpk& c, const Complex& pole) {
  if (pole.imag() == 0.0) return std::nullopt;
  const double wp = std::abs(pole);
  for (const Complex& z : c.zeros)
    if (z.imag() != 0.0 && std::abs(std::abs(z) - wp) <= 0.01 * wp) return wp;
  return std::nullopt;
}

namespace {

// Tustin (c = 2 / T) or prewarped Tustin. Each factor (s - a) becomes (c_a - a)(z - z_a)/(z + 1);
// the (z + 1) of every pole factor not matched by a zero factor is a zero at z = -1.
Zpk tustin(const Zpk& c, const DiscretizeOptions& o) {
  const double T = o.sample_time_s;
  const double global = o.method == DiscreteMethod::Prewarp ? prewarp_constant(o.prewarp_rad_s, T) : 2.0 / T;
  // Warp constant of each root: a notch's zeros and poles at the notch centre.
  auto constant_for = [&](const Complex& r, bool is_pole) -> double {
    if (o.method != DiscreteMethod::Prewarp || !o.warp_notches_at_centre || r.imag() == 0.0) return global;
    std::optional<double> centre;
    if (is_pole) {
      centre = notch_centre_of(c, r);
    } else {
      const double wz = std::abs(r);
      for (const Complex& p : c.poles)
        if (p.imag() != 0.0 && std::abs(std::abs(p) - wz) <= 0.01 * std::abs(p)) {
          centre = std::abs(p);
          break;
        }
    }
    if (!centre) return global;
    if (!(*centre * T < M_PI))
      throw std::invalid_argument("a notch centre (" + std::to_string(*centre) +
                                  " rad/s) is at or above the Nyquist frequency pi / T");
    return prewarp_constant(*centre, T);
  };
  Zpk d;
  Complex k(c.gain, 0.0);
  auto map = [&](const Roots& in, Roots& out, bool is_pole) {
    for (const Complex& a : in) {
      const double ca = constant_for(a, is_pole);
      const Complex f = ca - a;
      if (std::abs(f) <= 1e-12 * std::max(ca, std::abs(a)))
        throw std::invalid_argument("a root at s = " + std::to_string(a.real()) +
                                    " maps to z = infinity under the Tustin map at this sample time");
      out.push_back(tustin_root(a, ca));
      k = is_pole ? k / f : k * f;
    }
  };
  map(c.zeros, d.zeros, false);
  map(c.poles, d.poles, true);
  for (int i = 0; i < c.relative_degree(); ++i) d.zeros.push_back(Complex(-1.0, 0.0));
  d.gain = k.real();
  d.zeros = make_conjugate_symmetric(d.zeros);
  d.poles = make_conjugate_symmetric(d.poles);
  return d;
}

// s^-n-scaled low-frequency gain: prod over roots not at `at` of (at - r) terms.
double low_gain(const Zpk& z, Complex at, double tol) {
  Complex g(z.gain, 0.0);
  for (const Complex& r : z.zeros)
    if (std::abs(r - at) > tol) g *= at - r;
  for (const Complex& r : z.poles)
    if (std::abs(r - at) > tol) g /= at - r;
  return g.real();
}

int roots_at(const Roots& rs, Complex at, double tol) {
  int n = 0;
  for (const Complex& r : rs) n += std::abs(r - at) <= tol;
  return n;
}

Zpk matched(const Zpk& c, double T) {
  Zpk d;
  for (const Complex& z : c.zeros) d.zeros.push_back(std::exp(z * T));
  for (const Complex& p : c.poles) d.poles.push_back(std::exp(p * T));
  for (int i = 0; i < c.relative_degree(); ++i) d.zeros.push_back(Complex(-1.0, 0.0));
  d.zeros = make_conjugate_symmetric(d.zeros);
  d.poles = make_conjugate_symmetric(d.poles);
  // Roots at s = 0 map exactly to z = 1 (exp(0) = 1), so the same count sits at z = 1.
  const double scale = zpk_frequency_scale(c);
  const int n = roots_at(c.poles, 0.0, 1e-12 * scale) - roots_at(c.zeros, 0.0, 1e-12 * scale);
  const double want = low_gain(c, 0.0, 1e-12 * scale) * std::pow(T, n);
  d.gain = 1.0;
  const double have = low_gain(d, 1.0, 1e-12);
  if (!(std::abs(have) > 0.0) || !std::isfinite(have))
    throw std::invalid_argument("the matched map cannot set the gain: a zero maps onto z = 1");
  d.gain = want / have;
  return d;
}

// A point on the unit circle far from every root (to fix a gain by evaluation).
Complex far_point(const Zpk& d) {
  Complex best(1.0, 0.0);
  double best_dist = -1.0;
  for (double a : {0.0, M_PI, 1.0, 2.0, 0.5, 2.6}) {
    const Complex z = std::polar(1.0, a);
    double dist = INFINITY;
    for (const Roots* set : {&d.zeros, &d.poles})
      for (const Complex& r : *set) dist = std::min(dist, std::abs(z - r));
    if (dist > best_dist) {
      best_dist = dist;
      best = z;
    }
  }
  return best;
}

Zpk zoh(const Zpk& c, double T) {
  const StateSpace sd = zoh_state_space(realize(c), T);
  Zpk d;
  for (const Complex& p : c.poles) d.poles.push_back(std::exp(p * T));
  d.poles = make_conjugate_symmetric(d.poles);
  d.zeros = make_conjugate_symmetric(state_space_zeros(sd));
  d.gain = 1.0;
  const Complex z0 = far_point(d);
  const Complex want = ss_evaluate(sd, z0);
  d.gain = (want / d.evaluate(z0)).real();
  return d;
}

}  // namespace

StateSpace zoh_state_space(const StateSpace& sys, double T) {
  const int n = sys.states();
  StateSpace d = sys;
  if (n == 0) return d;
  const Mat E = zoh_exponential(sys.A, sys.B, T);
  d.A = E.topLeftCorner(n, n);
  d.B = E.topRightCorner(n, 1);
  return d;
}

Roots state_space_zeros(const StateSpace& sys) {
  const int n = sys.states();
  Roots out;
  if (n == 0) return out;
  const double scale = std::max({sys.A.cwiseAbs().maxCoeff(), sys.B.cwiseAbs().maxCoeff(), sys.C.cwiseAbs().maxCoeff(), 1e-300});
  if (std::abs(sys.D) > 1e-9 * scale) {
    // Biproper: the zeros are the eigenvalues of A - B C / D.
    const Eigen::MatrixXd Z = sys.A - sys.B * sys.C / sys.D;
    Eigen::EigenSolver<Eigen::MatrixXd> es(Z, false);
    for (int i = 0; i < n; ++i) out.push_back(es.eigenvalues()(i));
    return out;
  }
  Eigen::MatrixXd P = Eigen::MatrixXd::Zero(n + 1, n + 1), Q = Eigen::MatrixXd::Zero(n + 1, n + 1);
  P.topLeftCorner(n, n) = sys.A;
  P.topRightCorner(n, 1) = sys.B;
  P.bottomLeftCorner(1, n) = sys.C;
  P(n, n) = sys.D;
  Q.topLeftCorner(n, n).setIdentity();
  Eigen::GeneralizedEigenSolver<Eigen::MatrixXd> ges(P, Q, false);
  const auto& al = ges.alphas();
  const auto& be = ges.betas();
  for (int i = 0; i < n + 1; ++i) {
    if (std::abs(be(i)) <= 1e-9 * std::abs(al(i))) continue;  // infinite
    out.push_back(al(i) / be(i));
  }
  return out;
}

Zpk discretize(const Zpk& c, const DiscretizeOptions& o) {
  std::string err;
  if (!o.IsValid(&err)) throw std::invalid_argument(err);
  if (!c.is_proper()) throw std::invalid_argument("the compensator must be proper");
  switch (o.method) {
    case DiscreteMethod::Tustin:
    case DiscreteMethod::Prewarp: return tustin(c, o);
    case DiscreteMethod::Zoh: return zoh(c, o.sample_time_s);
    case DiscreteMethod::Matched: return matched(c, o.sample_time_s);
  }
  throw std::invalid_argument("unknown method");
}

Complex discrete_response(const Zpk& d, double w, double T) { return d.evaluate(std::polar(1.0, w * T)); }

}  // namespace pw
