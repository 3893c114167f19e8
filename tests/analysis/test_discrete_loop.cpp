// The sampled loop: exact ZOH plant (with a fractional dead time), closed-loop poles in the z-plane,
// the sampled step, and L(e^{jwT}) margins. References are closed forms, named per check.
#include <catch2/catch.hpp>

#include <cmath>

#include "polewright/analysis/closed_loop.hpp"
#include "polewright/analysis/discrete_loop.hpp"
#include "polewright/model/discretize.hpp"
#include "polewright/model/eigen.hpp"
#include "polewright/model/state_space.hpp"
#include "support/make_zpk.hpp"

using namespace pw;
using pw::test::make;
using pw::test::plant_of;

namespace {
DiscreteLoopOptions loop_opts(double T, int d = 0) {
  DiscreteLoopOptions o;
  o.sample_time_s = T;
  o.compute_delay = d;
  return o;
}
}  // namespace

TEST_CASE("sampled plant: ZOH with a fractional dead time is exact at the samples", "[export][discrete_loop]") {
  // Closed form: the step response of 3 e^(-s tau) / (s + 2) is (3/2)(1 - e^(-2 (t - tau))) for
  // t >= tau; the ZOH plant driven by a unit step from k = 0 must give it at t = kT.
  const double T = 0.1, tau = 0.23, a = 2.0;
  for (int d : {0, 1}) {
    const SampledPlant sp = sample_plant(plant_of(make(3.0, {}, {-a}), tau), T, d);
    CHECK(sp.delay_samples == 2 + d);
    CHECK(sp.fraction == Approx(0.3).epsilon(1e-9));
    const StateSpace g = sampled_plant_state_space(sp);
    Eigen::VectorXd x = Eigen::VectorXd::Zero(g.states());
    for (int k = 0; k < 40; ++k) {
      const double y = Eigen::RowVectorXd(g.C).dot(x) + g.D;
      const double t = k * T - d * T;  // the computation delay shifts the input by d samples
      const double want = t >= tau ? 1.5 * (1.0 - std::exp(-a * (t - tau))) : 0.0;
      CHECK(y == Approx(want).margin(1e-13));
      x = Eigen::MatrixXd(g.A) * x + Eigen::VectorXd(g.B);
    }
    // The frequency response agrees with the state space it stands for.
    for (double w : {0.3, 3.0, 30.0}) {
      const Complex z = std::polar(1.0, w * T);
      CHECK(std::abs(sampled_plant_response(sp, z) - ss_evaluate(g, z)) < 1e-12);
    }
  }
  // ZOH table entry (closed form): 1/(s + a) -> (1 - e^(-aT)) / (a (z - e^(-aT))).
  const SampledPlant s0 = sample_plant(plant_of(make(1.0, {}, {-a})), T, 0);
  const Complex z(0.3, 0.8);
  CHECK(std::abs(sampled_plant_response(s0, z) - (1.0 - std::exp(-a * T)) / (a * (z - std::exp(-a * T)))) < 1e-14);
  CHECK_THROWS_AS(sample_plant(plant_of(make(1.0, {}, {-a})), 0.0, 0), std::invalid_argument);
  CHECK_THROWS_AS(sampled_plant_state_space(sample_plant(plant_of(make(1.0, {}, {-a}), 10.0), 0.01, 0)),
                  std::invalid_argument);  // 1000 samples of dead time do not fit
}

TEST_CASE("sampled integrator loop: pole, step and ramp error in closed form", "[export][discrete_loop]") {
  // Plant 1/s behind a ZOH is T/(z - 1); with C = K the closed-loop pole is z = 1 - K T and
  // y[k] = 1 - (1 - K T)^k (closed form). Ramp error 1/Kv with Kv = K.
  const double T = 0.01, K = 20.0;
  DiscreteLoopOptions o = loop_opts(T);
  o.error_signal = TestSignal::Ramp;
  const DiscreteLoopAnalysis a = analyze_discrete_loop(make(K, {}, {}), plant_of(make(1.0, {}, {0.0})), o);
  REQUIRE(a.stable);
  REQUIRE(a.poles.size() == 1);
  const double z = 1.0 - K * T;
  CHECK(a.poles[0].z.real() == Approx(z).epsilon(1e-12));
  CHECK(a.poles[0].s.real() == Approx(std::log(z) / T).epsilon(1e-12));
  REQUIRE(a.step);
  CHECK(a.step->final_value == Approx(1.0).epsilon(1e-12));
  CHECK(*a.step->overshoot_pct == Approx(0.0).margin(1e-9));
  // Settling into 2 %: the last k with z^k > 0.02, then linear interpolation to the next sample.
  int last = 0;
  while (std::pow(z, last + 1) > 0.02) ++last;
  const double e0 = std::pow(z, last), e1 = std::pow(z, last + 1);
  CHECK(*a.step->settling_time_s == Approx((last + (e0 - 0.02) / (e0 - e1)) * T).epsilon(1e-9));
  CHECK(*a.step->peak_effort == Approx(K).epsilon(1e-12));  // u[0] = K e[0] = K
  CHECK(a.steady_state.loop_type == 1);
  REQUIRE(a.steady_state.error);
  CHECK(*a.steady_state.error == Approx(1.0 / K).epsilon(1e-12));
}

TEST_CASE("the ZOH loop K / (s (s + 1)) at T = 1 is stable up to K = 2.39", "[export][discrete_loop]") {
  // Jury test on z^2 + (K b1 - 1 - a) z + (a + K b0), a = e^-1, b1 = e^-1, b0 = 1 - 2 e^-1:
  // |a + K b0| < 1 gives K < (1 - e^-1) / (1 - 2 e^-1) = 2.392 (a textbook example, from memory;
  // the bound recomputed here in closed form).
  const double limit = (1.0 - std::exp(-1.0)) / (1.0 - 2.0 * std::exp(-1.0));
  const Plant g = plant_of(make(1.0, {}, {0.0, -1.0}));
  CHECK(analyze_discrete_loop(make(0.98 * limit, {}, {}), g, loop_opts(1.0)).stable);
  CHECK(!analyze_discrete_loop(make(1.02 * limit, {}, {}), g, loop_opts(1.0)).stable);
  // The gain margin of the sampled loop at K = 1 is that limit (20 log10 2.392 = 7.58 dB), at Nyquist
  // or below it.
  const DiscreteLoopAnalysis a = analyze_discrete_loop(make(1.0, {}, {}), g, loop_opts(1.0));
  REQUIRE(a.frequency.gain_margin_db);
  CHECK(*a.frequency.gain_margin_db == Approx(20.0 * std::log10(limit)).epsilon(1e-6));
}

TEST_CASE("sampled fast, the loop keeps its continuous figures", "[export][discrete_loop]") {
  // Reference: the continuous figures of the same loop from frequency_metrics (the existing,
  // scipy-verified path); at 2000 times the crossover the ZOH costs wT/2 = 0.05 deg.
  const Zpk c = make(4.68, {-2.9}, {-5.4});
  const Plant g = plant_of(make(4.0, {}, {0.0, -2.0}));
  const FrequencyMetrics fc = frequency_metrics(zpk_series(c, g.tf), 0.0, FrequencyOptions{});
  const double T = 2.0 * M_PI / (2000.0 * *fc.crossover_rad_s);
  DiscretizeOptions d;
  d.sample_time_s = T;
  const DiscreteLoopAnalysis a = analyze_discrete_loop(discretize(c, d), g, loop_opts(T));
  REQUIRE(a.stable);
  CHECK(*a.frequency.crossover_rad_s == Approx(*fc.crossover_rad_s).epsilon(1e-3));
  CHECK(*a.frequency.phase_margin_deg == Approx(*fc.phase_margin_deg).margin(0.2));
  CHECK(!fc.gain_margin_db);                  // unbounded in continuous time
  REQUIRE(a.frequency.gain_margin_db);        // finite once sampled, and large
  CHECK(*a.frequency.gain_margin_db > 40.0);
}

TEST_CASE("sampled slowly, the phase margin drops by about wT/2 + d wT", "[export][discrete_loop]") {
  // Field notes (common practice approximation): the ZOH adds about wT/2 of phase lag and a
  // computation delay of d samples d wT. A pure gain is not distorted by the discretisation, so
  // the drop is the hold and the delay alone; checked to 10 % of the predicted drop.
  const Plant g = plant_of(make(1.0, {}, {0.0, -1.0}));
  const FrequencyMetrics fc = frequency_metrics(g.tf, 0.0, FrequencyOptions{});
  for (int d : {0, 1}) {
    const double T = 0.1;
    const DiscreteLoopAnalysis a = analyze_discrete_loop(make(1.0, {}, {}), g, loop_opts(T, d));
    REQUIRE(a.frequency.phase_margin_deg);
    const double w = *a.frequency.crossover_rad_s;
    const double predicted = (w * T / 2.0 + d * w * T) * 180.0 / M_PI;
    const double drop = *fc.phase_margin_deg - *a.frequency.phase_margin_deg;
    INFO("d = " << d << ", drop " << drop << " deg, predicted " << predicted << " deg");
    CHECK(drop == Approx(predicted).epsilon(0.1));
  }
}

TEST_CASE("discrete loop options are validated", "[export][discrete_loop]") {
  std::string err;
  CHECK(!loop_opts(0.0).IsValid(&err));
  CHECK(!loop_opts(NAN).IsValid(&err));
  CHECK(!loop_opts(0.1, -1).IsValid(&err));
  CHECK(loop_opts(0.1, 2).IsValid(&err));
  CHECK(sampled_loop_response(make(2.0, {}, {}), sample_plant(plant_of(make(1.0, {}, {-1.0})), 0.1, 0), 0.0).real() ==
        Approx(2.0).epsilon(1e-14));
}

TEST_CASE("a dead time of many samples: 91 delayed samples in the loop", "[export][discrete_loop]") {
  // Greenhouse-like loop: 1 / (600 s + 1) e^(-90 s) under a PI 4 (s + 0.0025) / s, sampled at 1 s
  // with one sample of computation delay. Field notes (common practice): the hold and the delay cost
  // about wT/2 + wT of phase; the continuous margin comes from frequency_metrics with the exact delay.
  const Plant g = plant_of(make(1.0 / 600.0, {}, {-1.0 / 600.0}), 90.0);
  const Zpk c = make(4.0, {-0.0025}, {0.0});
  const FrequencyMetrics fc = frequency_metrics(zpk_series(c, g.tf), 90.0, FrequencyOptions{});
  const double T = 1.0;
  DiscretizeOptions d;
  d.sample_time_s = T;
  const DiscreteLoopAnalysis a = analyze_discrete_loop(discretize(c, d), g, loop_opts(T, 1));
  CHECK(a.states == 1 + 91 + 1);
  REQUIRE(a.stable);
  REQUIRE(a.frequency.phase_margin_deg);
  const double w = *a.frequency.crossover_rad_s;
  const double predicted = 1.5 * w * T * 180.0 / M_PI;
  CHECK(*fc.phase_margin_deg - *a.frequency.phase_margin_deg == Approx(predicted).epsilon(0.1));
  REQUIRE(a.step);
  CHECK(a.step->final_value == Approx(1.0).epsilon(1e-9));  // PI: no steady-state error
}

TEST_CASE("the sampled loop is closed by close_loop's interconnection algebra", "[export][discrete_loop]") {
  // One template closes both loops: on a loop small enough for the fixed-size StateSpace, the
  // sampled loop's closed-loop poles (dynamic-size path) equal the eigenvalues of close_loop on
  // the same sampled plant and discrete compensator. Plant 4/(s(s+2)) with a 1.5-sample delay
  // (whole samples plus a fraction: extra states), lead 4.68 (s+2.9)/(s+5.4) by Tustin at 0.05 s.
  const double T = 0.05;
  Zpk g;
  g.gain = 4;
  g.poles = {Complex(0, 0), Complex(-2, 0)};
  Zpk c;
  c.gain = 4.68;
  c.zeros = {Complex(-2.9, 0)};
  c.poles = {Complex(-5.4, 0)};
  DiscretizeOptions d;
  d.sample_time_s = T;
  const Zpk cd = discretize(c, d);
  const SampledPlant sp = sample_plant(plant_of(g, 1.5 * T), T, 0);
  for (double k : {0.5, 1.0, 3.0}) {
    const ClosedLoop fixed = close_loop(realize(cd), sampled_plant_state_space(sp), k);
    const CVec ev = eigenvalues_balanced(fixed.A);
    const DiscretePoles dyn = discrete_closed_loop_poles(cd, sp, k, 0.02);
    REQUIRE(static_cast<size_t>(ev.size()) == dyn.poles.size());
    for (const DiscretePole& p : dyn.poles) {
      double nearest = INFINITY;
      for (int i = 0; i < ev.size(); ++i) nearest = std::min(nearest, std::abs(ev(i) - p.z));
      CHECK(nearest <= 1e-12 * std::max(1.0, std::abs(p.z)));
    }
  }
}

namespace {
// Reference for the step between samples: the hybrid loop K / (s (s + 1)) with a dead time
// n T + delta integrated by classical fourth-order Runge-Kutta on T / 1000 steps (the input switches
// on the grid), the compensator a gain K acting on y(kT). Figures read off the fine output.
struct FineStep {
  double overshoot_pct, settling_s, peak_at_samples_pct;
};
FineStep rk4_hybrid(double K, double T, double dead_s, double horizon_s, double band) {
  const int fine = 1000;
  const double h = T / fine;
  const int shift = static_cast<int>(std::lround(dead_s / h));
  double x1 = 0.0, x2 = 0.0;  // y = x1, x1' = x2, x2' = -x2 + v
  std::vector<double> u, y;
  const int n = static_cast<int>(std::ceil(horizon_s / T)) + 1;
  double peak_samples = 0.0;
  for (int k = 0; k < n; ++k) {
    peak_samples = std::max(peak_samples, x1);
    u.push_back(K * (1.0 - x1));
    for (int i = k * fine; i < (k + 1) * fine; ++i) {
      const long j = (i - shift) >= 0 ? (i - shift) / fine : -1;
      const double v = j >= 0 ? u[static_cast<size_t>(j)] : 0.0;
      y.push_back(x1);
      auto f2 = [&](double a2) { return -a2 + v; };
      const double k1a = x2, k1b = f2(x2);
      const double k2a = x2 + 0.5 * h * k1b, k2b = f2(x2 + 0.5 * h * k1b);
      const double k3a = x2 + 0.5 * h * k2b, k3b = f2(x2 + 0.5 * h * k2b);
      const double k4a = x2 + h * k3b, k4b = f2(x2 + h * k3b);
      x1 += h / 6.0 * (k1a + 2 * k2a + 2 * k3a + k4a);
      x2 += h / 6.0 * (k1b + 2 * k2b + 2 * k3b + k4b);
    }
  }
  FineStep r{};
  double peak = 0.0;
  for (double v : y) peak = std::max(peak, v);
  r.overshoot_pct = 100.0 * (peak - 1.0);
  r.peak_at_samples_pct = 100.0 * (peak_samples - 1.0);
  long last = -1;
  for (long i = static_cast<long>(y.size()) - 1; i >= 0; --i)
    if (std::abs(y[static_cast<size_t>(i)] - 1.0) > band) {
      last = i;
      break;
    }
  const double e0 = std::abs(y[static_cast<size_t>(last)] - 1.0), e1 = std::abs(y[static_cast<size_t>(last + 1)] - 1.0);
  r.settling_s = (last + (e0 - band) / (e0 - e1)) * h;
  return r;
}
}  // namespace

TEST_CASE("between samples: overshoot and settling of the continuous output match a fine hybrid simulation",
          "[discrete_loop][between_samples]") {
  // K / (s (s + 1)), K = 1, sampled slowly (T = 0.5 s, 0.6 s): the output peaks between the
  // instants. Dead times: none, 0.3 of a sample (the input switches inside the interval), 1.3.
  for (double T : {0.5, 0.6}) {
    for (double dead_frac : {0.0, 0.3, 1.3}) {
      INFO("T " << T << " dead " << dead_frac);
      DiscreteLoopOptions o = loop_opts(T);
      o.between_samples = true;
      const DiscreteLoopAnalysis a = analyze_discrete_loop(make(1.0, {}, {}), plant_of(make(1.0, {}, {0.0, -1.0}), dead_frac * T), o);
      REQUIRE(a.stable);
      REQUIRE(a.step);
      REQUIRE(a.step_at_samples);
      const FineStep ref = rk4_hybrid(1.0, T, dead_frac * T, a.step->horizon_s, 0.02);
      CHECK(a.step->final_value == Approx(1.0).epsilon(1e-9));  // type-1 loop
      // Tolerances: the RK4 grid of T / 1000 places the peak to (w h)^2 / 2 ~ 1e-7 of y, the
      // settling crossing to about one fine step.
      CHECK(*a.step->overshoot_pct == Approx(ref.overshoot_pct).margin(1e-4));
      CHECK(*a.step->settling_time_s == Approx(ref.settling_s).margin(2.0 * T / 1000.0));
      CHECK(*a.step_at_samples->overshoot_pct == Approx(ref.peak_at_samples_pct).margin(1e-6));
      CHECK(*a.step->overshoot_pct >= *a.step_at_samples->overshoot_pct);
      REQUIRE(a.step->peak_time_s);
    }
  }
}

TEST_CASE("between samples: off by default, the step figures are those at the instants", "[discrete_loop][between_samples]") {
  const DiscreteLoopAnalysis a = analyze_discrete_loop(make(1.0, {}, {}), plant_of(make(1.0, {}, {0.0, -1.0})), loop_opts(0.5));
  REQUIRE(a.step);
  CHECK(!a.step_at_samples);
  const FineStep ref = rk4_hybrid(1.0, 0.5, 0.0, a.step->horizon_s, 0.02);
  CHECK(*a.step->overshoot_pct == Approx(ref.peak_at_samples_pct).margin(1e-6));
  DiscreteLoopOptions o = loop_opts(0.5);
  o.points_per_sample = 3;
  std::string err;
  CHECK(!o.IsValid(&err));
  CHECK(err.find("points_per_sample") != std::string::npos);
}

TEST_CASE("sampled plant response: modal, Hessenberg and dense forms agree with the state space", "[discrete_loop]") {
  // Reference: ss_evaluate of sampled_plant_state_space (C (zI - A)^-1 B + D of the plant with its
  // delay registers), independent of the forms kept for speed. A resonant plant with a fractional
  // dead time has well-conditioned modes (modal form); a double integrator is defective (Phi has
  // a Jordan block: Hessenberg form); with both cleared the dense LU solve answers.
  const double T = 0.01;
  const Complex mode = std::polar(45.0, M_PI - std::acos(0.03));
  const Plant resonant = plant_of(make(6.0e4, {-20.0}, {-5.0, mode, std::conj(mode)}), 0.0137);
  const Plant double_integrator = plant_of(make(3.0, {}, {0.0, 0.0}));
  for (const Plant* g : {&resonant, &double_integrator}) {
    SampledPlant sp = sample_plant(*g, T, 1);
    const bool modal = !sp.lambda.empty();
    CHECK(modal == (g == &resonant));
    CHECK(sp.hess.rows() == sp.core.states());
    const StateSpace ss = sampled_plant_state_space(sp);
    SampledPlant hess_only = sp, dense = sp;
    hess_only.lambda.clear();
    dense.lambda.clear();
    dense.hess.resize(0, 0);
    for (double w : {0.5, 7.0, 44.0, 45.0, 150.0, 310.0}) {
      const Complex z = std::polar(1.0, w * T);
      const Complex want = ss_evaluate(ss, z);
      INFO("w = " << w);
      CHECK(std::abs(sampled_plant_response(sp, z) - want) <= 1e-11 * std::abs(want));
      CHECK(std::abs(sampled_plant_response(hess_only, z) - want) <= 1e-11 * std::abs(want));
      CHECK(std::abs(sampled_plant_response(dense, z) - want) <= 1e-11 * std::abs(want));
    }
  }
}

TEST_CASE("modal step at the instants agrees with the state recurrence", "[discrete_loop]") {
  // The screening's modal expansion against the recurrence x[k+1] = A x[k] + B (the default): a
  // lead + notch on a resonant plant with one sample of delay, and with three samples of delay
  // (a Jordan chain at z = 0: the expansion is refused and the recurrence answers, same figures).
  const double T = 0.002;
  const Complex mode = std::polar(45.0, M_PI - std::acos(0.03));
  const Plant g = plant_of(make(6.0e4, {}, {0.0, -5.0, mode, std::conj(mode)}));
  const Complex nz = std::polar(45.0, M_PI - std::acos(0.03)), np = std::polar(45.0, M_PI - std::acos(0.7));
  const Zpk c = make(0.6, {-6.0, nz, std::conj(nz)}, {-15.0, np, std::conj(np)});
  DiscretizeOptions d;
  d.sample_time_s = T;
  const Zpk cd = discretize(c, d);
  for (int delay : {1, 3}) {
    DiscreteLoopOptions o = loop_opts(T, delay);
    const DiscreteLoopAnalysis rec = analyze_discrete_loop(cd, g, o);
    o.modal_step = true;
    const DiscreteLoopAnalysis mod = analyze_discrete_loop(cd, g, o);
    INFO("delay " << delay);
    REQUIRE(rec.step);
    REQUIRE(mod.step);
    CHECK(mod.step->samples == rec.step->samples);
    REQUIRE(rec.step->overshoot_pct);
    REQUIRE(mod.step->overshoot_pct);
    CHECK(*mod.step->overshoot_pct == Approx(*rec.step->overshoot_pct).epsilon(1e-9).margin(1e-9));
    REQUIRE(rec.step->peak_effort);
    REQUIRE(mod.step->peak_effort);
    CHECK(*mod.step->peak_effort == Approx(*rec.step->peak_effort).epsilon(1e-9));
    REQUIRE(rec.step->settling_time_s);
    REQUIRE(mod.step->settling_time_s);
    CHECK(*mod.step->settling_time_s == Approx(*rec.step->settling_time_s).epsilon(1e-9));
    REQUIRE(rec.step->rise_time_s);
    CHECK(*mod.step->rise_time_s == Approx(*rec.step->rise_time_s).epsilon(1e-9));
  }
}

TEST_CASE("analyze_discrete_loop never reuses another plant's sampling", "[discrete_loop]") {
  // The sampled plant is kept per thread between calls on the same plant (a search evaluates many
  // compensators on one plant). A plant that differs in its dead time only, or in its gain only,
  // must get its own: the phase margins differ by the dead time's phase at crossover.
  const double T = 0.01;
  const Zpk cd = make(0.5, {}, {});
  const Plant g1 = plant_of(make(2.0, {}, {0.0, -3.0}));
  const Plant g2 = plant_of(make(2.0, {}, {0.0, -3.0}), 0.2);
  Plant g3 = g1;
  g3.tf.gain = 2.5;
  const DiscreteLoopAnalysis a = analyze_discrete_loop(cd, g1, loop_opts(T));
  const DiscreteLoopAnalysis b = analyze_discrete_loop(cd, g2, loop_opts(T));
  const DiscreteLoopAnalysis c = analyze_discrete_loop(cd, g3, loop_opts(T));
  const DiscreteLoopAnalysis a2 = analyze_discrete_loop(cd, g1, loop_opts(T));
  REQUIRE(a.frequency.phase_margin_deg);
  REQUIRE(b.frequency.phase_margin_deg);
  REQUIRE(c.frequency.phase_margin_deg);
  REQUIRE(a2.frequency.phase_margin_deg);
  // L = 1 / (s (s + 3)) crosses near 0.32 rad/s: 0.2 s of dead time costs about 3.7 deg (w tau).
  CHECK(*a.frequency.phase_margin_deg - *b.frequency.phase_margin_deg > 2.0);
  CHECK(*a.frequency.phase_margin_deg - *c.frequency.phase_margin_deg > 1.0);
  CHECK(*a2.frequency.phase_margin_deg == *a.frequency.phase_margin_deg);
  // A different sample time on the same plant too: the hold costs about w T / 2, 2.8 deg at 0.3 s.
  const DiscreteLoopAnalysis d = analyze_discrete_loop(cd, g1, loop_opts(0.3));
  REQUIRE(d.frequency.phase_margin_deg);
  CHECK(std::abs(*d.frequency.phase_margin_deg - *a.frequency.phase_margin_deg) > 1.0);
}
