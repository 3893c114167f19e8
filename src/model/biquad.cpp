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

Complex section_value(const Biquad& s, Complex z) { return poly_inv(s.b, z) / poly_inv(s.a, z); }

}  // namespace

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
  // Each group in turn (nearest the circle first) takes its nearest complex pair.
  for (size_t k : order) {
    if (pairs.empty()) break;
    if (groups[k].poles.size() != 2) continue;
    size_t best = 0;
    for (size_t i = 1; i < pairs.size(); ++i)
      if (groups[k].distance(pairs[i]) < groups[k].distance(pairs[best])) best = i;
    groups[k].zeros = {pairs[best], std::conj(pairs[best])};
    pairs.erase(pairs.begin() + static_cast<long>(best));
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
  for (size_t k : order) {
    // Real zeros: each group nearest the circle first takes the real zeros nearest its poles.
    while (room(groups[k]) > 0 && !real_zeros.empty()) {
      size_t best = 0;
      for (size_t i = 1; i < real_zeros.size(); ++i)
        if (groups[k].distance(real_zeros[i]) < groups[k].distance(real_zeros[best])) best = i;
      groups[k].zeros.push_back(real_zeros[best]);
      real_zeros.erase(real_zeros.begin() + static_cast<long>(best));
    }
  }
  if (!real_zeros.empty()) throw std::logic_error("biquad_cascade: zeros left over");

  std::stable_sort(groups.begin(), groups.end(), [](const Group& a, const Group& b) {
    if (a.radius() != b.radius()) return a.radius() < b.radius();
    return a.angle() < b.angle();
  });
  BiquadCascade out;
  double g = d.gain;
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
    out.sections.push_back(s);
  }
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
