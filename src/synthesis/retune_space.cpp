#include "polewright/synthesis/retune_space.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

namespace pw {

namespace {

constexpr double kZetaMax = 0.999;  // a pair stays a pair
constexpr double kRatioMax = kStageRatioMax;  // added first-order stage: p / z up to this

bool at_origin(Complex r, double scale) { return std::abs(r) <= 1e-12 * scale; }
bool is_real(Complex r) { return std::abs(r.imag()) <= 1e-12 * std::abs(r); }

void push(RetuneSpace& rs, const std::string& name, double value, double lo, double hi) {
  rs.names.push_back(name);
  rs.current.push_back(value);
  rs.lower.push_back(std::min(lo, value));
  rs.upper.push_back(std::max(hi, value));
}

// The magnitude of one added stage at s = jw.
Zpk added_stage_zpk(AddedStage kind, const double* p) {
  Zpk z;
  if (kind == AddedStage::FirstOrder) {
    const double c = std::pow(10.0, p[0]), r = std::sqrt(std::pow(10.0, p[1]));
    const double zero = c / r, pole = c * r;
    z.zeros = {Complex(-zero, 0.0)};
    z.poles = {Complex(-pole, 0.0)};
    z.gain = pole / zero;  // unity gain at DC
  } else if (kind == AddedStage::Notch) {
    const double wn = std::pow(10.0, p[0]), depth = std::pow(10.0, p[1]), width = std::pow(10.0, p[2]);
    auto pair = [&](double zeta) {
      const double im = wn * std::sqrt(std::max(0.0, 1.0 - zeta * zeta));
      return Roots{Complex(-zeta * wn, im), Complex(-zeta * wn, -im)};
    };
    z.zeros = pair(depth * width);
    z.poles = pair(width);
    z.gain = 1.0;  // unity gain at DC and far above the centre
  } else {
    const double wi = std::pow(10.0, p[0]);
    z.zeros = {Complex(-wi, 0.0)};
    z.poles = {Complex(0.0, 0.0)};
    z.gain = 1.0;  // (s + wi) / s: unity gain far above wi
  }
  return z;
}

int added_dim(AddedStage s) { return added_stage_parameters(s); }

double stage_rms_decades(const Zpk& stage, std::pair<double, double> range) {
  const int n = 60;
  double sum = 0.0;
  for (int i = 0; i < n; ++i) {
    const double w = range.first * std::pow(range.second / range.first, (i + 0.5) / n);
    const double m = std::log10(std::abs(stage.evaluate(Complex(0.0, w))));
    sum += std::isfinite(m) ? m * m : 1e6;
  }
  return std::sqrt(sum / n);
}

}  // namespace

const char* added_stage_name(AddedStage s) {
  switch (s) {
    case AddedStage::FirstOrder: return "lead/lag";
    case AddedStage::Notch: return "notch";
    case AddedStage::Integrator: return "integrator";
  }
  return "?";
}

StageKind added_stage_kind(AddedStage s) {
  switch (s) {
    case AddedStage::FirstOrder: return StageKind::Lead;
    case AddedStage::Notch: return StageKind::Notch;
    case AddedStage::Integrator: return StageKind::Integrator;
  }
  return StageKind::Lead;
}

int added_stage_parameters(AddedStage s) { return stage_facts(added_stage_kind(s)).parameters; }

int added_stage_order(AddedStage s) { return stage_facts(added_stage_kind(s)).order; }

double bode_gain(const Zpk& z) {
  const double scale = zpk_frequency_scale(z);
  Complex k(z.gain, 0.0);
  for (const Complex& r : z.zeros)
    if (!at_origin(r, scale)) k *= -r;
  for (const Complex& r : z.poles)
    if (!at_origin(r, scale)) k /= -r;
  return k.real();
}

RetuneSpace make_retune_space(const Zpk& current, std::pair<double, double> range, const std::vector<AddedStage>& added,
                              double corner_decades, double gain_decades, double corner_cap_rad_s) {
  const double cap = std::log10(corner_cap_rad_s);
  if (!(current.gain != 0.0) || !std::isfinite(current.gain))
    throw std::invalid_argument("the current compensator has a zero or non-finite gain");
  RetuneSpace rs;
  rs.range = range;
  const double scale = zpk_frequency_scale(current);
  const double K = bode_gain(current);
  rs.factors.push_back({FactorKind::Gain, Complex(), K < 0.0 ? -1.0 : 1.0, 0});
  push(rs, "gain", std::log10(std::abs(K)), std::log10(std::abs(K)) - gain_decades,
       std::log10(std::abs(K)) + gain_decades);
  auto add_roots = [&](const Roots& roots, bool zeros) {
    int index = 0;
    for (const Complex& r : roots) {
      const std::string what = std::string(zeros ? "zero " : "pole ") + std::to_string(++index);
      if (at_origin(r, scale)) {
        rs.factors.push_back({zeros ? FactorKind::OriginZero : FactorKind::OriginPole, Complex(), 1.0, -1});
      } else if (is_real(r)) {
        rs.factors.push_back({zeros ? FactorKind::RealZero : FactorKind::RealPole, Complex(r.real(), 0.0),
                              r.real() < 0.0 ? 1.0 : -1.0, rs.dim()});
        const double c = std::log10(std::abs(r.real()));
        push(rs, what + " corner", c, c - corner_decades, std::min(c + corner_decades, cap));
      } else if (r.imag() > 0.0) {
        const double wn = std::abs(r), zeta = -r.real() / wn;
        rs.factors.push_back({zeros ? FactorKind::ZeroPair : FactorKind::PolePair, r, zeta < 0.0 ? -1.0 : 1.0, rs.dim()});
        const double c = std::log10(wn);
        push(rs, what + " natural frequency", c, c - corner_decades, std::min(c + corner_decades, cap));
        const double lz = std::log10(std::max(std::abs(zeta), 1e-6));
        push(rs, what + " damping", lz, lz - 1.0, std::min(std::log10(kZetaMax), lz + 1.0));
      }
    }
  };
  add_roots(current.zeros, true);
  add_roots(current.poles, false);
  rs.base_dim = rs.dim();
  const double llo = std::log10(range.first), lhi = std::log10(range.second), mid = 0.5 * (llo + lhi);
  for (AddedStage s : added) {
    rs.added.push_back(s);
    const std::string tag = std::string("added ") + added_stage_name(s);
    if (s == AddedStage::FirstOrder) {
      push(rs, tag + " centre", mid, llo, lhi);
      push(rs, tag + " ratio", 0.0, -std::log10(kRatioMax), std::log10(kRatioMax));
    } else if (s == AddedStage::Notch) {
      push(rs, tag + " centre", mid, llo, lhi);
      push(rs, tag + " depth", 0.0, std::log10(kNotchDepthMin), 0.0);
      push(rs, tag + " width", std::log10(0.3), std::log10(kNotchWidthMin), 0.0);
    } else {
      push(rs, tag + " corner", llo, llo, lhi);
    }
  }
  return rs;
}

Zpk retune_to_zpk(const RetuneSpace& rs, const std::vector<double>& xin) {
  std::vector<double> x(xin);
  for (size_t i = 0; i < x.size(); ++i) x[i] = std::clamp(x[i], rs.lower[i], rs.upper[i]);
  Zpk z;
  double K = 1.0;
  for (const Factor& f : rs.factors) {
    const bool zero = f.kind == FactorKind::RealZero || f.kind == FactorKind::ZeroPair || f.kind == FactorKind::OriginZero;
    Roots& out = zero ? z.zeros : z.poles;
    switch (f.kind) {
      case FactorKind::Gain: K = f.sign * std::pow(10.0, x[0]); break;
      case FactorKind::OriginZero:
      case FactorKind::OriginPole: out.push_back(Complex(0.0, 0.0)); break;
      case FactorKind::RealZero:
      case FactorKind::RealPole: out.push_back(Complex(-f.sign * std::pow(10.0, x[f.first_param]), 0.0)); break;
      case FactorKind::ZeroPair:
      case FactorKind::PolePair: {
        const double wn = std::pow(10.0, x[f.first_param]);
        const double zeta = f.sign * std::pow(10.0, x[f.first_param + 1]);
        const double im = wn * std::sqrt(std::max(0.0, 1.0 - zeta * zeta));
        out.push_back(Complex(-zeta * wn, im));
        out.push_back(Complex(-zeta * wn, -im));
        break;
      }
    }
  }
  // zpk gain from the Bode-form gain: k = K prod(-p) / prod(-z) over the non-zero roots.
  z.gain = 1.0;
  z.gain = K / bode_gain(z);
  int p = rs.base_dim;
  for (AddedStage s : rs.added) {
    z = zpk_series(z, added_stage_zpk(s, &x[static_cast<size_t>(p)]));
    p += added_dim(s);
  }
  return z;
}

bool retune_params_of(RetuneSpace& rs, const Zpk& z, std::vector<double>* out) {
  if (!rs.added.empty() || rs.factors.empty()) return false;
  const double scale = zpk_frequency_scale(z);
  // The roots of each kind, by magnitude (pairs: the upper root).
  std::vector<Complex> roots[6];  // RealZero, RealPole, ZeroPair, PolePair, OriginZero, OriginPole
  auto kind_index = [](FactorKind k) {
    switch (k) {
      case FactorKind::RealZero: return 0;
      case FactorKind::RealPole: return 1;
      case FactorKind::ZeroPair: return 2;
      case FactorKind::PolePair: return 3;
      case FactorKind::OriginZero: return 4;
      case FactorKind::OriginPole: return 5;
      default: return -1;
    }
  };
  for (int zeros = 1; zeros >= 0; --zeros)
    for (const Complex& r : zeros ? z.zeros : z.poles) {
      if (at_origin(r, scale)) roots[zeros ? 4 : 5].push_back(r);
      else if (is_real(r)) roots[zeros ? 0 : 1].push_back(Complex(r.real(), 0.0));
      else if (r.imag() > 0.0) roots[zeros ? 2 : 3].push_back(r);
    }
  for (auto& v : roots) std::stable_sort(v.begin(), v.end(), [](Complex a, Complex b) { return std::abs(a) < std::abs(b); });
  std::vector<Complex> wanted[6];
  for (const Factor& f : rs.factors) {
    const int k = kind_index(f.kind);
    if (k >= 0) wanted[k].push_back(f.root);
  }
  for (int k = 0; k < 6; ++k)
    if (wanted[k].size() != roots[k].size()) return false;
  std::vector<double> x(rs.current);
  const double K = bode_gain(z);
  if (!(K != 0.0) || !std::isfinite(K) || (K < 0.0) != (rs.factors[0].sign < 0.0)) return false;
  x[0] = std::log10(std::abs(K));
  size_t used[6] = {0, 0, 0, 0, 0, 0};
  std::vector<std::pair<size_t, Complex>> order[6];  // factor index by magnitude of its current root
  for (size_t i = 0; i < rs.factors.size(); ++i) {
    const int k = kind_index(rs.factors[i].kind);
    if (k >= 0) order[k].push_back({i, rs.factors[i].root});
  }
  for (auto& v : order)
    std::stable_sort(v.begin(), v.end(), [](const std::pair<size_t, Complex>& a, const std::pair<size_t, Complex>& b) {
      return std::abs(a.second) < std::abs(b.second);
    });
  for (int k = 0; k < 4; ++k)
    for (const auto& fi : order[k]) {
      const Factor& f = rs.factors[fi.first];
      const Complex r = roots[k][used[k]++];
      if (k < 2) {
        if ((r.real() < 0.0 ? 1.0 : -1.0) != f.sign) return false;
        x[static_cast<size_t>(f.first_param)] = std::log10(std::abs(r.real()));
      } else {
        const double wn = std::abs(r), zeta = -r.real() / wn;
        if ((zeta < 0.0 ? -1.0 : 1.0) != f.sign || std::abs(zeta) >= 1.0) return false;
        x[static_cast<size_t>(f.first_param)] = std::log10(wn);
        x[static_cast<size_t>(f.first_param) + 1] = std::log10(std::max(std::abs(zeta), 1e-6));
      }
    }
  for (size_t i = 0; i < x.size(); ++i) {
    rs.lower[i] = std::min(rs.lower[i], x[i]);
    rs.upper[i] = std::max(rs.upper[i], x[i]);
  }
  *out = x;
  return true;
}

double change_distance(const RetuneSpace& rs, const std::vector<double>& x) {
  double sum = 0.0;
  for (int i = 0; i < rs.base_dim; ++i) {
    const double d = std::clamp(x[i], rs.lower[i], rs.upper[i]) - rs.current[i];
    sum += d * d;
  }
  int p = rs.base_dim;
  for (AddedStage s : rs.added) {
    std::vector<double> q(x.begin() + p, x.begin() + p + added_dim(s));
    for (size_t i = 0; i < q.size(); ++i) q[i] = std::clamp(q[i], rs.lower[p + i], rs.upper[p + i]);
    const double r = stage_rms_decades(added_stage_zpk(s, q.data()), rs.range);
    sum += r * r;
    p += added_dim(s);
  }
  return std::sqrt(sum);
}

double response_distance(const Zpk& a, const Zpk& b, std::pair<double, double> range, int points) {
  double sum = 0.0;
  for (int i = 0; i < points; ++i) {
    const double w = range.first * std::pow(range.second / range.first, (i + 0.5) / points);
    const Complex r = a.evaluate(Complex(0.0, w)) / b.evaluate(Complex(0.0, w));
    const double lm = std::log(std::abs(r)), ph = std::arg(r);  // arg is in (-pi, pi]
    sum += std::isfinite(lm) ? lm * lm + ph * ph : 1e6;
  }
  return std::sqrt(sum / points) / std::log(10.0);
}

}  // namespace pw
