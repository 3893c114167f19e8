#include "polewright/synthesis/parameters.hpp"

#include <algorithm>
#include <cmath>

namespace pw {

ParamSpace make_param_space(const Structure& s, std::pair<double, double> range, double glo, double ghi,
                            double sign, const StageLimits& lim) {
  ParamSpace ps;
  ps.structure = s;
  ps.stages = s.stages();
  ps.freq_lo = range.first;
  ps.freq_hi = range.second;
  ps.gain_sign = sign;
  ps.limits = lim;
  const double llo = std::log10(range.first), lhi = std::log10(range.second);
  const double rmax = std::min(std::log10(lim.ratio_max), std::max(std::log10(lim.ratio_min) + 1e-3, lhi - llo));
  auto add = [&](const std::string& n, double lo, double hi) {
    ps.names.push_back(n);
    ps.lower.push_back(lo);
    ps.upper.push_back(hi);
  };
  add("log10_gain", glo, ghi);
  int idx = 0;
  for (StageKind k : ps.stages) {
    const std::string p = std::string(stage_name(k)) + std::to_string(++idx) + ".";
    switch (k) {
      case StageKind::Integrator: add(p + "log10_zero", llo, lhi); break;
      case StageKind::Lead:
      case StageKind::Lag:
        add(p + "log10_ratio", std::log10(lim.ratio_min), rmax);
        add(p + "position", 0.0, 1.0);
        break;
      case StageKind::Notch:
        add(p + "log10_centre", llo, lhi);
        add(p + "log10_depth", std::log10(lim.depth_min), std::log10(lim.depth_max));
        add(p + "log10_width", std::log10(lim.width_min), std::log10(lim.width_max));
        break;
    }
  }
  return ps;
}

double pid_shape_violation(const ParamSpace& ps, const Zpk& c) {
  // params_to_zpk lays the stages out in order: the integrator's zero and pole first, then the
  // lead's zero and pole.
  if (!ps.pid_shape || !ps.structure.integrator || ps.structure.lead < 1) return 0.0;
  if (c.zeros.size() < 2 || c.poles.size() < 2) return 0.0;
  const double wi = -c.zeros[0].real(), p = -c.poles[1].real();
  return wi > p && p > 0.0 ? std::log(wi / p) : 0.0;
}

double lead_t(const ParamSpace& ps, double zero, double ratio) {
  const double span = std::log(ps.freq_hi / (ps.freq_lo * ratio));
  return span > 0.0 ? std::clamp(std::log(zero / ps.freq_lo) / span, 0.0, 1.0) : 0.0;
}

double lag_t(const ParamSpace& ps, double pole, double ratio) { return lead_t(ps, pole, ratio); }

Zpk params_to_zpk(const ParamSpace& ps, const std::vector<double>& x_in) {
  std::vector<double> x(x_in);
  for (size_t i = 0; i < x.size(); ++i) x[i] = std::clamp(x[i], ps.lower[i], ps.upper[i]);
  Zpk c;
  c.gain = ps.gain_sign * std::pow(10.0, x[0]);
  size_t i = 1;
  for (StageKind k : ps.stages) {
    switch (k) {
      case StageKind::Integrator: {
        const double wi = std::pow(10.0, x[i++]);
        c.zeros.push_back(Complex(-wi, 0.0));
        c.poles.push_back(Complex(0.0, 0.0));
        break;
      }
      case StageKind::Lead:
      case StageKind::Lag: {
        const double ratio = std::pow(10.0, x[i]);
        const double t = x[i + 1];
        i += 2;
        const double low = std::max(ps.freq_lo, ps.freq_lo * std::pow(ps.freq_hi / (ps.freq_lo * ratio), t));
        const double high = std::min(ps.freq_hi, low * ratio);  // clamps rounding at the range's edge
        const bool lead = k == StageKind::Lead;
        const double z = lead ? low : high, p = lead ? high : low;
        c.zeros.push_back(Complex(-z, 0.0));
        c.poles.push_back(Complex(-p, 0.0));
        c.gain *= p / z;  // unit DC gain
        break;
      }
      case StageKind::Notch: {
        const double wn = std::pow(10.0, x[i]);
        const double zp = std::pow(10.0, x[i + 2]);
        const double zz = std::pow(10.0, x[i + 1]) * zp;
        i += 3;
        auto pair = [wn](double z) {
          if (z < 1.0) return std::make_pair(Complex(-z * wn, wn * std::sqrt(1.0 - z * z)), true);
          return std::make_pair(Complex(-z * wn, 0.0), false);
        };
        for (auto [zeta, set] : {std::make_pair(zz, &c.zeros), std::make_pair(zp, &c.poles)}) {
          const auto r = pair(zeta);
          if (r.second) {
            set->push_back(r.first);
            set->push_back(std::conj(r.first));
          } else {
            const double d = wn * std::sqrt(zeta * zeta - 1.0);
            set->push_back(Complex(-zeta * wn + d, 0.0));
            set->push_back(Complex(-zeta * wn - d, 0.0));
          }
        }
        break;
      }
    }
  }
  return c;
}

std::pair<double, double> default_frequency_range(const std::vector<Plant>& plants, const Region& region) {
  double lo = INFINITY, hi = 0.0;
  auto take = [&](double w) {
    if (w > 0.0 && std::isfinite(w)) {
      lo = std::min(lo, w);
      hi = std::max(hi, w);
    }
  };
  for (const Plant& p : plants) {
    for (const Roots* set : {&p.tf.zeros, &p.tf.poles})
      for (const Complex& r : *set) take(std::abs(r));
    if (p.delay_s > 0.0) take(1.0 / p.delay_s);
    // Integrators alone: |K / s^n| = 1 at w = |K|^(1/n).
    const int type = zpk_integrators(p.tf);
    if (type > 0) take(std::pow(std::abs(zpk_low_frequency_gain(p.tf)), 1.0 / type));
  }
  take(region.min_frequency);
  take(region.min_decay);
  take(region.max_frequency);
  if (!std::isfinite(lo)) lo = hi = 1.0;
  return {lo / 30.0, hi * 30.0};
}

double feedback_sign(const Plant& plant) {
  double s = zpk_low_frequency_gain(plant.tf) >= 0.0 ? 1.0 : -1.0;
  for (const Complex& p : plant.tf.poles)
    if (p.imag() == 0.0 && p.real() > 0.0) s = -s;
  return s;
}

}  // namespace pw
