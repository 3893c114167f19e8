#include "polewright/analysis/disturbance.hpp"

#include <algorithm>
#include <cmath>
#include <vector>

namespace pw {

ClosedLoop disturbance_loop(const LoopParts& parts, DisturbanceInput where) {
  ClosedLoop cl;
  if (where == DisturbanceInput::Load) {
    // v = G (d - C v): the loop with G forward and C in the feedback path; its "effort" channel is
    // the output of G, y = G / (1 + G C) d.
    cl = close_loop(parts.plant, parts.compensator);
    cl.Cy = cl.Cu;
    cl.Dy = cl.Du;
  } else {
    // y = d_o - T d_o: the reference loop's y channel negated, plus the direct term.
    cl = close_loop(parts.compensator, parts.plant);
    cl.Cy = -cl.Cy;
    cl.Dy = 1.0 - cl.Dy;
    cl.Cu = cl.Cy;
    cl.Du = cl.Dy;
  }
  return cl;
}

namespace {

// The loop with the constant `offset` added to its y channel (the u channel keeps y itself): the
// step figures of y + offset are then the recovery figures of y, the band relative to offset.
void shift_output(ClosedLoop& loop, PoleAnalysis& poles, double offset) {
  loop.Dy += offset;
  poles.modal.y_final += offset;
}

// Trapezoid of |y| on the samples, split at each sign change.
double trapezoid_iae(const std::vector<double>& y, double dt) {
  double iae = 0.0;
  for (size_t k = 0; k + 1 < y.size(); ++k) {
    const double a = y[k], b = y[k + 1];
    if ((a >= 0.0) == (b >= 0.0)) iae += 0.5 * (std::abs(a) + std::abs(b));
    else iae += 0.5 * (a * a + b * b) / (std::abs(a) + std::abs(b));
  }
  return iae * dt;
}

// Exact integral of |y| for y(t) = sum c_i e^(l_i t) (final value 0): the antiderivative
// Y(t) = Re sum c_i e^(l_i t) / l_i between the sign changes of y, which are found on the samples
// and refined by bisection on the modal expansion; the last piece runs to Y(inf) = 0, so the tail
// beyond the horizon is included.
double modal_iae(const ModalStep& m, const std::vector<double>& y, double dt) {
  auto value = [&](double t, bool integral) {
    Complex acc(0.0, 0.0);
    for (int i = 0; i < m.lambda.size(); ++i) {
      Complex term = m.cy(i) * std::exp(m.lambda(i) * t);
      if (integral) term /= m.lambda(i);
      acc += term;
    }
    return acc.real();
  };
  // Past the samples, the scan goes on with modal values (one complex multiply per mode and step)
  // until the residue envelope is below 1e-12 of its start (an oscillating tail keeps changing
  // sign), for at most three times the sampled span.
  const int n = static_cast<int>(m.lambda.size());
  std::vector<Complex> pw_(static_cast<size_t>(n)), z(static_cast<size_t>(n));
  double total = 0.0;
  const double t_end = dt * static_cast<double>(y.size() - 1);
  for (int i = 0; i < n; ++i) {
    total += std::abs(m.cy(i));
    pw_[static_cast<size_t>(i)] = m.cy(i) * std::exp(m.lambda(i) * t_end);
    z[static_cast<size_t>(i)] = std::exp(m.lambda(i) * dt);
  }
  double iae = 0.0, prev = value(0.0, true);
  auto add_root = [&](double a, double b) {
    const bool up = value(a, false) < 0.0;
    for (int it = 0; it < 60 && b - a > 1e-15 * b; ++it) {
      const double c = 0.5 * (a + b);
      ((value(c, false) < 0.0) == up ? a : b) = c;
    }
    const double here = value(0.5 * (a + b), true);
    iae += std::abs(here - prev);
    prev = here;
  };
  for (size_t k = 0; k + 1 < y.size(); ++k)
    if ((y[k] >= 0.0) != (y[k + 1] >= 0.0)) add_root(dt * static_cast<double>(k), dt * static_cast<double>(k + 1));
  double cur = y.empty() ? 0.0 : y.back();
  const size_t extra = 3 * y.size();
  for (size_t k = 0; k < extra; ++k) {
    double next = 0.0, env = 0.0;
    for (size_t i = 0; i < pw_.size(); ++i) {
      pw_[i] *= z[i];
      next += pw_[i].real();
      env += std::abs(pw_[i]);
    }
    if ((cur >= 0.0) != (next >= 0.0)) add_root(t_end + dt * static_cast<double>(k), t_end + dt * static_cast<double>(k + 1));
    cur = next;
    if (env <= 1e-12 * total) break;
  }
  return iae + std::abs(prev);
}

}  // namespace

DisturbanceMetrics disturbance_response(const ClosedLoop& loop, const StepOptions& options, double band,
                                        double threshold) {
  DisturbanceMetrics m;
  const PoleAnalysis base = analyze_poles(loop, threshold);
  double total = 0.0;
  for (const PoleInfo& p : base.poles) total += p.residue;
  const double yf = closed_loop_dc_gain(loop);
  m.final_value = yf;
  StepOptions so = options;
  so.band = band;
  so.horizon_s = 0.0;
  so.keep_trace = false;

  // First pass: the peak |y| (the effort channel carries y), the horizon from the residues.
  ClosedLoop first = loop;
  PoleAnalysis first_poles = base;
  const double scale = std::max(std::abs(yf), total);
  shift_output(first, first_poles, scale > 0.0 ? scale : 1.0);
  const StepMetrics s1 = step_response(first, first_poles, so);
  m.peak = std::max(s1.peak_effort.value_or(0.0), std::abs(yf));  // sup over t >= 0 includes y(inf)
  m.horizon_s = s1.horizon_s;
  m.samples = s1.samples;
  m.rejected = std::abs(yf) <= 1e-8 * m.peak;
  if (!m.rejected || !(m.peak > 0.0)) {
    if (m.rejected) {
      m.recovery_time_s = 0.0;
      m.iae = 0.0;
    }
    return m;
  }

  // Second pass: y + peak settles into band * peak when |y| does; the horizon is chosen for a
  // hundredth of the band so the integral's tail is negligible.
  ClosedLoop second = loop;
  PoleAnalysis second_poles = base;
  shift_output(second, second_poles, m.peak);
  so.horizon_s = choose_step_horizon(second_poles, m.peak + yf, 0.01 * band, 0.0);
  so.keep_trace = true;
  const StepMetrics s2 = step_response(second, second_poles, so);
  m.recovery_time_s = s2.settling_time_s;
  m.horizon_s = s2.horizon_s;
  m.samples = s2.samples;
  m.peak = std::max(m.peak, s2.peak_effort.value_or(0.0));
  const std::vector<double>& y = s2.trace.u;
  m.iae = base.residues_reliable ? modal_iae(base.modal, y, s2.trace.dt) : trapezoid_iae(y, s2.trace.dt);
  if (options.keep_trace) {
    m.trace.dt = s2.trace.dt;
    m.trace.y = y;
  }
  return m;
}

NoiseMetrics noise_metrics(const Zpk& comp, const Zpk& loop, double delay_s, const FrequencyOptions& opt,
                           std::optional<double> gain_at_rad_s) {
  NoiseMetrics n;
  const double hf = comp.relative_degree() == 0 ? std::abs(comp.gain) : 0.0;  // |C(j inf)|
  n.high_frequency_gain = gain_at_rad_s ? std::abs(comp.evaluate(Complex(0.0, *gain_at_rad_s))) : hf;
  const LoopResponse C(comp, 0.0), L(loop, delay_s);
  auto cs = [&](double w) {
    const Complex l = L(w);
    return std::abs(C(w)) / std::abs(Complex(1.0 + l.real(), l.imag()));
  };
  const std::vector<double> grid = frequency_grid(loop, delay_s, opt);
  const auto pk = refined_grid_peak(cs, grid, opt.dense_peak_scan);
  // The limit w -> inf: |C(inf)| for a strictly proper loop, |C(inf) / (1 + L(inf))| for a
  // biproper one without dead time (with one, the grid's linear part sees the oscillation).
  double limit = 0.0;
  if (loop.relative_degree() > 0) limit = hf;
  else if (delay_s == 0.0) limit = hf / std::abs(1.0 + loop.gain);
  if (std::isfinite(pk.second)) {
    n.effort_peak = pk.second;
    n.effort_peak_at_rad_s = pk.first;
  }
  if (std::isfinite(limit) && (!n.effort_peak || limit > *n.effort_peak)) {
    n.effort_peak = limit;
    n.effort_peak_at_rad_s.reset();
  }
  return n;
}

}  // namespace pw
