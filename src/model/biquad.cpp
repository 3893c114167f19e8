#include "polewright/model/biquad.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

namespace pw {

namespace {

struct Group {
  Roots poles;
  Roots zeros;
  bool integrator = false;
  double radius() const {
    double r = 0.0;
    for (const Complex& p : poles) r = std::max(r, std::abs(p));
    return r;
  }
  double angle() const { return poles.empty() ? 0.0 : std::abs(std::arg(poles[0])); }
  double distance(const Complex& z) const {
    double d = INFINITY;
    for (const Complex& p : poles) d = std::min(d, std::abs(z - p));
    return d;
  }
};

// Coefficients of prod (1 - r z^-1) in ascending powers of z^-1, shifted by `delay` samples.
std::array<double, 3> coefficients(const Roots& roots, int delay) {
  std::array<double, 3> c{{0.0, 0.0, 0.0}};
  double c0 = 1.0, c1 = 0.0, c2 = 0.0;
  if (roots.size() == 1) {
    c1 = -roots[0].real();
  } else if (roots.size() == 2) {
    c1 = -(roots[0] + roots[1]).real();
    c2 = (roots[0] * roots[1]).real();
  }
  const double in[3] = {c0, c1 + 0.0, c2 + 0.0};  // + 0.0 turns -0 into 0
  for (int i = 0; i + delay < 3; ++i) c[static_cast<size_t>(i + delay)] = in[i];
  return c;
}

Complex poly_inv(const std::array<double, 3>& c, Complex z) {
  const Complex w = 1.0 / z;
  return c[0] + w * (c[1] + w * c[2]);
}

}  // namespace

Complex section_value(const Biquad& s, Complex z) { return poly_inv(s.b, z) / poly_inv(s.a, z); }

// Peak of |H(e^{jw})| over the first n sections, on a grid of 2048 frequencies in (0, pi] uniform in w plus
// 256 log-spaced below 0.01 rad/sample, each pole angle, and golden-section refinement of the best.
SectionPeak sections_peak(const std::vector<Biquad>& secs, size_t n) {
  for (size_t i = 0; i < n; ++i)
    if (secs[i].integrator) return {INFINITY, 0.0};
  auto mag = [&](double w) {
    const Complex z = std::polar(1.0, w);
    double m = 1.0;
    for (size_t i = 0; i < n; ++i) m *= std::abs(section_value(secs[i], z));
    return std::isfinite(m) ? m : INFINITY;
  };
  std::vector<double> ws;
  for (int k = 0; k <= 2048; ++k) ws.push_back(M_PI * k / 2048.0);
  for (int k = 0; k < 256; ++k) ws.push_back(0.01 * std::pow(10.0, -8.0 * (1.0 - k / 255.0)));
  for (size_t i = 0; i < n; ++i)
    for (const Complex& p : secs[i].poles) ws.push_back(std::min(M_PI, std::abs(std::arg(p))));
  std::sort(ws.begin(), ws.end());
  size_t bi = 0;
  double bm = -1.0;
  std::vector<double> ms(ws.size());
  for (size_t k = 0; k < ws.size(); ++k) {
    ms[k] = mag(ws[k]);
    if (ms[k] > bm) {
      bm = ms[k];
      bi = k;
    }
  }
  if (!std::isfinite(bm)) return {INFINITY, ws[bi]};
  double lo = ws[bi > 0 ? bi - 1 : 0], hi = ws[std::min(bi + 1, ws.size() - 1)];
  const double phi = 0.5 * (std::sqrt(5.0) - 1.0);
  double x1 = hi - phi * (hi - lo), x2 = lo + phi * (hi - lo), f1 = mag(x1), f2 = mag(x2);
  for (int it = 0; it < 60 && hi - lo > 1e-15; ++it) {
    if (f1 > f2) {
      hi = x2;
      x2 = x1;
      f2 = f1;
      x1 = hi - phi * (hi - lo);
      f1 = mag(x1);
    } else {
      lo = x1;
      x1 = x2;
      f1 = f2;
      x2 = lo + phi * (hi - lo);
      f2 = mag(x2);
    }
  }
  double w = ws[bi];
  if (f1 > bm) {
    bm = f1;
    w = x1;
  }
  if (f2 > bm) {
    bm = f2;
    w = x2;
  }
  return {bm, w};
}

SectionPeak section_peak(const Biquad& s) { return sections_peak({s}, 1); }


BiquadCascade biquad_cascade(const Zpk& d) {
  if (!d.is_proper()) throw std::invalid_argument("biquad_cascade: more zeros than poles (not causal)");
  std::vector<Group> groups;
  Roots reals;
  for (const Complex& p : d.poles) {
    if (p.imag() > 0.0) {
      Group g;
      g.poles = {p, std::conj(p)};
      groups.push_back(g);
    } else if (p.imag() == 0.0) {
      if (p.real() == 1.0) {
        Group g;
        g.poles = {p};
        g.integrator = true;
        groups.push_back(g);
      } else {
        reals.push_back(p);
      }
    }
  }
  std::stable_sort(reals.begin(), reals.end(), [](const Complex& a, const Complex& b) {
    return std::abs(a) != std::abs(b) ? std::abs(a) > std::abs(b) : a.real() > b.real();
  });
  for (size_t i = 0; i < reals.size(); i += 2) {
    Group g;
    g.poles.push_back(reals[i]);
    if (i + 1 < reals.size()) g.poles.push_back(reals[i + 1]);
    groups.push_back(g);
  }
  // Zeros: complex pairs first, then reals; the section nearest the unit circle chooses first.
  std::vector<size_t> order(groups.size());
  for (size_t i = 0; i < order.size(); ++i) order[i] = i;
  std::stable_sort(order.begin(), order.end(), [&](size_t a, size_t b) { return groups[a].radius() > groups[b].radius(); });
  Roots pairs, real_zeros;
  for (const Complex& z : d.zeros) {
    if (z.imag() > 0.0) pairs.push_back(z);
    else if (z.imag() == 0.0) real_zeros.push_back(z);
  }
  auto room = [&](const Group& g) { return static_cast<int>(g.poles.size() - g.zeros.size()); };
  auto place = [&](const Complex& z, int need) {
    // The group with room whose nearest pole is nearest to z (earlier in `order` on ties).
    size_t best = groups.size();
    double best_d = INFINITY;
    for (size_t k : order)
      if (room(groups[k]) >= need && groups[k].distance(z) < best_d) {
        best = k;
        best_d = groups[k].distance(z);
      }
    return best;
  };
  auto merge_first_order = [&]() {
    // No section has room: join the two smallest-radius first-order sections into one.
    std::vector<size_t> ones;
    for (size_t k : order)
      if (groups[k].poles.size() == 1) ones.push_back(k);
    if (ones.size() < 2) throw std::logic_error("biquad_cascade: no section can take a zero");
    const size_t a = ones[ones.size() - 1], b = ones[ones.size() - 2];
    for (const Complex& p : groups[a].poles) groups[b].poles.push_back(p);
    for (const Complex& z : groups[a].zeros) groups[b].zeros.push_back(z);
    groups[b].integrator = false;
    groups.erase(groups.begin() + static_cast<long>(a));
    order.clear();
    for (size_t i = 0; i < groups.size(); ++i) order.push_back(i);
    std::stable_sort(order.begin(), order.end(), [&](size_t x, size_t y) { return groups[x].radius() > groups[y].radius(); });
  };
  // Complex zero pairs: the closest (two-pole section, pair) match first, over all sections and
  // pairs, ties to the section nearer the unit circle. (Letting each section choose in turn gave a
  // notch's zeros to a real-pole section that happened to lie nearer the circle.)
  {
    struct Match {
      double d;
      size_t rank, k, i;
    };
    std::vector<Match> m;
    for (size_t r = 0; r < order.size(); ++r) {
      const size_t k = order[r];
      if (groups[k].poles.size() != 2) continue;
      for (size_t i = 0; i < pairs.size(); ++i) m.push_back({groups[k].distance(pairs[i]), r, k, i});
    }
    std::stable_sort(m.begin(), m.end(), [](const Match& a, const Match& b) { return a.d != b.d ? a.d < b.d : a.rank < b.rank; });
    std::vector<bool> used(pairs.size(), false);
    for (const Match& x : m) {
      if (used[x.i] || !groups[x.k].zeros.empty()) continue;
      groups[x.k].zeros = {pairs[x.i], std::conj(pairs[x.i])};
      used[x.i] = true;
    }
    Roots left;
    for (size_t i = 0; i < pairs.size(); ++i)
      if (!used[i]) left.push_back(pairs[i]);
    pairs = left;
  }
  for (const Complex& z : pairs) {
    size_t k = place(z, 2);
    while (k == groups.size()) {
      merge_first_order();
      k = place(z, 2);
    }
    groups[k].zeros.push_back(z);
    groups[k].zeros.push_back(std::conj(z));
  }
  // Real zeros: repeatedly the closest (section with room, zero) match, ties to the section nearer
  // the unit circle.
  while (!real_zeros.empty()) {
    size_t bk = groups.size(), bi = 0;
    double bd = INFINITY;
    for (size_t k : order) {
      if (room(groups[k]) <= 0) continue;
      for (size_t i = 0; i < real_zeros.size(); ++i) {
        const double dd = groups[k].distance(real_zeros[i]);
        if (bk == groups.size() || dd < bd) {
          bk = k;
          bi = i;
          bd = dd;
        }
      }
    }
    if (bk == groups.size()) break;
    groups[bk].zeros.push_back(real_zeros[bi]);
    real_zeros.erase(real_zeros.begin() + static_cast<long>(bi));
  }
  if (!real_zeros.empty()) throw std::logic_error("biquad_cascade: zeros left over");

  std::stable_sort(groups.begin(), groups.end(), [](const Group& a, const Group& b) {
    if (a.radius() != b.radius()) return a.radius() < b.radius();
    return a.angle() < b.angle();
  });
  BiquadCascade out;
  double g = d.gain;
  std::vector<Biquad> secs;
  for (const Group& gr : groups) {
    Biquad s;
    s.poles = gr.poles;
    s.zeros = gr.zeros;
    s.integrator = gr.integrator;
    s.a = coefficients(gr.poles, 0);
    s.b = coefficients(gr.zeros, static_cast<int>(gr.poles.size() - gr.zeros.size()));
    // The section so far is prod(z - zi)/prod(z - pi) exactly; scale it to unit gain.
    const double tiny = 1e-12;
    const double a1 = s.a[0] + s.a[1] + s.a[2], b1 = s.b[0] + s.b[1] + s.b[2];
    const double am = s.a[0] - s.a[1] + s.a[2], bm = s.b[0] - s.b[1] + s.b[2];
    double scale;
    if (std::abs(a1) > tiny && std::abs(b1) > tiny) scale = a1 / b1;
    else if (std::abs(am) > tiny && std::abs(bm) > tiny) scale = am / bm;
    else scale = 1.0 / std::abs(section_value(s, Complex(0.0, 1.0)));
    for (double& c : s.b) c *= scale;
    g /= scale;
    const SectionPeak pk = section_peak(s);
    s.peak_gain = pk.gain;
    s.peak_at = pk.at;
    secs.push_back(s);
  }
  // Order: integrators last (their gain is unbounded); the others in the order that keeps the
  // largest running peak |H_1 ... H_i| (i below the last) smallest, searched over every order up
  // to 6 sections on a common grid; orders within 1 % of the best go to the one with the fewest
  // inversions of increasing pole radius (the order the groups were sorted in).
  std::vector<size_t> idx;
  for (size_t i = 0; i < secs.size(); ++i)
    if (!secs[i].integrator) idx.push_back(i);
  if (idx.size() >= 2 && idx.size() <= 6) {
    std::vector<double> ws;
    for (int k = 0; k <= 2048; ++k) ws.push_back(M_PI * k / 2048.0);
    for (int k = 0; k < 256; ++k) ws.push_back(0.01 * std::pow(10.0, -8.0 * (1.0 - k / 255.0)));
    for (size_t i : idx)
      for (const Complex& p : secs[i].poles) ws.push_back(std::min(M_PI, std::abs(std::arg(p))));
    std::vector<std::vector<double>> mag(secs.size());
    for (size_t i : idx)
      for (double w : ws) mag[i].push_back(std::abs(section_value(secs[i], std::polar(1.0, w))));
    auto inversions = [](const std::vector<size_t>& o) {
      int inv = 0;
      for (size_t a = 0; a < o.size(); ++a)
        for (size_t b = a + 1; b < o.size(); ++b) inv += o[a] > o[b] ? 1 : 0;
      return inv;
    };
    std::vector<size_t> perm = idx, best = idx;
    double best_cost = INFINITY;
    std::vector<double> run(ws.size());
    do {
      std::fill(run.begin(), run.end(), 1.0);
      double cost = 0.0;
      for (size_t n = 0; n + 1 < perm.size(); ++n) {
        double pk = 0.0;
        for (size_t k = 0; k < ws.size(); ++k) pk = std::max(pk, run[k] *= mag[perm[n]][k]);
        cost = std::max(cost, pk);
      }
      const bool better = cost < best_cost * (1.0 - 0.01);
      const bool tie = !better && cost <= best_cost * (1.0 + 0.01) && inversions(perm) < inversions(best);
      if (better || tie) {
        best = perm;
        best_cost = better ? cost : std::min(best_cost, cost);
      }
    } while (std::next_permutation(perm.begin(), perm.end()));
    idx = best;
  }
  for (size_t i : idx) out.sections.push_back(secs[i]);
  for (const Biquad& s : secs)
    if (s.integrator) out.sections.push_back(s);
  for (size_t n = 1; n <= out.sections.size(); ++n) out.sections[n - 1].running_peak = sections_peak(out.sections, n).gain;
  out.gain = g;
  return out;
}

Complex cascade_evaluate(const BiquadCascade& c, Complex z) {
  Complex v(c.gain, 0.0);
  for (const Biquad& s : c.sections) v *= section_value(s, z);
  return v;
}

std::vector<double> cascade_filter(const BiquadCascade& c, const std::vector<double>& input) {
  std::vector<std::array<double, 2>> st(c.sections.size(), {{0.0, 0.0}});
  std::vector<double> out(input.size());
  for (size_t k = 0; k < input.size(); ++k) {
    double x = input[k];
    for (size_t i = 0; i < c.sections.size(); ++i) {
      const Biquad& s = c.sections[i];
      const double y = s.b[0] * x + st[i][0];
      st[i][0] = s.b[1] * x - s.a[1] * y + st[i][1];
      st[i][1] = s.b[2] * x - s.a[2] * y;
      x = y;
    }
    out[k] = c.gain * x;
  }
  return out;
}

SectionRadius section_pole_radius(const Biquad& s) {
  auto radius = [](double a1, double a2) {
    // Roots of z^2 + a1 z + a2.
    const double disc = a1 * a1 - 4.0 * a2;
    if (disc < 0.0) return std::sqrt(std::max(a2, 0.0));
    const double q = -0.5 * (a1 + std::copysign(std::sqrt(disc), a1));
    const double r1 = std::abs(q);
    const double r2 = q != 0.0 ? std::abs(a2 / q) : 0.0;
    return std::max(r1, r2);
  };
  SectionRadius r;
  r.double_radius = radius(s.a[1], s.a[2]);
  if (!(std::abs(s.a[1]) < 3e38 && std::abs(s.a[2]) < 3e38)) {  // beyond float range: no float value
    r.float_radius = INFINITY;
    return r;
  }
  r.float_radius = radius(static_cast<double>(static_cast<float>(s.a[1])), static_cast<double>(static_cast<float>(s.a[2])));
  return r;
}

}  // namespace pw
