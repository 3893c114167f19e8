#include "polewright/analysis/step.hpp"

#include <algorithm>
#include <cmath>
#include <functional>
#include <string>


#include "polewright/model/eigen.hpp"

namespace pw {

bool StepOptions::IsValid(std::string* error) const {
  auto fail = [&](const char* msg) {
    if (error) *error = msg;
    return false;
  };
  if (!(horizon_s >= 0.0) || !std::isfinite(horizon_s)) return fail("horizon_s must be >= 0 and finite");
  if (samples < 100 || samples > max_samples) return fail("samples must be within 100..max_samples");
  if (!(band > 0.0 && band < 1.0)) return fail("band must be within (0, 1)");
  return true;
}

namespace {

// z_{k+1} = E z_k with z = [x; 1]: exact for a constant input between samples.
Mat augmented_map(const ClosedLoop& L, double tau) { return zoh_exponential(L.A, L.B, tau); }

RowVec output_row(const RowVec& C, double D) {
  RowVec r(C.size() + 1);
  r.head(C.size()) = C;
  r(C.size()) = D;
  return r;
}

struct Simulation {
  double dt = 0.0;
  std::vector<double> y, u;
};

// Runs N samples; captures z at the requested indices (sorted ascending).
void simulate(const ClosedLoop& L, const Mat& E, int N, Simulation& sim, const std::vector<int>& capture,
              std::vector<Vec>& captured) {
  const int n = L.states();
  const RowVec cy = output_row(L.Cy, L.Dy);
  const RowVec cu = output_row(L.Cu, L.Du);
  Vec z = Vec::Zero(n + 1);
  z(n) = 1.0;
  Vec next(n + 1);
  sim.y.resize(static_cast<size_t>(N));
  sim.u.resize(static_cast<size_t>(N));
  captured.assign(capture.size(), Vec());
  size_t ci = 0;
  for (int k = 0; k < N; ++k) {
    sim.y[static_cast<size_t>(k)] = cy.dot(z);
    sim.u[static_cast<size_t>(k)] = cu.dot(z);
    while (ci < capture.size() && capture[ci] == k) captured[ci++] = z;
    next.noalias() = E * z;
    z.swap(next);
  }
}

// Samples of y and u from the modal expansion: per step one complex multiply per conjugate pair,
// exact at the sample times like the zero-order-hold map (the input is constant).
struct ModeSet {
  static constexpr int kMax = kMaxAug;
  int count = 0;
  double zr[kMax], zi[kMax], yr[kMax], yi[kMax], ur[kMax], ui[kMax];
};

// The sample loop with the mode count known at compile time, two modes per SSE2 register, so the
// mode states stay in registers. P is the number of mode pairs (modes padded to an even count).
typedef double v2d __attribute__((vector_size(16)));

template <int P>
void run_modes(const ModeSet& ms, double yf, double uf, int N, double* __restrict y, double* __restrict u) {
  v2d pr[P], pi[P], zr[P], zi[P], yr[P], yi[P], ur[P], ui[P];
  for (int j = 0; j < P; ++j) {
    const int a = 2 * j, b = 2 * j + 1;
    const bool hb = b < ms.count;
    pr[j] = v2d{1.0, hb ? 1.0 : 0.0};
    pi[j] = v2d{0.0, 0.0};
    zr[j] = v2d{ms.zr[a], hb ? ms.zr[b] : 0.0};
    zi[j] = v2d{ms.zi[a], hb ? ms.zi[b] : 0.0};
    yr[j] = v2d{ms.yr[a], hb ? ms.yr[b] : 0.0};
    yi[j] = v2d{ms.yi[a], hb ? ms.yi[b] : 0.0};
    ur[j] = v2d{ms.ur[a], hb ? ms.ur[b] : 0.0};
    ui[j] = v2d{ms.ui[a], hb ? ms.ui[b] : 0.0};
  }
  for (int k = 0; k < N; ++k) {
    v2d yy = {0.0, 0.0}, uu = {0.0, 0.0};
#pragma GCC unroll 16
    for (int j = 0; j < P; ++j) {
      yy += yr[j] * pr[j] - yi[j] * pi[j];
      uu += ur[j] * pr[j] - ui[j] * pi[j];
      const v2d r = pr[j] * zr[j] - pi[j] * zi[j];
      pi[j] = pr[j] * zi[j] + pi[j] * zr[j];
      pr[j] = r;
    }
    y[k] = yf + (yy[0] + yy[1]);
    u[k] = uf + (uu[0] + uu[1]);
  }
}

void run_modes_any(const ModeSet& ms, double yf, double uf, int N, double* __restrict y, double* __restrict u) {
  std::vector<double> pr(static_cast<size_t>(ms.count), 1.0), pi(static_cast<size_t>(ms.count), 0.0);
  for (int k = 0; k < N; ++k) {
    double yy = yf, uu = uf;
    for (int j = 0; j < ms.count; ++j) {
      yy += ms.yr[j] * pr[j] - ms.yi[j] * pi[j];
      uu += ms.ur[j] * pr[j] - ms.ui[j] * pi[j];
      const double r = pr[j] * ms.zr[j] - pi[j] * ms.zi[j];
      pi[j] = pr[j] * ms.zi[j] + pi[j] * ms.zr[j];
      pr[j] = r;
    }
    y[k] = yy;
    u[k] = uu;
  }
}

void simulate_modal(const ModalStep& m, double dt, int N, Simulation& sim) {
  ModeSet ms;
  int up = 0, down = 0;
  for (int i = 0; i < m.lambda.size(); ++i) {
    up += m.lambda(i).imag() > 0.0;
    down += m.lambda(i).imag() < 0.0;
  }
  const bool paired = up == down;
  for (int i = 0; i < m.lambda.size(); ++i) {
    const Complex lam = m.lambda(i);
    if (paired && lam.imag() < 0.0) continue;
    const double f = (paired && lam.imag() > 0.0) ? 2.0 : 1.0;
    const Complex z = std::exp(lam * dt);
    const int j = ms.count++;
    ms.zr[j] = z.real();
    ms.zi[j] = z.imag();
    ms.yr[j] = f * m.cy(i).real();
    ms.yi[j] = f * m.cy(i).imag();
    ms.ur[j] = f * m.cu(i).real();
    ms.ui[j] = f * m.cu(i).imag();
  }
  sim.y.resize(static_cast<size_t>(N));
  sim.u.resize(static_cast<size_t>(N));
  double* y = sim.y.data();
  double* u = sim.u.data();
  switch (ms.count) {
    case 1: case 2: run_modes<1>(ms, m.y_final, m.u_final, N, y, u); break;
    case 3: case 4: run_modes<2>(ms, m.y_final, m.u_final, N, y, u); break;
    case 5: case 6: run_modes<3>(ms, m.y_final, m.u_final, N, y, u); break;
    case 7: case 8: run_modes<4>(ms, m.y_final, m.u_final, N, y, u); break;
    case 9: case 10: run_modes<5>(ms, m.y_final, m.u_final, N, y, u); break;
    case 11: case 12: run_modes<6>(ms, m.y_final, m.u_final, N, y, u); break;
    default: run_modes_any(ms, m.y_final, m.u_final, N, y, u); break;
  }
}

// Finds tau in [0, dt] with out(E(tau) z0) = level, given a sign change over the interval.
double exact_crossing(const ClosedLoop& L, const Vec& z0, const RowVec& out, double dt, double level) {
  double a = 0.0, b = dt;
  double fa = out.dot(z0) - level;
  for (int it = 0; it < 48 && (b - a) > 1e-14 * dt; ++it) {
    const double m = 0.5 * (a + b);
    const double fm = out.dot(augmented_map(L, m) * z0) - level;
    if ((fm > 0.0) == (fa > 0.0)) {
      a = m;
      fa = fm;
    } else {
      b = m;
    }
  }
  return 0.5 * (a + b);
}

// Largest sign * out(E(tau) z0) over tau in [0, span]: the zero of the exact time derivative
// (out A x + out B) when it changes sign over the bracket, else golden-section search.
std::pair<double, double> exact_peak(const ClosedLoop& L, const Vec& z0, const RowVec& out, double span,
                                     double sign) {
  const int n = L.states();
  auto f = [&](double t) { return sign * out.dot(augmented_map(L, t) * z0); };
  RowVec deriv(n + 1);
  deriv.head(n) = out.head(n) * L.A;
  deriv(n) = out.head(n).dot(L.B);
  const double d0 = sign * deriv.dot(z0), d1 = sign * deriv.dot(augmented_map(L, span) * z0);
  if (d0 > 0.0 && d1 < 0.0) {
    const double t = exact_crossing(L, z0, deriv, span, 0.0);
    return {t, f(t)};
  }
  const double g = 0.5 * (std::sqrt(5.0) - 1.0);
  double a = 0.0, b = span;
  double c = b - g * (b - a), d = a + g * (b - a);
  double fc = f(c), fd = f(d);
  for (int it = 0; it < 60 && (b - a) > 1e-13 * span; ++it) {
    if (fc > fd) {
      b = d; d = c; fd = fc;
      c = b - g * (b - a); fc = f(c);
    } else {
      a = c; c = d; fc = fd;
      d = a + g * (b - a); fd = f(d);
    }
  }
  const double t = 0.5 * (a + b);
  return {t, f(t)};
}

double linear_crossing(double y0, double y1, double level) {
  const double d = y1 - y0;
  return d != 0.0 ? std::clamp((level - y0) / d, 0.0, 1.0) : 0.0;
}

// Vertex of the parabola through three equally spaced samples: offset in samples and value.
std::pair<double, double> parabola_peak(double ym, double y0, double yp) {
  const double den = ym - 2.0 * y0 + yp;
  if (den >= 0.0) return {0.0, y0};
  const double off = std::clamp(0.5 * (ym - yp) / den, -1.0, 1.0);
  return {off, y0 - 0.25 * (ym - yp) * off};
}

int adaptive_count(const PoleAnalysis& poles, double horizon, const StepOptions& opt, double final_value) {
  if (!opt.adaptive_samples) return opt.samples;
  double h = horizon / (opt.samples - 1);
  // Every pole whose residue could push y out of the settling band counts here, dipoles included:
  // a lightly damped mode with a small share can still poke out of the band between samples.
  const double visible = 0.05 * opt.band * std::abs(final_value);
  for (const PoleInfo& p : poles.poles) {
    if (!p.matters && p.residue < visible) continue;
    if (std::abs(p.pole.imag()) > 0.0) h = std::min(h, 2.0 * M_PI / std::abs(p.pole.imag()) / 20.0);
    if (p.pole.real() < 0.0) h = std::min(h, 1.0 / -p.pole.real() / 5.0);
  }
  const double n = std::ceil(horizon / h) + 1.0;
  return static_cast<int>(std::clamp(n, static_cast<double>(opt.samples), static_cast<double>(opt.max_samples)));
}

}  // namespace

double choose_step_horizon(const PoleAnalysis& poles, double final_value, double band, double min_horizon_s) {
  double slow_all = INFINITY, slow_matter = INFINITY, total = 0.0;
  for (const PoleInfo& p : poles.poles) {
    const double decay = -p.pole.real();
    if (decay <= 0.0) continue;
    slow_all = std::min(slow_all, decay);
    if (p.matters) slow_matter = std::min(slow_matter, decay);
    total += p.residue;
  }
  if (!std::isfinite(slow_all)) return std::max(1.0, 1.5 * min_horizon_s);
  if (!std::isfinite(slow_matter)) slow_matter = slow_all;
  double t = 10.0 / slow_matter;
  if (poles.residues_reliable) {
    const double target = 0.1 * band * std::max(std::abs(final_value), 1e-3 * total);
    auto envelope = [&](double tt) {
      double e = 0.0;
      for (const PoleInfo& p : poles.poles) e += p.residue * std::exp(p.pole.real() * tt);
      return e;
    };
    double hi = 60.0 / slow_all;
    if (envelope(hi) <= target) {
      double lo = 0.0;
      for (int it = 0; it < 60; ++it) {
        const double m = 0.5 * (lo + hi);
        (envelope(m) > target ? lo : hi) = m;
      }
      t = std::max(t, hi);
    } else {
      t = std::max(t, hi);
    }
  } else {
    t = std::max(t, 20.0 / slow_all);
  }
  return std::max(t, 1.5 * min_horizon_s);
}

StepMetrics step_response(const ClosedLoop& L, const PoleAnalysis& poles, const StepOptions& opt,
                          double min_horizon_s) {
  StepMetrics m;
  // Screening without exact refinement uses the modal expansion when it passed its checks.
  const bool modal = !opt.exact_refinement && poles.residues_reliable;
  const double yf = modal ? poles.modal.y_final : closed_loop_dc_gain(L);
  m.final_value = yf;
  m.horizon_s = opt.horizon_s > 0.0 ? opt.horizon_s : choose_step_horizon(poles, yf, opt.band, min_horizon_s);
  const int N = adaptive_count(poles, m.horizon_s, opt, yf);
  m.samples = N;
  const double dt = m.horizon_s / (N - 1);
  const Mat E = modal ? Mat() : augmented_map(L, dt);

  // Sample buffers reused across calls on the same thread (no allocation on the hot path).
  thread_local Simulation sim;
  std::vector<Vec> none;
  if (modal) simulate_modal(poles.modal, dt, N, sim);
  else simulate(L, E, N, sim, {}, none);
  const std::vector<double>& y = sim.y;
  const std::vector<double>& u = sim.u;

  const double sgn = yf >= 0.0 ? 1.0 : -1.0;
  const double F = std::abs(yf);
  const double band = opt.band * F;
  const size_t Ns = y.size();

  // Sample-level events.
  size_t kpeak = 0, kumax = 0;
  double undershoot = 0.0;
  for (size_t k = 0; k < Ns; ++k) {
    if (sgn * y[k] > sgn * y[kpeak]) kpeak = k;
    if (std::abs(u[k]) > std::abs(u[kumax])) kumax = k;
    undershoot = std::max(undershoot, -sgn * y[k]);
  }
  auto first_reach = [&](double frac) -> long {
    for (size_t k = 0; k < Ns; ++k)
      if (sgn * y[k] >= frac * F) return static_cast<long>(k);
    return -1;
  };
  const long k10 = first_reach(0.1), k90 = first_reach(0.9);
  long klast = -1;  // last sample outside the band
  for (size_t k = Ns; k-- > 0;)
    if (std::abs(y[k] - yf) > band) {
      klast = static_cast<long>(k);
      break;
    }

  // Between two samples a signal can rise above its sampled local maximum by at most about a
  // quarter of the larger neighbouring step (a parabola through the peak); modes too small to
  // get samples of their own (see adaptive_count) can add up to twice their amplitude. Every
  // local maximum that comes within that margin of a threshold is refined exactly.
  double unresolved = 0.0;
  {
    const double visible = 0.05 * opt.band * F;
    for (const PoleInfo& p : poles.poles)
      if (!p.matters && p.residue < visible) unresolved += p.residue;
  }
  // A sample at least as high as both neighbours and higher than one of them: inside a run of
  // equal samples (a tail that has decayed to its final value in floating point) only the run's
  // first and last samples count, not each of the thousands between them.
  auto local_max = [](const std::vector<double>& v, size_t k, double s) {
    return s * v[k] >= s * v[k - 1] && s * v[k] >= s * v[k + 1] && (s * v[k] > s * v[k - 1] || s * v[k] > s * v[k + 1]);
  };
  auto reach = [&](const std::vector<double>& v, size_t k) {
    return std::max(std::abs(v[k] - v[k - 1]), std::abs(v[k + 1] - v[k])) + 2.0 * unresolved;
  };
  // Interior local maxima of s * v within reach of `level`, sample index ascending.
  auto near_peaks = [&](const std::vector<double>& v, double s, double level, size_t from, std::vector<size_t>& out) {
    out.clear();
    for (size_t k = std::max<size_t>(from, 1); k + 1 < v.size(); ++k)
      if (local_max(v, k, s) && s * v[k] + reach(v, k) >= level) out.push_back(k);
  };
  // Settling candidates: local maxima of |y - y_f| after the last sample outside the band.
  std::vector<size_t> settle_cand;
  if (F > 0.0 && klast >= 0) {
    for (size_t k = static_cast<size_t>(klast) + 1; k + 1 < Ns; ++k) {
      const double e = y[k] - yf, s = e >= 0.0 ? 1.0 : -1.0;
      if (k >= 1 && local_max(y, k, s) && std::abs(e) + reach(y, k) >= band) settle_cand.push_back(k);
    }
  }
  std::vector<size_t> peak_cand, u_cand_pos, u_cand_neg;
  if (kpeak > 0 && kpeak + 1 < Ns) near_peaks(y, sgn, sgn * y[kpeak], 1, peak_cand);
  const double umax_s = std::abs(u[kumax]);
  near_peaks(u, 1.0, umax_s, 1, u_cand_pos);
  near_peaks(u, -1.0, umax_s, 1, u_cand_neg);

  const RowVec cy = output_row(L.Cy, L.Dy);
  const RowVec cu = output_row(L.Cu, L.Du);

  // Capture states for exact refinement: at the sample before each window.
  std::vector<int> want;
  if (opt.exact_refinement) {
    for (const auto* c : {&peak_cand, &u_cand_pos, &u_cand_neg, &settle_cand})
      for (size_t k : *c) want.push_back(static_cast<int>(k) - 1);
    if (k10 > 0) want.push_back(static_cast<int>(k10) - 1);
    if (k90 > 0) want.push_back(static_cast<int>(k90) - 1);
    if (klast >= 0 && klast + 1 < static_cast<long>(Ns)) want.push_back(static_cast<int>(klast));
    std::sort(want.begin(), want.end());
    want.erase(std::unique(want.begin(), want.end()), want.end());
  }
  std::vector<Vec> states;
  if (!want.empty()) {
    Simulation again;
    simulate(L, E, *std::max_element(want.begin(), want.end()) + 1, again, want, states);
  }
  auto state_at = [&](long k) -> const Vec& {
    const size_t i = static_cast<size_t>(std::lower_bound(want.begin(), want.end(), static_cast<int>(k)) - want.begin());
    return states[i];
  };

  // Exact values between samples on the screening path: the modal expansion at any time.
  const ModalStep& ms = poles.modal;
  auto modal_value = [&](bool of_y, double t, int deriv) {
    const CVec& c = of_y ? ms.cy : ms.cu;
    Complex acc(0.0, 0.0);
    for (int i = 0; i < ms.lambda.size(); ++i) {
      Complex term = c(i) * std::exp(ms.lambda(i) * t);
      if (deriv) term *= ms.lambda(i);
      acc += term;
    }
    return (deriv ? 0.0 : (of_y ? ms.y_final : ms.u_final)) + acc.real();
  };
  // Root of f on [a, b] (a sign change) by Illinois false position, at most 60 steps.
  auto modal_root = [&](const std::function<double(double)>& f, double a, double b) {
    double fa = f(a), fb = f(b);
    if (fa == 0.0) return a;
    if ((fa > 0.0) == (fb > 0.0)) return (std::abs(fa) < std::abs(fb)) ? a : b;
    int side = 0;
    for (int it = 0; it < 60 && (b - a) > 1e-13 * std::max(dt, b); ++it) {
      double c = (a * fb - b * fa) / (fb - fa);
      if (!(c > a && c < b)) c = 0.5 * (a + b);
      const double fc = f(c);
      if (fc == 0.0) return c;
      if ((fc > 0.0) == (fa > 0.0)) {
        a = c; fa = fc;
        if (side == -1) fb *= 0.5;
        side = -1;
      } else {
        b = c; fb = fc;
        if (side == 1) fa *= 0.5;
        side = 1;
      }
    }
    return 0.5 * (a + b);
  };
  // Largest s * out over the window [t_{k-1}, t_{k+1}] around sample k: (time, s * value).
  auto window_peak = [&](bool of_y, size_t k, double s) -> std::pair<double, double> {
    const std::vector<double>& v = of_y ? y : u;
    const double t0 = dt * (static_cast<double>(k) - 1.0);
    if (opt.exact_refinement) {
      const auto pk = exact_peak(L, state_at(static_cast<long>(k) - 1), of_y ? cy : cu, 2.0 * dt, s);
      if (pk.second >= s * v[k]) return {t0 + pk.first, pk.second};
      return {dt * static_cast<double>(k), s * v[k]};
    }
    if (modal) {
      auto d = [&](double t) { return s * modal_value(of_y, t, 1); };
      double best_t = dt * static_cast<double>(k), best = s * v[k];
      for (int half = 0; half < 2; ++half) {
        const double a = t0 + half * dt, b = a + dt;
        if (d(a) > 0.0 && d(b) < 0.0) {
          const double t = modal_root(d, a, b), val = s * modal_value(of_y, t, 0);
          if (val > best) { best = val; best_t = t; }
        }
      }
      return {best_t, best};
    }
    const auto pk = parabola_peak(s * v[k - 1], s * v[k], s * v[k + 1]);
    return {dt * (static_cast<double>(k) + pk.first), std::max(pk.second, s * v[k])};
  };

  // Peak of y and overshoot: the largest refined local maximum.
  double peak_val = sgn * y[kpeak], peak_t = dt * static_cast<double>(kpeak);
  const bool interior_peak = !peak_cand.empty();
  for (size_t k : peak_cand) {
    const auto pk = window_peak(true, k, sgn);
    if (pk.second > peak_val || (k == kpeak && pk.second >= peak_val)) {
      peak_val = pk.second;
      peak_t = pk.first;
    }
  }
  if (F > 0.0) {
    const double os = 100.0 * (peak_val - F) / F;
    m.overshoot_pct = std::max(0.0, os);
    if (os > 0.0 && interior_peak) m.peak_time_s = peak_t;
    m.undershoot_pct = 100.0 * undershoot / F;
  }

  // Rise time.
  auto crossing_time = [&](long k, double frac) -> double {
    if (k <= 0) return 0.0;
    const double level = sgn * frac * F;
    if (opt.exact_refinement) return dt * (k - 1) + exact_crossing(L, state_at(k - 1), cy, dt, level);
    return dt * (static_cast<double>(k - 1) +
                 linear_crossing(y[static_cast<size_t>(k - 1)], y[static_cast<size_t>(k)], level));
  };
  if (F > 0.0 && k10 >= 0 && k90 >= 0) m.rise_time_s = crossing_time(k90, 0.9) - crossing_time(k10, 0.1);

  // Settling time: the last exit from the band. First the latest excursion between samples (a
  // refined local maximum of |y - y_f| above the band after the last sample outside it), then
  // the exit after the last sample outside the band.
  if (F > 0.0) {
    bool found = false;
    for (size_t i = settle_cand.size(); i-- > 0 && !found;) {
      const size_t k = settle_cand[i];
      const double s = y[k] >= yf ? 1.0 : -1.0;
      const auto pk = window_peak(true, k, s);
      if (!(pk.second - s * yf > band)) continue;
      found = true;
      const double level = yf + s * band, t_end = dt * static_cast<double>(k + 1);
      const double t_pk = pk.first;
      if (opt.exact_refinement) {
        const double t0 = dt * (static_cast<double>(k) - 1.0);
        const Vec zp = augmented_map(L, t_pk - t0) * state_at(static_cast<long>(k) - 1);
        m.settling_time_s = t_pk + exact_crossing(L, zp, cy, t_end - t_pk, level);
      } else if (modal) {
        m.settling_time_s = modal_root([&](double t) { return modal_value(true, t, 0) - level; }, t_pk, t_end);
      } else {
        // The parabola through the three samples, from its vertex to the band.
        const double ym = s * y[k - 1] - s * yf, y0 = s * y[k] - s * yf, yp = s * y[k + 1] - s * yf;
        const double a = 0.5 * (ym - 2.0 * y0 + yp), b = 0.5 * (yp - ym);
        double x = 1.0;
        if (a < 0.0) {
          const double disc = b * b - 4.0 * a * (y0 - band);
          if (disc >= 0.0) x = std::clamp((-b - std::sqrt(disc)) / (2.0 * a), -1.0, 1.0);
        }
        m.settling_time_s = std::max(t_pk, dt * (static_cast<double>(k) + x));
      }
    }
    if (found) {
    } else if (klast < 0) {
      m.settling_time_s = 0.0;
    } else if (klast + 1 < static_cast<long>(Ns)) {
      const size_t k = static_cast<size_t>(klast);
      const double level = yf + (y[k] > yf ? band : -band);
      const double t0 = dt * static_cast<double>(k);
      if (opt.exact_refinement) {
        m.settling_time_s = t0 + exact_crossing(L, state_at(klast), cy, dt, level);
      } else if (modal) {
        // Near a peak the curve bends within one interval: the modal expansion gives the exit.
        m.settling_time_s = modal_root([&](double t) { return modal_value(true, t, 0) - level; }, t0, t0 + dt);
      } else {
        m.settling_time_s = t0 + dt * linear_crossing(y[k], y[k + 1], level);
      }
    }
  }

  // Peak effort: the largest refined local maximum of |u|.
  double umax = umax_s;
  for (size_t k : u_cand_pos) umax = std::max(umax, window_peak(false, k, 1.0).second);
  for (size_t k : u_cand_neg) umax = std::max(umax, window_peak(false, k, -1.0).second);
  m.peak_effort = umax;

  if (opt.keep_trace) {
    m.trace.dt = dt;
    m.trace.y = y;
    m.trace.u = u;
  }
  return m;
}

}  // namespace pw
