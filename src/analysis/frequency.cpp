#include "polewright/analysis/frequency.hpp"

#include <algorithm>
#include <cmath>
#include <functional>
#include <stdexcept>
#include <string>

#include "polewright/model/eigen.hpp"

namespace pw {

bool FrequencyOptions::IsValid(std::string* error) const {
  auto fail = [&](const char* msg) {
    if (error) *error = msg;
    return false;
  };
  if (points_per_decade < 5 || points_per_decade > 10000) return fail("points_per_decade must be within 5..10000");
  if (w_min < 0.0 || w_max < 0.0) return fail("grid limits must be >= 0");
  if (w_min > 0.0 && w_max > 0.0 && !(w_min < w_max)) return fail("w_min must be below w_max");
  return true;
}

Complex loop_response(const Zpk& loop, double delay_s, double w) {
  const Complex s(0.0, w);
  Complex v = loop.evaluate(s);
  if (delay_s > 0.0) v *= std::polar(1.0, -w * delay_s);
  return v;
}

LoopResponse::LoopResponse(const Zpk& loop, double delay_s) : gain_(loop.gain), delay_(delay_s) {
  auto add = [](const Roots& roots, std::vector<Factor>& out) {
    int up = 0, down = 0;
    for (const Complex& r : roots) (r.imag() > 0.0 ? up : down) += r.imag() != 0.0;
    const bool paired = up == down;
    for (const Complex& r : roots) {
      if (paired && r.imag() > 0.0) out.push_back({std::norm(r), -2.0 * r.real(), true});
      else if (paired && r.imag() < 0.0) continue;
      else if (r.imag() == 0.0) out.push_back({-r.real(), 0.0, false});
      else out.push_back({std::nan(""), 0.0, false});  // unpaired complex root: not a real system
    }
  };
  add(loop.zeros, num_);
  add(loop.poles, den_);
}

Complex LoopResponse::operator()(double w) const {
  auto product = [w](const std::vector<Factor>& fs, int& exponent) {
    double re = 1.0, im = 0.0;
    exponent = 0;
    for (const Factor& f : fs) {
      const double fr = f.quadratic ? f.c0 - w * w : f.c0;
      const double fi = f.quadratic ? f.c1 * w : w;
      const double r = re * fr - im * fi;
      im = re * fi + im * fr;
      re = r;
      const double mag = std::abs(re) + std::abs(im);
      if (mag > 1e100 || (mag < 1e-100 && mag > 0.0)) {
        int e;
        std::frexp(mag, &e);
        re = std::ldexp(re, -e);
        im = std::ldexp(im, -e);
        exponent += e;
      }
    }
    return Complex(re, im);
  };
  int en, ed;
  const Complex n = product(num_, en), d = product(den_, ed);
  const double dd = d.real() * d.real() + d.imag() * d.imag();
  double re = (n.real() * d.real() + n.imag() * d.imag()) / dd;
  double im = (n.imag() * d.real() - n.real() * d.imag()) / dd;
  const double g = en == ed ? gain_ : std::ldexp(gain_, en - ed);
  re *= g;
  im *= g;
  if (delay_ > 0.0) {
    const double c = std::cos(w * delay_), s = std::sin(w * delay_);
    const double r = re * c + im * s;
    im = im * c - re * s;
    re = r;
  }
  return Complex(re, im);
}

double wrap_degrees(double deg) {
  double d = std::fmod(deg, 360.0);
  if (d <= -180.0) d += 360.0;
  if (d > 180.0) d -= 360.0;
  return d;
}

std::vector<double> frequency_grid(const Zpk& loop, double delay_s, const FrequencyOptions& opt) {
  double lo = INFINITY, hi = 0.0;
  for (const Roots* set : {&loop.zeros, &loop.poles})
    for (const Complex& r : *set) {
      const double m = std::abs(r);
      if (m > 0.0) {
        lo = std::min(lo, m);
        hi = std::max(hi, m);
      }
    }
  if (delay_s > 0.0) {
    lo = std::min(lo, 1.0 / delay_s);
    hi = std::max(hi, 1.0 / delay_s);
  }
  const int rel = loop.relative_degree();
  if (!std::isfinite(lo)) {
    const double g = std::abs(loop.gain);
    lo = hi = (rel > 0 && g > 0.0) ? std::pow(g, 1.0 / rel) : 1.0;
  }
  const double root_lo = lo, root_hi = hi;
  lo /= 100.0;
  hi *= 100.0;
  const int type = zpk_integrators(loop);
  const LoopResponse Lw(loop, delay_s);
  // Every gain crossing lies inside bounds from the loop's asymptotes (|e^(-jwT)| = 1):
  // above w >= 2 M (M the largest root magnitude) each factor |jw - r| is within [w/2, 3w/2], so
  // |L| <= |g| 1.5^m 2^n w^-rel, below 1 for w > (|g| 1.5^m 2^n)^(1/rel); below w <= m0/2 (m0
  // the smallest non-zero root) each non-zero factor is within [|r|/2, 3|r|/2] of |r|, so
  // |L| >= |K0| 0.5^mz (2/3)^np w^-type, above 1 for w < (|K0| 0.5^mz (2/3)^np)^(1/type). The
  // grid spans both bounds with a decade to spare, whatever the slowest or fastest root.
  if (rel > 0 && loop.gain != 0.0) {
    const double m = static_cast<double>(loop.zeros.size()), n = static_cast<double>(loop.poles.size());
    const double log_top = (std::log(std::abs(loop.gain)) + m * std::log(1.5) + n * std::log(2.0)) / rel;
    const double top = std::max(2.0 * root_hi, std::exp(std::min(log_top, 700.0)));
    if (std::isfinite(top)) hi = std::max(hi, 10.0 * top);
  }
  if (type > 0 && loop.gain != 0.0) {
    double log_k = std::log(std::abs(loop.gain));
    double mz = 0.0, np = 0.0;
    for (const Complex& z : loop.zeros)
      if (std::abs(z) > 0.0) { log_k += std::log(std::abs(z)); mz += 1.0; }
    for (const Complex& p : loop.poles)
      if (std::abs(p) > 0.0) { log_k -= std::log(std::abs(p)); np += 1.0; }
    const double log_bottom = (log_k + mz * std::log(0.5) + np * std::log(2.0 / 3.0)) / type;
    const double bottom = std::min(0.5 * root_lo, std::exp(std::max(log_bottom, -700.0)));
    if (bottom > 0.0 && std::isfinite(bottom)) lo = std::min(lo, 0.1 * bottom);
  }
  // Beyond the bounds (a loop with large cancellation), a few more decades while |L| says so.
  for (int i = 0; i < 6 && type > 0 && std::abs(Lw(lo)) < 1.0; ++i) lo /= 10.0;
  for (int i = 0; i < 6 && rel > 0 && std::abs(Lw(hi)) > 1.0; ++i) hi *= 10.0;
  if (opt.w_min > 0.0) lo = opt.w_min;
  if (opt.w_max > 0.0) hi = opt.w_max;

  std::vector<double> w;
  const double decades = std::log10(hi / lo);
  const int n = std::max(2, static_cast<int>(std::ceil(decades * opt.points_per_decade)) + 1);
  w.reserve(static_cast<size_t>(n) + 64);
  const double ratio = std::pow(10.0, decades / (n - 1));
  double x = lo;
  for (int i = 0; i + 1 < n; ++i, x *= ratio) w.push_back(x);
  w.push_back(hi);
  static const double offsets[] = {-3, -2, -1.5, -1, -0.6, -0.3, 0, 0.3, 0.6, 1, 1.5, 2, 3};
  for (const Roots* set : {&loop.zeros, &loop.poles})
    for (const Complex& r : *set) {
      if (r.imag() <= 0.0) continue;
      const double wn = std::abs(r), zeta = -r.real() / wn;
      if (std::abs(zeta) >= 0.3) continue;
      const double width = std::max(std::abs(zeta), 1e-6);
      for (double o : offsets) {
        const double x = wn * (1.0 + width * o);
        if (x > lo && x < hi) w.push_back(x);
      }
    }
  if (delay_s > 0.0) {
    const double step = 0.5 / delay_s;
    double top = std::min(hi, 200.0 / delay_s);
    if (opt.delay_grid_floor > 0.0) {
      // The highest log-grid frequency with |L| above the floor (scanning down from the top).
      double last = w.front();
      for (size_t i = w.size(); i-- > 0;)
        if (std::abs(Lw(w[i])) >= opt.delay_grid_floor) {
          last = w[i];
          break;
        }
      top = std::min(top, last * std::pow(10.0, 2.0 / opt.points_per_decade));
    }
    for (double x = step; x < top; x += step)
      if (x > lo) w.push_back(x);
  }
  std::sort(w.begin(), w.end());
  w.erase(std::unique(w.begin(), w.end()), w.end());
  return w;
}

namespace {

// Root of f on [a, b] (f(a), f(b) of opposite signs) in log frequency: Illinois false position,
// which keeps the bracket and converges superlinearly, to 1e-14 in log w.
template <class F>
double refine_log(const F& f, double a, double b) {
  double fa = f(a), fb = f(b);
  if (fa == 0.0) return a;
  if (fb == 0.0) return b;
  double la = std::log(a), lb = std::log(b);
  int side = 0;
  for (int it = 0; it < 100 && (lb - la) > 1e-14; ++it) {
    double lm = (la * fb - lb * fa) / (fb - fa);
    if (!(lm > la && lm < lb)) lm = 0.5 * (la + lb);
    const double fm = f(std::exp(lm));
    if (fm == 0.0) return std::exp(lm);
    if ((fm > 0.0) == (fa > 0.0)) {
      la = lm;
      fa = fm;
      if (side == -1) fb *= 0.5;
      side = -1;
    } else {
      lb = lm;
      fb = fm;
      if (side == 1) fa *= 0.5;
      side = 1;
    }
  }
  return std::exp(0.5 * (la + lb));
}

// Golden-section maximum of f over [a, b] in log frequency.
template <class F>
std::pair<double, double> maximise_log(const F& f, double a, double b) {
  const double g = 0.5 * (std::sqrt(5.0) - 1.0);
  double la = std::log(a), lb = std::log(b);
  double lc = lb - g * (lb - la), ld = la + g * (lb - la);
  double fc = f(std::exp(lc)), fd = f(std::exp(ld));
  for (int it = 0; it < 100 && (lb - la) > 1e-5; ++it) {
    if (fc > fd) {
      lb = ld; ld = lc; fd = fc;
      lc = lb - g * (lb - la); fc = f(std::exp(lc));
    } else {
      la = lc; lc = ld; fc = fd;
      ld = la + g * (lb - la); fd = f(std::exp(ld));
    }
  }
  const double w = std::exp(0.5 * (la + lb));
  return {w, f(w)};
}

// The largest f near grid point `is` of the ascending grid w: a sharp peak (a loop passing close
// to -1) can sit between grid points, so the two neighbouring intervals are rescanned densely
// before the golden-section refinement. (w, f) of the larger of the refined and the grid value.
template <class F>
std::pair<double, double> grid_peak(const F& f, const std::vector<double>& w, size_t is, bool dense_scan) {
  if (!(is > 0 && is + 1 < w.size())) return {w[is], f(w[is])};
  double a = w[is - 1], b = w[is + 1], best_w = w[is], best_v = f(w[is]);
  const int dense = dense_scan ? 64 : 1;
  for (int k = 1; k < dense; ++k) {
    const double x = a * std::pow(b / a, static_cast<double>(k) / dense);
    const double v = f(x);
    if (v > best_v) { best_v = v; best_w = x; }
  }
  const double step = std::pow(b / a, 1.0 / dense);
  a = std::max(a, best_w / step);
  b = std::min(b, best_w * step);
  const auto pk = maximise_log(f, a, b);
  const double at_grid = f(w[is]);
  return pk.second >= at_grid ? pk : std::make_pair(w[is], at_grid);
}

// The margins, crossovers, bandwidth and peaks of any loop response Lw over the grid w; `lim`
// carries what the grid cannot show (the loop type, L(0), a crossing at the upper end).
template <class F>
FrequencyMetrics metrics_core(const F& Lw, const std::vector<double>& w, const ResponseLimits& lim,
                              const FrequencyOptions& opt) {
  FrequencyMetrics m;
  m.grid_min_rad_s = w.front();
  m.grid_max_rad_s = w.back();
  std::vector<Complex> L(w.size());
  for (size_t i = 0; i < w.size(); ++i) L[i] = Lw(w[i]);

  auto logmag = [&](double x) { return 0.5 * std::log(std::norm(Lw(x))); };
  auto imag_part = [&](double x) { return Lw(x).imag(); };

  const int type = lim.type;
  if (type == 0) {
    const double L0 = lim.low_frequency_gain;
    if (L0 < 0.0) {
      m.phase_crossovers_rad_s.push_back(0.0);
      m.critical_gains.push_back(1.0 / -L0);
    }
  }
  for (size_t i = 0; i + 1 < w.size(); ++i) {
    const double g0 = std::norm(L[i]) - 1.0, g1 = std::norm(L[i + 1]) - 1.0;
    if ((g0 < 0.0) != (g1 < 0.0)) {
      const double wc = refine_log(logmag, w[i], w[i + 1]);
      const Complex Lc = Lw(wc);
      m.gain_crossovers_rad_s.push_back(wc);
      m.phase_margins_deg.push_back(wrap_degrees(180.0 + std::arg(Lc) * 180.0 / M_PI));
    }
    const double h0 = L[i].imag(), h1 = L[i + 1].imag();
    if ((h0 < 0.0) != (h1 < 0.0) && (L[i].real() < 0.0 || L[i + 1].real() < 0.0)) {
      const double wp = refine_log(imag_part, w[i], w[i + 1]);
      const Complex Lp = Lw(wp);
      if (Lp.real() < 0.0) {
        m.phase_crossovers_rad_s.push_back(wp);
        m.critical_gains.push_back(1.0 / std::abs(Lp));
      }
    }
  }
  if (lim.upper_crossing) {
    m.phase_crossovers_rad_s.push_back(lim.upper_crossing->first);
    m.critical_gains.push_back(lim.upper_crossing->second);
  }

  for (size_t i = 0; i < m.phase_margins_deg.size(); ++i) {
    if (!m.phase_margin_deg || m.phase_margins_deg[i] < *m.phase_margin_deg) {
      m.phase_margin_deg = m.phase_margins_deg[i];
      m.phase_margin_at_rad_s = m.gain_crossovers_rad_s[i];
    }
  }
  if (!m.gain_crossovers_rad_s.empty()) m.crossover_rad_s = m.gain_crossovers_rad_s.back();

  std::optional<double> up, down;
  std::optional<double> up_w, down_w;
  for (size_t i = 0; i < m.critical_gains.size(); ++i) {
    const double k = m.critical_gains[i];
    if (k >= 1.0 && (!up || k < *up)) { up = k; up_w = m.phase_crossovers_rad_s[i]; }
    if (k < 1.0 && (!down || k > *down)) { down = k; down_w = m.phase_crossovers_rad_s[i]; }
  }
  if (up) m.gain_increase_db = 20.0 * std::log10(*up);
  if (down) m.gain_reduction_db = -20.0 * std::log10(*down);
  if (m.gain_increase_db && (!m.gain_reduction_db || *m.gain_increase_db <= *m.gain_reduction_db)) {
    m.gain_margin_db = m.gain_increase_db;
    if (std::isfinite(*up_w)) m.gain_margin_at_rad_s = up_w;
  } else if (m.gain_reduction_db) {
    m.gain_margin_db = m.gain_reduction_db;
    if (std::isfinite(*down_w)) m.gain_margin_at_rad_s = down_w;
  }

  // Closed-loop bandwidth.
  double T0 = 0.0;
  if (type > 0) T0 = 1.0;
  else if (type == 0) {
    const double L0 = lim.low_frequency_gain;
    T0 = std::abs(L0 / (1.0 + L0));
  }
  if (T0 > 0.0 && std::isfinite(T0)) {
    const double level = T0 / std::sqrt(2.0);
    auto tmag = [&](double x) {
      const Complex Lx = Lw(x);
      return 0.5 * (std::log(std::norm(Lx)) - std::log(std::norm(1.0 + Lx))) - std::log(level);
    };
    const double level2 = level * level;
    for (size_t i = 0; i + 1 < w.size(); ++i) {
      const double a = std::norm(L[i]) / std::norm(1.0 + L[i]), b = std::norm(L[i + 1]) / std::norm(1.0 + L[i + 1]);
      if (a >= level2 && b < level2) {
        m.bandwidth_rad_s = refine_log(tmag, w[i], w[i + 1]);
        break;
      }
      if (a < level2) break;  // below the level already at the grid start: not a low-pass loop
    }
  }

  // Sensitivity peaks.
  size_t is = 0, it = 0;
  double best_s = INFINITY, best_t = -1.0;
  for (size_t i = 0; i < w.size(); ++i) {
    const double d = std::norm(1.0 + L[i]), t = std::norm(L[i]) / d;
    if (d < best_s) { best_s = d; is = i; }
    if (t > best_t) { best_t = t; it = i; }
  }
  auto smag = [&](double x) { return 1.0 / std::sqrt(std::norm(1.0 + Lw(x))); };
  auto tpk = [&](double x) {
    const Complex Lx = Lw(x);
    return std::sqrt(std::norm(Lx) / std::norm(1.0 + Lx));
  };
  {
    const auto pk = grid_peak(smag, w, is, opt.dense_peak_scan);
    m.peak_sensitivity = pk.second;
    m.peak_sensitivity_at_rad_s = pk.first;
  }
  if (it > 0 && it + 1 < w.size()) m.peak_complementary = std::max(maximise_log(tpk, w[it - 1], w[it + 1]).second, tpk(w[it]));
  else m.peak_complementary = tpk(w[it]);
  for (auto* o : {&m.peak_sensitivity, &m.peak_complementary})
    if (*o && !std::isfinite(**o)) o->reset();
  return m;
}

}  // namespace

std::pair<double, double> refined_grid_peak(const std::function<double(double)>& f, const std::vector<double>& grid,
                                            bool dense_scan) {
  if (grid.empty()) throw std::invalid_argument("refined_grid_peak: empty grid");
  size_t is = 0;
  double best = -INFINITY;
  for (size_t i = 0; i < grid.size(); ++i) {
    const double v = f(grid[i]);
    if (v > best) { best = v; is = i; }
  }
  return grid_peak(f, grid, is, dense_scan);
}

FrequencyMetrics frequency_metrics(const Zpk& loop, double delay_s, const FrequencyOptions& opt) {
  ResponseLimits lim;
  lim.type = zpk_integrators(loop);
  if (lim.type == 0) lim.low_frequency_gain = zpk_low_frequency_gain(loop);
  if (loop.relative_degree() == 0 && loop.gain != 0.0 && (delay_s > 0.0 || loop.gain < 0.0)) {
    // Biproper loop: the high-frequency limit |L| -> |gain| is a boundary as well.
    lim.upper_crossing = std::make_pair(INFINITY, 1.0 / std::abs(loop.gain));
  }
  const LoopResponse Lw(loop, delay_s);
  const std::vector<double> grid = frequency_grid(loop, delay_s, opt);
  FrequencyMetrics m = metrics_core(Lw, grid, lim, opt);
  if (loop.relative_degree() > 0 && loop.gain != 0.0 && opt.w_max == 0.0) {
    // Sanity: a strictly proper loop has S(j inf) = 1, so sup |S| >= 1, and its grid must end
    // where |L| has rolled off below 1. Either failing means a crossing was missed: say so
    // rather than report margins of a loop the grid did not see.
    const double top = std::abs(Lw(grid.back()));
    if (!(top < 1.0))
      throw NumericalError("frequency response: the grid ends at " + std::to_string(grid.back()) +
                           " rad/s with |L| = " + std::to_string(top) + " >= 1: a gain crossing lies beyond it");
    if (m.peak_sensitivity && *m.peak_sensitivity < (1.0 - top) * (1.0 - 1e-9))
      throw NumericalError("frequency response: peak |S| = " + std::to_string(*m.peak_sensitivity) +
                           " is below 1 for a strictly proper loop: the frequency grid missed part of the response");
  }
  return m;
}

FrequencyMetrics frequency_metrics_of(const std::function<Complex(double)>& response, const std::vector<double>& grid,
                                      const ResponseLimits& limits, const FrequencyOptions& options) {
  if (grid.size() < 2) throw std::invalid_argument("frequency_metrics_of: the grid needs two points or more");
  return metrics_core(response, grid, limits, options);
}

}  // namespace pw
