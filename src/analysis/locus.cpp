#include "polewright/analysis/locus.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <string>

#include "polewright/model/eigen.hpp"
#include "polewright/analysis/frequency.hpp"

namespace pw {

bool LocusOptions::IsValid(std::string* error) const {
  if (!(gain_min > 0.0 && gain_max > gain_min)) {
    if (error) *error = "need 0 < gain_min < gain_max";
    return false;
  }
  if (max_points < 10 || !(max_move > 0.0)) {
    if (error) *error = "need max_points >= 10 and max_move > 0";
    return false;
  }
  return true;
}

namespace {

struct Scaled {
  const StateSpace& loop;
  Mat A;
  bool ok = true;
  explicit Scaled(const StateSpace& l) : loop(l) {}
  // Closed loop of k L: A - k B C / (1 + k D).
  void set(double k) {
    const double den = 1.0 + k * loop.D;
    ok = std::abs(den) > 1e-12;
    A = loop.A;
    if (ok) A.noalias() -= (k / den) * loop.B * loop.C;
  }
};

bool stable_at(Scaled& sc, double k) {
  sc.set(k);
  if (!sc.ok) return false;
  const CVec ev = eigenvalues_balanced(sc.A);
  for (int i = 0; i < ev.size(); ++i)
    if (!(ev(i).real() < 0.0)) return false;
  return true;
}

// Matches new eigenvalues to previous branch points by greedy nearest pairs.
std::vector<Complex> match(const std::vector<Complex>& prev, const CVec& ev) {
  const size_t n = prev.size();
  struct Pair { double d; size_t i, j; };
  std::vector<Pair> pairs;
  pairs.reserve(n * n);
  for (size_t i = 0; i < n; ++i)
    for (size_t j = 0; j < n; ++j) pairs.push_back({std::abs(prev[i] - ev(static_cast<int>(j))), i, j});
  std::sort(pairs.begin(), pairs.end(), [](const Pair& a, const Pair& b) {
    return a.d != b.d ? a.d < b.d : (a.i != b.i ? a.i < b.i : a.j < b.j);
  });
  std::vector<Complex> out(n);
  std::vector<bool> ui(n, false), uj(n, false);
  for (const Pair& p : pairs) {
    if (ui[p.i] || uj[p.j]) continue;
    ui[p.i] = uj[p.j] = true;
    out[p.i] = ev(static_cast<int>(p.j));
  }
  return out;
}

double log_derivative(const Zpk& L, double sigma) {
  double f = 0.0;
  for (const Complex& p : L.poles) f += (1.0 / (Complex(sigma, 0.0) - p)).real();
  for (const Complex& z : L.zeros) f -= (1.0 / (Complex(sigma, 0.0) - z)).real();
  return f;
}

std::vector<LocusLandmark> real_axis_landmarks(const Zpk& L) {
  std::vector<LocusLandmark> out;
  std::vector<double> marks;
  for (const Roots* set : {&L.poles, &L.zeros})
    for (const Complex& r : *set)
      if (r.imag() == 0.0) marks.push_back(r.real());
  if (marks.empty()) return out;
  std::sort(marks.begin(), marks.end());
  const double scale = std::max(1.0, zpk_frequency_scale(L)) * 10.0;
  std::vector<double> edges = {marks.front() - scale};
  edges.insert(edges.end(), marks.begin(), marks.end());
  const bool positive = L.gain > 0.0;
  for (size_t e = 0; e + 1 < edges.size(); ++e) {
    const double a = edges[e], b = edges[e + 1];
    if (!(b > a)) continue;
    const double mid = 0.5 * (a + b);
    // On the locus for k > 0: an odd count of real roots to the right (even for a negative gain).
    const long right = std::count_if(marks.begin(), marks.end(), [&](double m) { return m > mid; });
    if ((right % 2 == 1) != positive) continue;
    const int N = 400;
    double x0 = a + (b - a) * 0.5 / N, f0 = log_derivative(L, x0);
    for (int i = 1; i < N; ++i) {
      const double x1 = a + (b - a) * (i + 0.5) / N, f1 = log_derivative(L, x1);
      if ((f0 < 0.0) != (f1 < 0.0) && std::isfinite(f0) && std::isfinite(f1)) {
        double lo = x0, hi = x1, flo = f0;
        for (int it = 0; it < 100 && hi - lo > 1e-15 * std::max(1.0, std::abs(lo)); ++it) {
          const double m = 0.5 * (lo + hi), fm = log_derivative(L, m);
          if ((fm < 0.0) == (flo < 0.0)) { lo = m; flo = fm; } else { hi = m; }
        }
        const double s = 0.5 * (lo + hi);
        const Complex Ls = L.evaluate(Complex(s, 0.0));
        const double k = -1.0 / Ls.real();
        if (k > 0.0 && std::isfinite(k)) out.push_back({Complex(s, 0.0), k});
      }
      x0 = x1;
      f0 = f1;
    }
  }
  return out;
}

}  // namespace

std::vector<GainInterval> stable_gain_intervals(const LoopParts& parts) {
  const StateSpace loop = series(parts.compensator, parts.plant);
  FrequencyMetrics fm = frequency_metrics(parts.loop_rational, 0.0, FrequencyOptions{});
  std::vector<double> crit;
  for (double k : fm.critical_gains)
    if (k > 0.0 && std::isfinite(k)) crit.push_back(k);
  if (loop.D != 0.0 && -1.0 / loop.D > 0.0) crit.push_back(-1.0 / loop.D);
  std::sort(crit.begin(), crit.end());
  crit.erase(std::unique(crit.begin(), crit.end(), [](double a, double b) { return std::abs(a - b) <= 1e-12 * b; }),
             crit.end());
  Scaled sc(loop);
  std::vector<GainInterval> out;
  std::vector<double> edges = {0.0};
  edges.insert(edges.end(), crit.begin(), crit.end());
  for (size_t i = 0; i < edges.size(); ++i) {
    const double lo = edges[i];
    const bool last = i + 1 == edges.size();
    const double hi = last ? INFINITY : edges[i + 1];
    const double probe = last ? (lo > 0.0 ? 2.0 * lo : 1.0) : (lo > 0.0 ? std::sqrt(lo * hi) : 0.5 * hi);
    if (!stable_at(sc, probe)) continue;
    if (!out.empty() && out.back().hi && *out.back().hi == lo) {
      if (last) out.back().hi.reset(); else out.back().hi = hi;
      continue;
    }
    GainInterval g;
    g.lo = lo;
    if (!last) g.hi = hi;
    out.push_back(g);
  }
  return out;
}

Locus root_locus(const LoopParts& parts, const LocusOptions& opt) {
  Locus out;
  const Zpk& L = parts.loop_rational;
  out.open_loop_poles = L.poles;
  out.open_loop_zeros = L.zeros;
  const StateSpace loop = series(parts.compensator, parts.plant);
  const int n = loop.states();
  const int excess = L.relative_degree();
  if (excess > 0) {
    Complex sum(0.0, 0.0);
    for (const Complex& p : L.poles) sum += p;
    for (const Complex& z : L.zeros) sum -= z;
    out.asymptote_centroid = sum.real() / excess;
    const bool positive = L.gain > 0.0;
    for (int q = 0; q < excess; ++q)
      out.asymptote_angles_deg.push_back(wrap_degrees((positive ? (2.0 * q + 1.0) : 2.0 * q) * 180.0 / excess));
  }
  out.breakaways = real_axis_landmarks(L);

  FrequencyMetrics fm = frequency_metrics(L, 0.0, FrequencyOptions{});
  for (size_t i = 0; i < fm.critical_gains.size(); ++i) {
    const double w = fm.phase_crossovers_rad_s[i];
    if (std::isfinite(w)) out.axis_crossings.push_back({Complex(0.0, w), fm.critical_gains[i]});
  }
  out.stable_intervals = stable_gain_intervals(parts);
  if (n == 0) return out;

  Scaled sc(loop);
  const double ref = std::max(1e-9, zpk_frequency_scale(L));
  std::vector<Complex> prev;
  {
    const CVec ev = eigenvalues_balanced(loop.A);
    for (int i = 0; i < n; ++i) prev.push_back(ev(i));
    std::sort(prev.begin(), prev.end(), [](Complex a, Complex b) {
      return a.real() != b.real() ? a.real() < b.real() : a.imag() < b.imag();
    });
  }
  out.branches.assign(static_cast<size_t>(n), {});
  auto record = [&](double k, const std::vector<Complex>& pts) {
    out.gains.push_back(k);
    for (int b = 0; b < n; ++b) out.branches[static_cast<size_t>(b)].push_back(pts[static_cast<size_t>(b)]);
  };
  record(0.0, prev);
  double k = opt.gain_min;
  double ratio = 1.25;
  bool first = true;
  // Every pass either records a point or shrinks the step (at most ~14 halvings of the log
  // ratio before it falls under 1e-4) or nudges past a gain with an ill-posed loop: the cap on
  // passes keeps a pathological loop from tracing for ever.
  const long max_passes = 50L * opt.max_points + 100000L;
  for (long pass = 0; k <= opt.gain_max && static_cast<int>(out.gains.size()) < opt.max_points; ++pass) {
    if (pass >= max_passes) throw NumericalError("root locus: the gain trace did not finish within its iteration cap");
    sc.set(k);
    if (!sc.ok) { k *= 1.0 + 1e-6; continue; }
    const std::vector<Complex> next = match(prev, eigenvalues_balanced(sc.A));
    double move = 0.0;
    for (int b = 0; b < n; ++b) {
      const double size = std::max(std::abs(prev[static_cast<size_t>(b)]), 1e-3 * ref);
      move = std::max(move, std::abs(next[static_cast<size_t>(b)] - prev[static_cast<size_t>(b)]) / size);
    }
    if (!first && move > opt.max_move && ratio > 1.0 + 1e-4) {
      k /= ratio;
      ratio = std::sqrt(ratio);
      k *= ratio;
      continue;
    }
    first = false;
    record(k, next);
    prev = next;
    if (move < 0.25 * opt.max_move) ratio = std::min(ratio * ratio, 2.0);
    k *= ratio;
  }
  return out;
}

}  // namespace pw
