#include "polewright/synthesis/seeds.hpp"

#include <algorithm>
#include <cmath>

#include "polewright/analysis/steady_state.hpp"

namespace pw {

namespace {

constexpr int kPrimes[] = {2, 3, 5, 7, 11, 13, 17, 19, 23, 29, 31, 37, 41, 43, 47, 53, 59, 61, 67, 71, 73, 79, 83, 89};

double clamp_to(const ParamSpace& ps, size_t i, double v) { return std::clamp(v, ps.lower[i], ps.upper[i]); }

// Angle (rad) of the compensator shape without gain at s: used to apply the angle condition.
double wrap_pi(double a) {
  while (a > M_PI) a -= 2 * M_PI;
  while (a <= -M_PI) a += 2 * M_PI;
  return a;
}

}  // namespace

Complex target_pole(const Region& region, const Plant& plant, std::pair<double, double> range) {
  const double zeta = std::min(0.95, std::max(region.min_damping, 0.45) * 1.05 + 0.02);
  double wn = region.min_frequency * 1.05;
  if (region.min_decay > 0.0) wn = std::max(wn, 1.05 * region.min_decay / zeta);
  if (wn <= 0.0) {
    // Open region: the plant's own scale (geometric mean of its non-zero roots or integrator corner).
    wn = zpk_frequency_scale(plant.tf);
    if (plant.delay_s > 0.0) wn = std::min(wn, 0.5 / plant.delay_s);
  }
  if (region.max_frequency > 0.0) wn = std::min(wn, 0.9 * region.max_frequency);
  wn = std::clamp(wn, range.first * 1.5, range.second / 1.5);
  return Complex(-zeta * wn, wn * std::sqrt(1.0 - zeta * zeta));
}

std::vector<double> halton_point(long long index, int dim, const std::vector<double>& shift) {
  std::vector<double> u(static_cast<size_t>(dim));
  for (int d = 0; d < dim; ++d) {
    const int b = kPrimes[d % 24];
    double f = 1.0, r = 0.0;
    for (long long i = index + 1; i > 0; i /= b) {
      f /= b;
      r += f * static_cast<double>(i % b);
    }
    const double s = d < static_cast<int>(shift.size()) ? shift[static_cast<size_t>(d)] : 0.0;
    u[static_cast<size_t>(d)] = std::fmod(r + s, 1.0);
  }
  return u;
}

std::vector<double> from_unit(const ParamSpace& ps, const std::vector<double>& u) {
  std::vector<double> x(u.size());
  for (size_t i = 0; i < u.size(); ++i) x[i] = ps.lower[i] + u[i] * (ps.upper[i] - ps.lower[i]);
  return x;
}

std::optional<double> crossover_target(const RequirementSet& req) {
  auto target = [](std::optional<double> lo, std::optional<double> hi) -> std::optional<double> {
    if (lo && hi) return std::sqrt(*lo * *hi);
    if (lo) return 1.5 * *lo;
    if (hi) return 0.6 * *hi;
    return std::nullopt;
  };
  if (auto w = target(req.limit(MetricId::Crossover, Sense::AtLeast), req.limit(MetricId::Crossover, Sense::AtMost))) return w;
  // A closed-loop bandwidth is about 1.4 times the crossover of a well-damped loop (common practice).
  if (auto w = target(req.limit(MetricId::Bandwidth, Sense::AtLeast), req.limit(MetricId::Bandwidth, Sense::AtMost)))
    return *w / 1.4;
  return std::nullopt;
}

std::vector<Seed> published_seeds(const ParamSpace& ps, const Plant& nominal, const Region& region,
                                  const RequirementSet& req) {
  // A region without a speed bound leaves the target pole to the plant's scale; a crossover or
  // bandwidth requirement says more, so the target sits at that frequency instead.
  Region guided = region;
  if (region.min_frequency <= 0.0 && region.min_decay <= 0.0)
    if (auto w = crossover_target(req)) guided.min_frequency = *w / 1.05;
  const Complex s = target_pole(guided, nominal, {ps.freq_lo, ps.freq_hi});
  const double wn = std::abs(s);
  std::vector<Seed> out;
  for (int variant = 0; variant < 2; ++variant) {  // 0: zero below s*, 1: bisector rule
    std::vector<double> x(static_cast<size_t>(ps.dim()), 0.0);
    size_t i = 1;
    std::vector<size_t> lead_idx, lag_idx;
    std::vector<Complex> light;  // lightly damped plant pole pairs, least damped first
    for (const Complex& p : nominal.tf.poles)
      if (p.imag() > 0.0 && damping_of(p) < 0.2) light.push_back(p);
    std::sort(light.begin(), light.end(), [](Complex a, Complex b) { return damping_of(a) < damping_of(b); });
    size_t notch_used = 0;
    for (StageKind k : ps.stages) {
      switch (k) {
        case StageKind::Integrator:
          x[i] = clamp_to(ps, i, std::log10(wn / 10.0));  // PI zero a decade below crossover
          i += 1;
          break;
        case StageKind::Lead: lead_idx.push_back(i); i += 2; break;
        case StageKind::Lag: lag_idx.push_back(i); i += 2; break;
        case StageKind::Notch: {
          double centre = 3.0 * wn, depth = 0.1, width = 0.7;
          if (notch_used < light.size()) {
            centre = std::abs(light[notch_used]);
            depth = std::max(damping_of(light[notch_used]), 1e-3) / width;
          }
          ++notch_used;
          x[i] = clamp_to(ps, i, std::log10(centre));
          x[i + 1] = clamp_to(ps, i + 1, std::log10(depth));
          x[i + 2] = clamp_to(ps, i + 2, std::log10(width));
          i += 3;
          break;
        }
      }
    }
    // The placed stages (integrator, notches) alone, unit gain with the feedback sign: the same
    // structure without leads and lags, its parameters copied over.
    Structure fixed = ps.structure;
    fixed.lead = fixed.lag = 0;
    const ParamSpace pf = make_param_space(fixed, {ps.freq_lo, ps.freq_hi}, ps.lower[0], ps.upper[0], ps.gain_sign, ps.limits);
    std::vector<double> xf = {0.0};
    {
      size_t j = 1;
      for (StageKind k : ps.stages) {
        const size_t w = static_cast<size_t>(stage_facts(k).parameters);
        if (k == StageKind::Integrator || k == StageKind::Notch)
          for (size_t q = 0; q < w; ++q) xf.push_back(x[j + q]);
        j += w;
      }
    }
    const Complex val = zpk_series(params_to_zpk(pf, xf), nominal.tf).evaluate(s);
    // Angle condition: arg(C G (s*)) = -180 deg; the leads must add the deficit.
    const double need = wrap_pi(-M_PI - std::arg(val));
    if (!lead_idx.empty()) {
      // Each lead's placeholder is nearly angle-neutral; the deficit (0, 65 deg) per lead is shared.
      double per = need / static_cast<double>(lead_idx.size());
      if (!(per > 0.0)) per = 30.0 * M_PI / 180.0;
      per = std::min(per, 65.0 * M_PI / 180.0);
      double z, p;
      if (variant == 0) {
        z = -s.real();  // zero directly below s*
        const double thz = std::arg(s + z);
        const double thp = thz - per;
        p = thp > 0.01 ? -s.real() + s.imag() / std::tan(thp) : 20.0 * z;
      } else {
        // Bisector rule: the bisector of the angle between the horizontal and the line to the origin.
        const double th = std::arg(s);           // angle of s* from the origin
        const double half = 0.5 * (M_PI - th);   // bisector direction below s*
        const double az = half + per / 2.0, ap = half - per / 2.0;
        z = -s.real() + s.imag() / std::tan(std::max(az, 0.05));
        p = -s.real() + s.imag() / std::tan(std::max(ap, 0.02));
        z = std::max(z, 1e-6);
      }
      const double ratio = std::clamp(p / z, ps.limits.ratio_min, ps.limits.ratio_max);
      for (size_t li : lead_idx) {
        x[li] = clamp_to(ps, li, std::log10(ratio));
        x[li + 1] = lead_t(ps, z, std::pow(10.0, x[li]));
      }
    }
    // Lags: ratio from the required error constant, zero a decade below crossover.
    for (size_t gi : lag_idx) {
      double ratio = 3.0;
      if (auto e = req.limit(MetricId::SteadyStateError, Sense::AtMost)) {
        std::vector<double> xg = x;
        xg[gi] = ps.lower[gi];
        xg[0] = 0.0;
        Zpk c = params_to_zpk(ps, xg);
        const Complex v = zpk_series(c, nominal.tf).evaluate(s);
        const double k = 1.0 / std::abs(v);
        Zpk scaled = c;
        scaled.gain *= k;
        const SteadyState ss = steady_state_error(zpk_series(scaled, nominal.tf), req.error_signal);
        if (ss.error && *e > 0.0) ratio = 1.3 * *ss.error / *e;
      }
      ratio = std::clamp(ratio, ps.limits.ratio_min, ps.limits.ratio_max);
      x[gi] = clamp_to(ps, gi, std::log10(ratio));
      const double zero = 0.1 * wn;
      x[gi + 1] = lag_t(ps, zero / ratio, ratio);
    }
    // Gain from the magnitude condition.
    x[0] = 0.0;
    const Zpk c1 = params_to_zpk(ps, x);
    const double mag = std::abs(zpk_series(c1, nominal.tf).evaluate(s));
    x[0] = clamp_to(ps, 0, mag > 0.0 ? -std::log10(mag) : 0.0);
    out.push_back({x, variant == 0 ? "root-locus construction, zero below the target pole"
                                   : "root-locus construction, bisector rule"});
    if (lead_idx.empty()) break;  // the two variants differ only in the lead placement
  }
  return out;
}

}  // namespace pw
