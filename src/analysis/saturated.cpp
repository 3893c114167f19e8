#include "polewright/analysis/saturated.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <limits>
#include <stdexcept>

#include "polewright/model/eigen.hpp"
#include "polewright/model/polynomial.hpp"

namespace pw {

bool ActuatorLimits::IsValid(std::string* error) const {
  auto fail = [&](const char* why) {
    if (error) *error = why;
    return false;
  };
  if (!std::isfinite(minimum) || !std::isfinite(maximum)) return fail("the actuator limits must be finite");
  if (!(minimum < maximum)) return fail("the actuator minimum must be below its maximum");
  if (rate_limit && !(std::isfinite(*rate_limit) && *rate_limit > 0.0))
    return fail("the actuator rate limit must be a positive finite number");
  if (anti_windup == AntiWindup::BackCalculation && !(std::isfinite(tracking_time_s) && tracking_time_s > 0.0))
    return fail("back-calculation needs a positive finite tracking time");
  return true;
}

bool SaturatedOptions::IsValid(std::string* error) const {
  auto fail = [&](const char* why) {
    if (error) *error = why;
    return false;
  };
  if (!(std::isfinite(horizon_s) && horizon_s > 0.0)) return fail("the horizon must be a positive finite time");
  if (samples < 3) return fail("at least 3 samples are needed");
  if (max_switches < 1) return fail("max_switches must be at least 1");
  return true;
}

std::string anti_windup_name(AntiWindup a) {
  switch (a) {
    case AntiWindup::None: return "none";
    case AntiWindup::BackCalculation: return "back_calculation";
    case AntiWindup::Conditional: return "conditional";
  }
  return "none";
}

namespace {

// a z + d, an affine function of the loop state.
struct Affine {
  RowVec c;
  double d = 0.0;
  double at(const Vec& z) const { return c.dot(z) + d; }
};

Affine constant(int n, double d) { return {RowVec::Zero(n), d}; }

// C(s) = Ki / s + C0(s) for a compensator with exactly one pole at s = 0.
struct SplitCompensator {
  StateSpace c0;
  bool has_integrator = false;
  double ki = 0.0;
};

SplitCompensator split_compensator(const Zpk& c, bool split) {
  if (!c.is_proper()) throw std::invalid_argument("the compensator must be proper");
  SplitCompensator out;
  if (!split) {
    out.c0 = realize(c);
    return out;
  }
  // The origin as zpk_integrators sees it (a zero there would cancel the integrator's action).
  const double tol = zpk_origin_tolerance(c);
  Roots rest;
  int at_origin = 0;
  for (const Complex& p : c.poles) {
    if (std::abs(p) <= tol) ++at_origin;
    else rest.push_back(p);
  }
  if (at_origin != 1 || zpk_integrators(c) != 1)
    throw std::invalid_argument("anti-windup needs a compensator with exactly one integrator (it has " +
                                std::to_string(zpk_integrators(c)) + ")");
  // C = N / (s D): Ki = N(0) / D(0), C0 = (N - Ki D) / (s D), whose numerator vanishes at s = 0.
  Poly num = poly_from_roots(c.zeros);
  for (double& x : num) x *= c.gain;
  const Poly den = poly_from_roots(rest);
  out.has_integrator = true;
  out.ki = num.back() / den.back();
  const size_t m = std::max(num.size(), den.size());
  Poly diff(m, 0.0);
  for (size_t i = 0; i < num.size(); ++i) diff[m - num.size() + i] += num[i];
  for (size_t i = 0; i < den.size(); ++i) diff[m - den.size() + i] -= out.ki * den[i];
  diff.pop_back();  // the constant term, zero up to rounding: divide by s
  double big = 0.0;
  for (double x : diff) big = std::max(big, std::abs(x));
  for (double& x : diff)
    if (std::abs(x) <= 1e-14 * big) x = 0.0;
  const Poly top = poly_trim(diff);
  Zpk c0;
  c0.poles = rest;
  if (top.empty()) {
    c0.gain = 0.0;  // C = Ki / s exactly
  } else {
    c0.gain = top.front();
    c0.zeros = poly_roots(top);
  }
  out.c0 = realize(c0);
  return out;
}

// One mode of the loop: z' = A z + b, the signals as affine functions of z, and the functions
// whose becoming positive ends the mode.
struct Mode {
  ActuatorMode kind = ActuatorMode::Linear;
  bool frozen = false;
  // Conditional integration at a limit where freezing the integrator would take v back inside
  // and integrating would take it further out: v slides along the limit, the integrator moving
  // at the rate that holds it there (between frozen and integrating: the Filippov solution).
  bool sliding = false;
  Mat A;
  Vec b;
  Affine u;
  Affine y;
  std::vector<Affine> exits;
  bool have_step = false;  // the exact map over one sample interval, computed on first use
  Mat step_phi;
  Vec step_gamma;
};

class Loop {
 public:
  Loop(const Zpk& compensator, const StateSpace& plant, const ActuatorLimits& limits, const SaturatedInputs& in)
      : lim_(limits), in_(in) {
    split_ = split_compensator(compensator, limits.anti_windup != AntiWindup::None);
    g_ = plant;
    const StateSpace& c = split_.c0;
    if (c.D != 0.0 && g_.D != 0.0)
      throw std::invalid_argument("the plant and the compensator both have direct feed-through: the loop through "
                                  "the actuator limits is algebraic");
    nc_ = c.states();
    ii_ = nc_;
    ig_ = ii_ + (split_.has_integrator ? 1 : 0);
    ir_ = ig_ + g_.states();
    n_ = ir_ + (lim_.rate_limit ? 1 : 0);
    if (n_ + 1 > kMaxAug) throw std::invalid_argument("the loop has too many states for the simulation");
    // v = C0c xc + xi + D0 e; D0 Dg = 0, so e may be taken without the u term of y.
    Affine e_free = constant(n_, in_.reference - g_.D * in_.load - in_.output);
    e_free.c.segment(ig_, g_.states()) = -g_.C;
    v_ = constant(n_, 0.0);
    v_.c.segment(0, nc_) = c.C;
    if (split_.has_integrator) v_.c(ii_) = 1.0;
    v_.c += c.D * e_free.c;
    v_.d += c.D * e_free.d;
    scale_ = std::max({std::abs(lim_.minimum), std::abs(lim_.maximum), 1e-300});
  }

  int states() const { return n_; }
  double v(const Vec& z) const { return v_.at(z); }

  Mode& mode(ActuatorMode kind, bool frozen, bool sliding = false) {
    const size_t key = static_cast<size_t>(kind) * 3 + (sliding ? 2 : (frozen ? 1 : 0));
    if (!built_[key]) {
      modes_[key] = build(kind, frozen, sliding);
      built_[key] = true;
    }
    return modes_[key];
  }

  // The mode the loop enters at state z when the actuator's output just before was u_now (with a
  // rate limit, u cannot jump; without one u_now does not matter). With a rate limit the ramp's
  // state z(ir) is set to u_now.
  Mode& choose(Vec& z, double u_now) {
    const double vz = v(z);
    ActuatorMode kind;
    if (lim_.rate_limit) {
      const double target = std::clamp(vz, lim_.minimum, lim_.maximum);
      if (std::abs(target - u_now) > 1e-9 * scale_) {
        kind = target > u_now ? ActuatorMode::RampingUp : ActuatorMode::RampingDown;
      } else {
        kind = vz >= lim_.maximum ? ActuatorMode::AtMaximum
                                  : (vz <= lim_.minimum ? ActuatorMode::AtMinimum : ActuatorMode::Linear);
        if (kind == ActuatorMode::Linear) {
          const double vdot = rate_of_v(mode(ActuatorMode::Linear, false)).at(z);
          if (vdot > *lim_.rate_limit) kind = ActuatorMode::RampingUp;
          if (vdot < -*lim_.rate_limit) kind = ActuatorMode::RampingDown;
        }
      }
      z(ir_) = u_now;
    } else {
      kind = vz > lim_.maximum ? ActuatorMode::AtMaximum
                               : (vz < lim_.minimum ? ActuatorMode::AtMinimum : ActuatorMode::Linear);
      // On a limit (to rounding, as after a located switch): where v goes next decides.
      const double tol = 1e-12 * scale_;
      const bool at_hi = std::abs(vz - lim_.maximum) <= tol, at_lo = std::abs(vz - lim_.minimum) <= tol;
      if (at_hi || at_lo) {
        const double vdot = rate_of_v(mode(ActuatorMode::Linear, false)).at(z);
        kind = at_hi ? (vdot > 0.0 ? ActuatorMode::AtMaximum : ActuatorMode::Linear)
                     : (vdot < 0.0 ? ActuatorMode::AtMinimum : ActuatorMode::Linear);
      }
    }
    bool frozen = false, sliding = false;
    if (lim_.anti_windup == AntiWindup::Conditional && (kind == ActuatorMode::AtMaximum || kind == ActuatorMode::AtMinimum)) {
      const double push = split_.ki * error_of(mode(kind, false)).at(z);
      frozen = push * side(kind) > 0.0;
      // On the limit, frozen, v would turn back inside at once (and integrating it would go out
      // again): slide. Beyond the limit a frozen v just returns toward it.
      const double limit = kind == ActuatorMode::AtMaximum ? lim_.maximum : lim_.minimum;
      if (frozen && std::abs(vz - limit) <= 1e-12 * scale_ && rate_of_v(mode(kind, true)).at(z) * side(kind) < 0.0)
        sliding = true;
    }
    return mode(kind, frozen, sliding);
  }

  // The mode after a slide along a limit ends by its exit `exit` (0: freezing alone keeps v beyond
  // the limit; 1: integrating brings it back inside). Decided by the exit, not by the signs of the
  // rates at z, which are zero to rounding there.
  Mode& leave_slide(const Mode& m, int exit, Vec& z) {
    if (lim_.rate_limit) z(ir_) = m.u.at(z);
    return exit == 0 ? mode(m.kind, true) : mode(ActuatorMode::Linear, false);
  }

  // Exact propagation of z over tau in mode m.
  Vec propagate(Mode& m, const Vec& z, double tau, bool whole_step) {
    if (whole_step) {
      if (!m.have_step) {
        const Mat E = zoh_exponential(m.A, m.b, tau);
        m.step_phi = E.topLeftCorner(n_, n_);
        m.step_gamma = E.topRightCorner(n_, 1);
        m.have_step = true;
      }
      return m.step_phi * z + m.step_gamma;
    }
    const Mat E = zoh_exponential(m.A, m.b, tau);
    return E.topLeftCorner(n_, n_) * z + E.topRightCorner(n_, 1);
  }

 private:
  // +1 where the limit holds u below v, -1 where it holds u above.
  static double side(ActuatorMode k) {
    return (k == ActuatorMode::AtMaximum || k == ActuatorMode::RampingUp) ? 1.0 : -1.0;
  }

  Affine error_of(const Mode& m) const {
    Affine e = m.y;
    e.c = -e.c;
    e.d = in_.reference - e.d;
    return e;
  }

  Affine rate_of_v(const Mode& m) const { return {v_.c * m.A, v_.c.dot(m.b)}; }

  // Adds B * f to the rows from `row` on of (A, b).
  template <class Col>
  static void feed(Mode& m, int row, const Col& B, const Affine& f) {
    const int k = static_cast<int>(B.size());
    m.A.middleRows(row, k) += B * f.c;
    m.b.segment(row, k) += B * f.d;
  }

  Mode build(ActuatorMode kind, bool frozen, bool sliding) const {
    Mode m;
    m.kind = kind;
    m.frozen = frozen || sliding;
    m.sliding = sliding;
    frozen = m.frozen;
    m.A = Mat::Zero(n_, n_);
    m.b = Vec::Zero(n_);
    switch (kind) {
      case ActuatorMode::Linear: m.u = v_; break;
      case ActuatorMode::AtMaximum: m.u = constant(n_, lim_.maximum); break;
      case ActuatorMode::AtMinimum: m.u = constant(n_, lim_.minimum); break;
      default:
        m.u = constant(n_, 0.0);
        m.u.c(ir_) = 1.0;
    }
    m.y = constant(n_, g_.D * (m.u.d + in_.load) + in_.output);
    m.y.c = g_.D * m.u.c;
    m.y.c.segment(ig_, g_.states()) += g_.C;
    const Affine e = error_of(m);
    const StateSpace& c = split_.c0;
    m.A.block(0, 0, nc_, nc_) = c.A;
    feed(m, 0, c.B, e);
    if (split_.has_integrator && !frozen) {
      Affine in = e;
      in.c *= split_.ki;
      in.d *= split_.ki;
      if (lim_.anti_windup == AntiWindup::BackCalculation) {
        in.c += (m.u.c - v_.c) / lim_.tracking_time_s;
        in.d += (m.u.d - v_.d) / lim_.tracking_time_s;
      }
      m.A.row(ii_) += in.c;
      m.b(ii_) += in.d;
    }
    const int ng = g_.states();
    m.A.block(ig_, ig_, ng, ng) += g_.A;
    Affine drive = m.u;
    drive.d += in_.load;
    feed(m, ig_, g_.B, drive);
    if (kind == ActuatorMode::RampingUp) m.b(ir_) = *lim_.rate_limit;
    if (kind == ActuatorMode::RampingDown) m.b(ir_) = -*lim_.rate_limit;

    auto minus = [](Affine a, const Affine& b) {
      a.c -= b.c;
      a.d -= b.d;
      return a;
    };
    const Affine hi = constant(n_, lim_.maximum), lo = constant(n_, lim_.minimum);
    switch (kind) {
      case ActuatorMode::Linear:
        m.exits = {minus(v_, hi), minus(lo, v_)};
        if (lim_.rate_limit) {
          const Affine rate = rate_of_v(m);
          m.exits.push_back(minus(rate, constant(n_, *lim_.rate_limit)));
          m.exits.push_back(minus(constant(n_, -*lim_.rate_limit), rate));
        }
        break;
      case ActuatorMode::AtMaximum: m.exits = {minus(hi, v_)}; break;
      case ActuatorMode::AtMinimum: m.exits = {minus(v_, lo)}; break;
      case ActuatorMode::RampingUp: m.exits = {minus(m.u, v_), minus(m.u, hi)}; break;
      case ActuatorMode::RampingDown: m.exits = {minus(v_, m.u), minus(lo, m.u)}; break;
    }
    if (sliding) {
      // g = dv/dt with the integrator frozen; xi' = -g holds v on the limit. The slide ends when
      // freezing alone would keep v beyond the limit (s g > 0) or integrating would bring it back
      // inside (s (g + Ki e) < 0).
      const Affine g = rate_of_v(m);
      m.A.row(ii_) = -g.c;
      m.b(ii_) = -g.d;
      const double s = side(kind);
      Affine beyond = g, back = g;
      beyond.c *= s;
      beyond.d *= s;
      back.c = -s * (g.c + split_.ki * e.c);
      back.d = -s * (g.d + split_.ki * e.d);
      m.exits = {beyond, back};
      return m;
    }
    if (lim_.anti_windup == AntiWindup::Conditional && kind != ActuatorMode::Linear) {
      // Frozen while Ki e pushes v further past u; the sign change of Ki e ends either state.
      Affine push = e;
      const double s = split_.ki * side(kind) * (frozen ? -1.0 : 1.0);
      push.c *= s;
      push.d *= s;
      m.exits.push_back(push);
    }
    return m;
  }

  ActuatorLimits lim_;
  SaturatedInputs in_;
  SplitCompensator split_;
  StateSpace g_;
  Affine v_;
  int nc_ = 0, ii_ = 0, ig_ = 0, ir_ = 0, n_ = 0;
  double scale_ = 1.0;
  std::array<Mode, 15> modes_;
  std::array<bool, 15> built_{};
};

// The exits that are not already positive at the start of a segment.
std::vector<int> armed_exits(const Mode& m, const Vec& z) {
  std::vector<int> armed;
  for (size_t i = 0; i < m.exits.size(); ++i)
    if (m.exits[i].at(z) <= 0.0) armed.push_back(static_cast<int>(i));
  return armed;
}

bool any_exit(const Mode& m, const std::vector<int>& armed, const Vec& z) {
  for (int i : armed)
    if (m.exits[static_cast<size_t>(i)].at(z) > 0.0) return true;
  return false;
}

// The largest armed exit function at z: positive once the mode has ended.
double exit_level(const Mode& m, const std::vector<int>& armed, const Vec& z) {
  double f = -std::numeric_limits<double>::infinity();
  for (int i : armed) f = std::max(f, m.exits[static_cast<size_t>(i)].at(z));
  return f;
}

// Where the loop was: the state at every sample and at every switching instant, with the mode
// it went on in, so that y can be had exactly at any instant between the samples.
struct Trajectory {
  Eigen::MatrixXd states;              // n x samples
  std::vector<Mode*> modes;            // the mode from each sample on
  std::vector<double> switch_t;        // switching instants, ascending
  std::vector<Eigen::VectorXd> switch_z;
  std::vector<Mode*> switch_mode;
};

// The loop at rest at the equilibrium it holds with the constant reference r0 and no disturbance:
// the Linear mode's fixed point (the rate-limit state, which has no dynamics there, set to u0). The
// layout of the states does not depend on the inputs, so a loop built with inputs {r0, 0, 0}
// gives the start of the loop that then steps from there.
struct RestPoint {
  Vec z;
  double u = 0.0;  // the actuator's output held there
  double y = 0.0;
};

bool within_limits(const ActuatorLimits& limits, double u) {
  const double u_tol = 1e-9 * std::max({std::abs(limits.minimum), std::abs(limits.maximum), std::abs(u)});
  return u >= limits.minimum - u_tol && u <= limits.maximum + u_tol;
}

// `n`: the states of the loop that starts there (its layout is the held loop's). With r0 = 0 all
// states and u are zero at t = 0- (u held at the nearer limit if 0 is outside) and no loop is built.
RestPoint rest_point(const Zpk& compensator, const StateSpace& plant, const ActuatorLimits& limits, double r0, int n) {
  RestPoint rp;
  rp.z = Vec::Zero(n);
  if (r0 == 0.0) {
    rp.u = std::clamp(0.0, limits.minimum, limits.maximum);
    return rp;
  }
  SaturatedInputs held;
  held.reference = r0;
  Loop loop(compensator, plant, limits, held);
  const Mode& lin = loop.mode(ActuatorMode::Linear, false);
  const int k = limits.rate_limit ? n - 1 : n;  // the ramp state comes last and is fixed below
  const Mat A = lin.A.topLeftCorner(k, k);
  const Eigen::FullPivLU<Eigen::MatrixXd> lu{Eigen::MatrixXd(A)};
  if (lu.rank() < k || lu.rcond() < 1e-13)
    throw std::invalid_argument("the loop has no unique equilibrium at the operating reference");
  rp.z.head(k) = lu.solve(Eigen::VectorXd(-lin.b.head(k)));
  rp.u = loop.v(rp.z);
  if (!within_limits(limits, rp.u))
    throw std::invalid_argument("the loop cannot hold the operating reference within the actuator limits");
  rp.u = std::clamp(rp.u, limits.minimum, limits.maximum);
  if (limits.rate_limit) rp.z(n - 1) = rp.u;
  rp.y = lin.y.at(rp.z);
  return rp;
}

SaturatedResponse run(Loop& loop, const ActuatorLimits& limits, const SaturatedOptions& options, Trajectory* keep,
                      const RestPoint& start) {
  const int n = loop.states();
  SaturatedResponse out;
  const int N = options.samples;
  out.dt = options.horizon_s / (N - 1);
  out.y.reserve(static_cast<size_t>(N));
  out.u.reserve(static_cast<size_t>(N));
  out.v.reserve(static_cast<size_t>(N));
  if (keep) {
    keep->states.resize(n, N);
    keep->modes.reserve(static_cast<size_t>(N));
  }

  Vec z = start.z;
  const double u_rest = std::clamp(start.u, limits.minimum, limits.maximum);
  Mode* m = &loop.choose(z, u_rest);
  auto record = [&]() {
    if (keep) {
      keep->states.col(static_cast<Eigen::Index>(out.y.size())) = z;
      keep->modes.push_back(m);
    }
    out.y.push_back(m->y.at(z));
    out.u.push_back(m->u.at(z));
    out.v.push_back(loop.v(z));
  };
  record();
  const double time_tol = 1e-13 * options.horizon_s;
  int switches = 0;
  for (int k = 1; k < N; ++k) {
    const double t_end = k * out.dt;
    double t = (k - 1) * out.dt;
    bool whole = true;
    while (!out.chattering) {
      const double tau = whole ? out.dt : t_end - t;
      if (tau <= 0.0) break;
      const std::vector<int> armed = armed_exits(*m, z);
      Vec z_end = loop.propagate(*m, z, tau, whole);
      if (!any_exit(*m, armed, z_end)) {
        if (m->kind != ActuatorMode::Linear) out.limited_time_s += tau;
        z = z_end;
        break;
      }
      // The first instant an armed exit turns positive, bracketed by [lo, hi] with f(lo) <= 0 < f(hi):
      // regula falsi with the Illinois correction (each trial is an exact propagation), then
      // bisection should it stall.
      double lo = 0.0, hi = tau;
      double f_lo = exit_level(*m, armed, z), f_hi = exit_level(*m, armed, z_end);
      int side = 0;
      for (int it = 0; it < 40 && hi - lo > time_tol; ++it) {
        double mid = (lo * f_hi - hi * f_lo) / (f_hi - f_lo);
        if (!(mid > lo && mid < hi)) mid = 0.5 * (lo + hi);
        const double f = exit_level(*m, armed, loop.propagate(*m, z, mid, false));
        if (f > 0.0) {
          const double step = hi - mid;  // how far this end moved
          hi = mid;
          f_hi = f;
          if (side == 1) f_lo *= 0.5;
          side = 1;
          if (step <= time_tol && hi - time_tol > lo) {  // converged from the right: confirm the bracket
            const double probe = hi - time_tol;
            if (!any_exit(*m, armed, loop.propagate(*m, z, probe, false))) lo = probe;
          }
        } else {
          const double step = mid - lo;
          lo = mid;
          f_lo = f;
          if (side == -1) f_hi *= 0.5;
          side = -1;
          if (step <= time_tol && lo + time_tol < hi) {  // converged from the left: confirm the bracket
            const double probe = lo + time_tol;
            if (any_exit(*m, armed, loop.propagate(*m, z, probe, false))) hi = probe;
          }
        }
      }
      while (hi - lo > time_tol) {
        const double mid = 0.5 * (lo + hi);
        (any_exit(*m, armed, loop.propagate(*m, z, mid, false)) ? hi : lo) = mid;
      }
      z = loop.propagate(*m, z, hi, false);
      if (m->kind != ActuatorMode::Linear) out.limited_time_s += hi;
      t += hi;
      whole = false;
      Mode* next = nullptr;
      if (m->sliding) {
        int fired = armed.front();
        for (int i : armed)
          if (m->exits[static_cast<size_t>(i)].at(z) > m->exits[static_cast<size_t>(fired)].at(z)) fired = i;
        next = &loop.leave_slide(*m, fired, z);
      } else {
        next = &loop.choose(z, m->u.at(z));
      }
      if (next == m) continue;  // a crossing by rounding alone: the same mode goes on
      m = next;
      out.switch_times_s.push_back(t);
      if (keep) {
        keep->switch_t.push_back(t);
        keep->switch_z.push_back(Eigen::VectorXd(z));
        keep->switch_mode.push_back(m);
      }
      if (++switches >= options.max_switches) out.chattering = true;
    }
    record();  // after chattering the state is held
  }
  return out;
}


// y of a simulated loop at any instant, exactly: from the last sample or switching instant before
// it, propagated in its mode; and the searches that refine the figures between the samples.
class ExactTrace {
 public:
  ExactTrace(Loop& loop, const Trajectory& tr, const SaturatedResponse& r) : loop_(loop), tr_(tr), r_(r) {}

  int samples() const { return static_cast<int>(r_.y.size()); }
  double dt() const { return r_.dt; }
  double y(int k) const { return r_.y[static_cast<size_t>(k)]; }

  double y_at(double t) const {
    const int N = samples();
    t = std::clamp(t, 0.0, r_.dt * (N - 1));
    const int k = std::min(N - 1, static_cast<int>(t / r_.dt));
    double t0 = k * r_.dt;
    Vec z = tr_.states.col(k);
    Mode* m = tr_.modes[static_cast<size_t>(k)];
    const auto it = std::upper_bound(tr_.switch_t.begin(), tr_.switch_t.end(), t);
    if (it != tr_.switch_t.begin()) {
      const size_t i = static_cast<size_t>(it - tr_.switch_t.begin()) - 1;
      if (tr_.switch_t[i] > t0) {
        t0 = tr_.switch_t[i];
        z = tr_.switch_z[i];
        m = tr_.switch_mode[i];
      }
    }
    if (t > t0) z = loop_.propagate(*m, z, t - t0, false);
    return m->y.at(z);
  }

  // The largest value of g over [a, b] by golden section (g unimodal there), endpoints included.
  template <class G>
  static double golden_max(double a, double b, G&& g, double* at) {
    const double r = 0.5 * (std::sqrt(5.0) - 1.0);
    double c = b - r * (b - a), d = a + r * (b - a), gc = g(c), gd = g(d);
    for (int it = 0; it < 50 && b - a > 1e-13 * std::max(1.0, b); ++it) {
      if (gc > gd) {
        b = d, d = c, gd = gc, c = b - r * (b - a), gc = g(c);
      } else {
        a = c, c = d, gc = gd, d = a + r * (b - a), gd = g(d);
      }
    }
    if (at) *at = gc > gd ? c : d;
    return std::max(gc, gd);
  }

  // The instant in [a, b] where g changes sign (g(a), g(b) of opposite signs), by bisection.
  template <class G>
  static double crossing(double a, double b, G&& g) {
    const bool up = g(a) <= 0.0;
    for (int it = 0; it < 60 && b - a > 1e-14 * std::max(1.0, b); ++it) {
      const double c = 0.5 * (a + b);
      ((g(c) <= 0.0) == up ? a : b) = c;
    }
    return 0.5 * (a + b);
  }

  // sup over t of s (y(t) - ref): the largest sample, refined around the three highest local
  // maxima of the samples.
  double peak_above(double ref, double s) const {
    const int N = samples();
    auto w_k = [&](int k) { return s * (y(k) - ref); };
    auto w = [&](double t) { return s * (y_at(t) - ref); };
    double peak = -std::numeric_limits<double>::infinity();
    std::vector<std::pair<double, int>> tops;
    for (int k = 0; k < N; ++k) {
      peak = std::max(peak, w_k(k));
      if (k > 0 && k + 1 < N && w_k(k) >= w_k(k - 1) && w_k(k) >= w_k(k + 1)) tops.push_back({w_k(k), k});
    }
    std::sort(tops.begin(), tops.end(), [](const auto& a, const auto& b) { return a.first > b.first; });
    for (size_t i = 0; i < tops.size() && i < 3; ++i) {
      const int k = tops[i].second;
      peak = std::max(peak, golden_max((k - 1) * r_.dt, (k + 1) * r_.dt, w, nullptr));
    }
    return peak;
  }

  // The last instant |y - target| leaves the band b, between the samples too (every later sampled
  // excursion above b/2 is searched); nullopt when outside the band at the horizon.
  std::optional<double> last_band_exit(double target, double b) const {
    const int N = samples();
    const double dt = r_.dt;
    auto out_of_band = [&](double t) { return std::abs(y_at(t) - target) - b; };
    auto e_k = [&](int k) { return std::abs(y(k) - target); };
    int last = -1;
    for (int k = N - 1; k >= 0; --k)
      if (e_k(k) > b) {
        last = k;
        break;
      }
    if (last == N - 1) return std::nullopt;
    double ts = last < 0 ? 0.0 : crossing(last * dt, (last + 1) * dt, out_of_band);
    for (int k = std::max(1, last + 1); k + 1 < N; ++k) {
      if (!(e_k(k) >= e_k(k - 1) && e_k(k) >= e_k(k + 1) && e_k(k) > 0.5 * b)) continue;
      double at = 0.0;
      const double top = golden_max((k - 1) * dt, (k + 1) * dt, [&](double t) { return std::abs(y_at(t) - target); }, &at);
      if (top > b) ts = crossing(at, (k + 1) * dt, out_of_band);
    }
    return ts;
  }

 private:
  Loop& loop_;
  const Trajectory& tr_;
  const SaturatedResponse& r_;
};

}  // namespace

SaturatedResponse simulate_saturated(const Zpk& compensator, const StateSpace& plant, const ActuatorLimits& limits,
                                     const SaturatedInputs& inputs, const SaturatedOptions& options) {
  std::string why;
  if (!limits.IsValid(&why) || !options.IsValid(&why)) throw std::invalid_argument(why);
  Loop loop(compensator, plant, limits, inputs);
  const RestPoint start = rest_point(compensator, plant, limits, inputs.initial_reference, loop.states());
  return run(loop, limits, options, nullptr, start);
}

SaturatedStepFigures saturated_step_figures(const Zpk& compensator, const StateSpace& plant,
                                            const ActuatorLimits& limits, const SaturatedInputs& inputs,
                                            const SaturatedOptions& options, double target, double u_final,
                                            double band) {
  std::string why;
  if (!limits.IsValid(&why) || !options.IsValid(&why)) throw std::invalid_argument(why);
  Loop loop(compensator, plant, limits, inputs);
  const RestPoint start = rest_point(compensator, plant, limits, inputs.initial_reference, loop.states());
  Trajectory tr;
  SaturatedStepFigures f;
  f.response = run(loop, limits, options, &tr, start);
  f.target = target;
  f.reachable = within_limits(limits, u_final);
  if (target == 0.0 || f.response.chattering) return f;
  const ExactTrace trace(loop, tr, f.response);
  const double s = target > 0.0 ? 1.0 : -1.0, T = std::abs(target);

  const double peak = trace.peak_above(0.0, s);
  f.overshoot_pct = std::max(0.0, (peak - T) / T * 100.0);

  // Rise time 10 % -> 90 %: the first sample past each level, the crossing refined before it.
  auto first_past = [&](double level) -> std::optional<double> {
    for (int k = 1; k < trace.samples(); ++k)
      if (s * trace.y(k) >= level)
        return ExactTrace::crossing((k - 1) * trace.dt(), k * trace.dt(),
                                    [&](double t) { return s * trace.y_at(t) - level; });
    return std::nullopt;
  };
  const auto t10 = first_past(0.1 * T), t90 = first_past(0.9 * T);
  if (t10 && t90) f.rise_time_s = *t90 - *t10;

  if (f.reachable) f.settling_time_s = trace.last_band_exit(target, band * T);
  return f;
}

SaturatedDisturbanceFigures saturated_disturbance_figures(const Zpk& compensator, const StateSpace& plant,
                                                          const ActuatorLimits& limits, const SaturatedInputs& inputs,
                                                          const SaturatedOptions& options, bool integral_action,
                                                          double band) {
  std::string why;
  if (!limits.IsValid(&why) || !options.IsValid(&why)) throw std::invalid_argument(why);
  if (inputs.reference != inputs.initial_reference)
    throw std::invalid_argument("a disturbance response holds the reference: reference must equal initial_reference");
  Loop loop(compensator, plant, limits, inputs);
  const RestPoint start = rest_point(compensator, plant, limits, inputs.initial_reference, loop.states());
  Trajectory tr;
  SaturatedDisturbanceFigures f;
  f.response = run(loop, limits, options, &tr, start);
  f.baseline = start.y;
  f.held_u = start.u;
  // The u that holds the baseline against the steps: u0 - d, less d_o / G(0) for an output step
  // (nothing for a plant with an integrator, whose G(0) is unbounded).
  double u_final = start.u - inputs.load;
  if (inputs.output != 0.0) {
    const Eigen::FullPivLU<Eigen::MatrixXd> lu{Eigen::MatrixXd(plant.A)};
    if (plant.states() == 0) u_final -= inputs.output / plant.D;
    else if (lu.rank() == plant.states() && lu.rcond() > 1e-13) {
      const double g0 = plant.D - (plant.C * lu.solve(Eigen::VectorXd(plant.B)))(0);
      u_final -= inputs.output / g0;
    }
  }
  f.rejected = integral_action && std::isfinite(u_final) && within_limits(limits, u_final);
  if (f.response.chattering) return f;
  const ExactTrace trace(loop, tr, f.response);
  f.peak = std::max({0.0, trace.peak_above(f.baseline, 1.0), trace.peak_above(f.baseline, -1.0)});
  if (f.rejected) f.recovery_time_s = f.peak > 0.0 ? trace.last_band_exit(f.baseline, band * f.peak) : std::optional<double>(0.0);
  return f;
}

}  // namespace pw
