#include <catch2/catch.hpp>

#include <cmath>

#include "polewright/requirements/evaluate.hpp"

using namespace pw;

namespace {
Zpk lead() {  // 4.68 (s + 2.9) / (s + 5.4): textbook worked root-locus lead example (from memory)
  Zpk c;
  c.gain = 4.68;
  c.zeros = {Complex(-2.9, 0)};
  c.poles = {Complex(-5.4, 0)};
  return c;
}
Plant servo(double k = 4) {  // 4 / (s (s + 2))
  Plant g;
  g.tf.gain = k;
  g.tf.poles = {Complex(0, 0), Complex(-2, 0)};
  return g;
}
}  // namespace

TEST_CASE("published lead design puts the dominant poles near -2 +- j3.46", "[requirements][evaluate]") {
  // Target zeta 0.5, wn 4; the design lands at about -1.99 +- j3.45 (textbook worked example, from memory;
  // numpy/scipy fixture: -1.99425 +- j3.45488).
  RequirementSet req;
  req.items = {{MetricId::DampingRatio, Sense::AtLeast, 0.48}, {MetricId::NaturalFrequency, Sense::AtLeast, 3.9}};
  const Region region = region_from_requirements(req);
  const LoopEvaluation e = evaluate_loop(lead(), servo(), req, region, AnalysisOptions{});
  REQUIRE(e.stable);
  REQUIRE(e.dominant_pole);
  CHECK(e.dominant_pole->real() == Approx(-1.99).margin(0.01));
  CHECK(std::abs(e.dominant_pole->imag()) == Approx(3.45).margin(0.01));
  CHECK(e.values[static_cast<size_t>(MetricId::DampingRatio)].value.value() == Approx(0.5).margin(0.01));
  CHECK(e.values[static_cast<size_t>(MetricId::NaturalFrequency)].value.value() == Approx(3.99).margin(0.01));
  CHECK(e.region_ok);
  const Evaluation all = evaluate_all(lead(), {servo()}, req, region, AnalysisOptions{});
  CHECK(all.all_met);
  CHECK(all.total_violation == 0.0);
  // Peak effort u(0+) = 4.68: the compensator's high-frequency gain (strictly proper plant).
  CHECK(e.values[static_cast<size_t>(MetricId::PeakEffort)].value.value() == Approx(4.68).epsilon(1e-9));
}

TEST_CASE("worst case over variants and the unstable-loop rule", "[requirements][evaluate]") {
  RequirementSet req;
  req.items = {{MetricId::Overshoot, Sense::AtMost, 25.0}, {MetricId::PhaseMargin, Sense::AtLeast, 40.0}};
  const Region region = region_from_requirements(req);
  Plant heavy = servo(8);
  heavy.name = "double gain";
  const Evaluation ev = evaluate_all(lead(), {servo(), heavy}, req, region, AnalysisOptions{});
  REQUIRE(ev.outcomes.size() == 2);
  // Doubling the plant gain raises overshoot and lowers the phase margin: the variant is worst.
  CHECK(ev.outcomes[0].worst_plant == 1);
  CHECK(ev.outcomes[1].worst_plant == 1);
  CHECK(ev.worst_plant == ev.outcomes[0].worst_plant);
  // K/(s(s+1)(s+2)) with K = 8 > 6 is unstable (Routh): nothing is met.
  Plant third;
  third.tf.gain = 8;
  third.tf.poles = {Complex(0, 0), Complex(-1, 0), Complex(-2, 0)};
  const Evaluation un = evaluate_all(Zpk{}, {third}, req, region, AnalysisOptions{});
  CHECK_FALSE(un.all_stable);
  CHECK_FALSE(un.all_met);
  CHECK_FALSE(un.plants[0].step);
  for (const RequirementOutcome& o : un.outcomes) CHECK_FALSE(o.met);
}

TEST_CASE("screening needs compute only what the requirements use", "[requirements][evaluate]") {
  RequirementSet req;
  req.items = {{MetricId::PhaseMargin, Sense::AtLeast, 40.0}};
  EvaluationNeeds lean;
  lean.everything = false;
  const LoopEvaluation e = evaluate_loop(lead(), servo(), req, Region{}, AnalysisOptions::Screening(AnalysisOptions{}), lean);
  CHECK_FALSE(e.step);
  CHECK(e.values[static_cast<size_t>(MetricId::PhaseMargin)].value);
}

TEST_CASE("delay margin of K / (s (s + a)) against its closed form", "[requirements][evaluate][delay_margin]") {
  // Closed form: |L(jw)| = 1 at w_c^2 = (sqrt(a^4 + 4 K^2) - a^2) / 2, PM = atan(a / w_c), so the
  // delay margin is atan(a / w_c) / w_c seconds.
  RequirementSet req;
  req.items = {{MetricId::DelayMargin, Sense::AtLeast, 0.1}};
  const Region region = region_from_requirements(req);
  Zpk unity;
  unity.gain = 1.0;
  for (double k : {1.0, 4.0, 25.0, 400.0})
    for (double a : {0.5, 2.0, 10.0}) {
      const double wc = std::sqrt(0.5 * (std::sqrt(a * a * a * a + 4.0 * k * k) - a * a));
      const double want = std::atan(a / wc) / wc;
      Plant g;
      g.tf.gain = k;
      g.tf.poles = {Complex(0, 0), Complex(-a, 0)};
      const LoopEvaluation e = evaluate_loop(unity, g, req, region, AnalysisOptions{});
      const MetricValue& dm = e.values[static_cast<size_t>(MetricId::DelayMargin)];
      REQUIRE(dm.value);
      CHECK(*dm.value == Approx(want).epsilon(1e-7));
      // The loop with that much dead time added sits on the edge: phase margin 0 (closed form).
      g.delay_s = want;
      const LoopEvaluation edge = evaluate_loop(unity, g, req, region, AnalysisOptions{});
      REQUIRE(edge.frequency.phase_margin_deg);
      CHECK(std::abs(*edge.frequency.phase_margin_deg) < 1e-5);
      // Its delay margin is then 0, or a whole turn 2 pi / w_c when the rounding left the phase a
      // hair below -180 deg (the margin is taken in [0, 2 pi)).
      const double left = edge.values[static_cast<size_t>(MetricId::DelayMargin)].value.value();
      CHECK(std::min(left, std::abs(left - 2.0 * M_PI / wc)) < 1e-6 * want);
    }
}

TEST_CASE("delay margin: the smallest over the crossovers; unbounded without one", "[requirements][evaluate][delay_margin]") {
  // Hand-built figures (the definition): crossovers at 1 and 10 rad/s with margins 60 and 30 deg
  // give (pi/3) / 1 and (pi/6) / 10; a negative margin counts from the next -180 deg line.
  FrequencyMetrics f;
  f.gain_crossovers_rad_s = {1.0, 10.0};
  f.phase_margins_deg = {60.0, 30.0};
  CHECK(delay_margin_value(f).value.value() == Approx(M_PI / 60.0));
  f.phase_margins_deg = {60.0, -30.0};  // needs 330 deg more lag at 10 rad/s
  CHECK(delay_margin_value(f).value.value() == Approx(std::min(M_PI / 3.0, 330.0 * M_PI / 180.0 / 10.0)));
  FrequencyMetrics none;
  CHECK(delay_margin_value(none).infinite);
  // A gain below 1 everywhere: no crossover, an unbounded delay margin that meets any minimum.
  RequirementSet req;
  req.items = {{MetricId::DelayMargin, Sense::AtLeast, 5.0}};
  Zpk small;
  small.gain = 0.5;
  Plant g;
  g.tf.gain = 1.0;
  g.tf.poles = {Complex(-1, 0)};
  const Evaluation ev = evaluate_all(small, {g}, req, region_from_requirements(req), AnalysisOptions{});
  CHECK(ev.plants[0].values[static_cast<size_t>(MetricId::DelayMargin)].infinite);
  CHECK(ev.all_met);
}

namespace {
MetricValue val(double v) {
  MetricValue m;
  m.value = v;
  return m;
}
MetricValue unbounded() {
  MetricValue m;
  m.infinite = true;
  return m;
}
WorstCase worst_of(const Requirement& r, const std::vector<PlantValue>& plants, std::vector<double>* viol = nullptr) {
  return worst_over_plants(r, plants.size(), [&](size_t i) { return plants[i]; }, viol);
}
}  // namespace

TEST_CASE("worst_over_plants: the one worst-case rule of check, design, retune and export", "[requirements][evaluate]") {
  // Hand-worked cases of the documented ranking (requirements/evaluate.hpp).
  const Requirement os{MetricId::Overshoot, Sense::AtMost, 10.0};     // overshoot <= 10 %
  const Requirement pm{MetricId::PhaseMargin, Sense::AtLeast, 45.0};  // phase margin >= 45 deg
  std::vector<double> viol;
  // The larger violation is worse: 15 % (0.5 of the limit over) beats 12 % (0.2).
  WorstCase w = worst_of(os, {{val(12.0), true}, {val(15.0), true}, {val(5.0), true}}, &viol);
  CHECK(w.plant == 1);
  CHECK(w.violation == Approx(0.5));
  REQUIRE(viol.size() == 3);
  CHECK(viol[0] == Approx(0.2));
  CHECK(viol[2] == 0.0);
  // All met: the smallest margin is the worst (9 % leaves 1 point, 5 % leaves 5).
  w = worst_of(os, {{val(5.0), true}, {val(9.0), true}});
  CHECK(w.plant == 1);
  CHECK(w.violation == 0.0);
  // An unstable loop violates by at least kUnstableViolation, even when its figure looks fine.
  w = worst_of(pm, {{val(40.0), true}, {val(60.0), false}}, &viol);
  CHECK(w.plant == 1);
  CHECK(w.violation == kUnstableViolation);
  CHECK(viol[0] == Approx(5.0 / 45.0));
  // Violations that tie at the unstable floor: the larger real shortfall is worse (15 % is 0.5 of
  // the limit over, 12 % only 0.2).
  w = worst_of(os, {{val(12.0), false}, {val(15.0), false}, {val(13.0), false}});
  CHECK(w.plant == 1);
  CHECK(w.violation == kUnstableViolation);
  // Far beyond the limit the tie-break saturates (tanh = 1): the first of the tied plants stays.
  w = worst_of(os, {{val(1e6), true}, {val(1e7), true}});
  CHECK(w.plant == 0);
  // An unbounded phase margin (no gain crossover) meets and is the best; a missing figure violates.
  w = worst_of(pm, {{unbounded(), true}, {val(50.0), true}});
  CHECK(w.plant == 1);
  w = worst_of(pm, {{val(50.0), true}, {MetricValue{}, true}});
  CHECK(w.plant == 1);
  CHECK(w.violation > 0.0);
  // The tie-breaks never outrank a violation: a met plant's key is below zero, a violated one's above.
  CHECK(worst_case_key(os, val(9.999), 0.0) < 0.0);
  CHECK(worst_case_key(os, val(10.001), plant_violation(os, {val(10.001), true})) > 0.0);
  CHECK(worst_case_key(os, unbounded(), 0.0) == kUnboundedMetKey);
}

TEST_CASE("metric values are assigned from the analysis figures in one place", "[requirements][evaluate]") {
  MetricValues v{};
  auto at = [&](MetricId id) -> const MetricValue& { return v[static_cast<size_t>(id)]; };
  // No gain or phase crossover: both margins unbounded (infinite), crossover missing.
  FrequencyMetrics f;
  set_frequency_metrics(v, f);
  CHECK(at(MetricId::PhaseMargin).infinite);
  CHECK(at(MetricId::GainMargin).infinite);
  CHECK_FALSE(at(MetricId::Crossover).value);
  f.gain_crossovers_rad_s = {3.0};
  f.phase_margin_deg = 50.0;
  f.crossover_rad_s = 3.0;
  set_frequency_metrics(v, f);
  CHECK(*at(MetricId::PhaseMargin).value == 50.0);
  CHECK(*at(MetricId::Crossover).value == 3.0);
  // A loop with too few integrators for its input has an unbounded steady-state error.
  SteadyState s;
  set_steady_state_metrics(v, s);
  CHECK(at(MetricId::SteadyStateError).infinite);
  s.error = 0.25;
  set_steady_state_metrics(v, s);
  CHECK(*at(MetricId::SteadyStateError).value == 0.25);
  // Poles: no pole that matters leaves the damping missing; a non-finite figure never gets in.
  set_pole_metrics(v, INFINITY, std::nullopt);
  CHECK_FALSE(at(MetricId::DampingRatio).value);
  set_pole_metrics(v, 0.5, NAN);
  CHECK(*at(MetricId::DampingRatio).value == 0.5);
  CHECK_FALSE(at(MetricId::NaturalFrequency).value);
  StepMetrics st;
  st.overshoot_pct = 4.3;
  st.settling_time_s = 1.2;
  set_step_metrics(v, st);
  CHECK(*at(MetricId::Overshoot).value == 4.3);
  CHECK(*at(MetricId::SettlingTime).value == 1.2);
  set_gain_tolerance_metric(v, 20.0);
  CHECK(*at(MetricId::GainTolerance).value == 20.0);
}

TEST_CASE("disturbance metrics scale with the step size; an offset makes recovery and IAE unbounded",
          "[requirements][evaluate][disturbance]") {
  // By hand (tests/analysis/test_disturbance.cpp): G = 1/(s + 1), C = 2 (s + 1)/s gives the load
  // response d (e^-t - e^-2t): peak d/4, IAE d/2; the output response d e^-2t: peak d, IAE d/2.
  Plant g;
  g.tf.poles = {Complex(-1, 0)};
  Zpk pi;
  pi.gain = 2;
  pi.zeros = {Complex(-1, 0)};
  pi.poles = {Complex(0, 0)};
  RequirementSet req;
  req.items = {{MetricId::LoadPeak, Sense::AtMost, 1.0}, {MetricId::LoadIae, Sense::AtMost, 1.0},
               {MetricId::OutputIae, Sense::AtMost, 1.0}, {MetricId::NoiseEffortPeak, Sense::AtMost, 3.0}};
  req.disturbance_step = 3.0;
  const Region region = region_from_requirements(req);
  const LoopEvaluation e = evaluate_loop(pi, g, req, region, AnalysisOptions{});
  auto val = [&](MetricId id) { return e.values[static_cast<size_t>(id)]; };
  CHECK(*val(MetricId::LoadPeak).value == Approx(0.75).epsilon(1e-9));
  CHECK(*val(MetricId::LoadIae).value == Approx(1.5).epsilon(1e-5));
  CHECK(*val(MetricId::OutputPeak).value == Approx(3.0).epsilon(1e-12));
  CHECK(*val(MetricId::OutputIae).value == Approx(1.5).epsilon(1e-5));
  CHECK(*val(MetricId::NoiseEffortPeak).value == Approx(2.0).epsilon(1e-12));  // 2 (s+1)/(s+2) -> 2
  CHECK(*val(MetricId::ControllerHighFrequencyGain).value == 2.0);            // computed with the noise peak
  CHECK(e.output.has_value());  // output_iae asks for the output step
  // Proportional control C = 3: the load step leaves the offset d/4; recovery and IAE unbounded.
  Zpk p;
  p.gain = 3;
  const LoopEvaluation q = evaluate_loop(p, g, req, region, AnalysisOptions{});
  CHECK(q.values[static_cast<size_t>(MetricId::LoadIae)].infinite);
  CHECK(*q.values[static_cast<size_t>(MetricId::LoadPeak)].value == Approx(0.75).epsilon(1e-6));
  // A spec without them computes none (results of existing specs stay as they were).
  RequirementSet plain;
  plain.items = {{MetricId::PhaseMargin, Sense::AtLeast, 30.0}};
  const LoopEvaluation r = evaluate_loop(pi, g, plain, region_from_requirements(plain), AnalysisOptions{});
  CHECK_FALSE(r.load);
  CHECK_FALSE(r.values[static_cast<size_t>(MetricId::LoadPeak)].known());
}

TEST_CASE("saturated step figures: a PI held at its limit winds up; the figures equal the linear ones when no limit is met",
          "[requirements][evaluate][actuator]") {
  // G = 3.125 / (s + 1.25), C = 1.6 (s + 2) / s, 0 <= u <= 1, reference step 1.5: v(0+) = 2.4 puts u
  // at the limit. Conditional integration leaves it at t1 = -0.8 ln(1 - (1.5 - 1/1.6) / 2.5), where
  // y = 1.5 - 1/1.6 (worked by hand; tests/analysis/test_saturated.cpp); without anti-windup the
  // overshoot is 21.158 % (scipy solve_ivp of the same loop, tests/python/test_saturated.py, to 5e-10).
  Plant g;
  g.tf.gain = 3.125;
  g.tf.poles = {Complex(-1.25, 0)};
  Zpk pi;
  pi.gain = 1.6;
  pi.zeros = {Complex(-2, 0)};
  pi.poles = {Complex(0, 0)};
  RequirementSet req;
  req.items = {{MetricId::SaturatedOvershoot, Sense::AtMost, 10.0}, {MetricId::SaturatedSettlingTime, Sense::AtMost, 4.0},
               {MetricId::SaturatedRiseTime, Sense::AtMost, 2.0}};
  ActuatorLimits lim;
  lim.minimum = 0.0;
  lim.maximum = 1.0;
  req.actuator = lim;
  req.reference_step = 1.5;
  const Region region = region_from_requirements(req);
  const LoopEvaluation e = evaluate_loop(pi, g, req, region, AnalysisOptions{});
  REQUIRE(e.saturated);
  auto val = [](const LoopEvaluation& x, MetricId id) { return x.values[static_cast<size_t>(id)]; };
  CHECK(*val(e, MetricId::SaturatedOvershoot).value == Approx(21.158).margin(0.002));
  CHECK(e.saturated->target == Approx(1.5).epsilon(1e-12));
  CHECK(e.saturated->reachable);
  CHECK(val(e, MetricId::SaturatedSettlingTime).value);
  // Rise 10 % -> 90 % while u = 1: y = 2.5 (1 - e^(-t/0.8)) reaches 0.15 and 1.35 at
  // t = -0.8 ln(1 - y / 2.5) (by hand), as long as the limit holds past 90 %.
  const double t10 = -0.8 * std::log(1 - 0.15 / 2.5), t90 = -0.8 * std::log(1 - 1.35 / 2.5);
  CHECK(*val(e, MetricId::SaturatedRiseTime).value == Approx(t90 - t10).margin(1e-9));

  req.actuator->anti_windup = AntiWindup::Conditional;
  const LoopEvaluation c = evaluate_loop(pi, g, req, region, AnalysisOptions{});
  REQUIRE(c.saturated);
  CHECK(c.saturated->response.switch_times_s.front() == Approx(-0.8 * std::log(1 - (1.5 - 1 / 1.6) / 2.5)).margin(1e-10));
  CHECK(*val(c, MetricId::SaturatedOvershoot).value < 1.0);

  // Wide limits: nothing saturates, and the figures are the linear step's (exact refinement both).
  req.items.push_back({MetricId::Overshoot, Sense::AtMost, 10.0});
  req.items.push_back({MetricId::SettlingTime, Sense::AtMost, 4.0});
  req.actuator->minimum = -100.0;
  req.actuator->maximum = 100.0;
  const LoopEvaluation w = evaluate_loop(pi, g, req, region, AnalysisOptions{});
  REQUIRE(w.saturated);
  CHECK(w.saturated->response.switch_times_s.empty());
  CHECK(*val(w, MetricId::SaturatedOvershoot).value == Approx(*val(w, MetricId::Overshoot).value).margin(1e-9));
  CHECK(*val(w, MetricId::SaturatedSettlingTime).value == Approx(*val(w, MetricId::SettlingTime).value).margin(1e-9));

  // A target the limits cannot hold: u(inf) = 1.5 / 2.5 = 0.6 > 0.5, so y never settles (infinite).
  req.actuator->minimum = 0.0;
  req.actuator->maximum = 0.5;
  const LoopEvaluation n = evaluate_loop(pi, g, req, region, AnalysisOptions{});
  REQUIRE(n.saturated);
  CHECK_FALSE(n.saturated->reachable);
  CHECK(val(n, MetricId::SaturatedSettlingTime).infinite);

  // Without a saturated_* requirement nothing is simulated.
  RequirementSet plain;
  plain.actuator = lim;
  CHECK_FALSE(evaluate_loop(pi, g, plain, region_from_requirements(plain), AnalysisOptions{}).saturated);
}

TEST_CASE("evaluate_loop: the load step with the actuator limits, from the operating point", "[requirements][evaluate][actuator]") {
  // The pump G = 3.125 / (s + 1.25) (G(0) = 2.5) with the PI 1.6 (s + 2) / s holds r0 = 1.5 with
  // u0 = 0.6 (by hand). A load of 0.8 needs u = -0.2 < 0: y settles at G(0) 0.8 = 2.0, 0.5 above r0,
  // and never recovers (infinite). A load of 0.3 (u = 0.3) leaves the limits untouched, so the
  // figures are the linear load response's: peak = 0.3 load_peak, the same recovery time.
  Plant g;
  g.tf.gain = 3.125;
  g.tf.poles = {Complex(-1.25, 0)};
  Zpk pi;
  pi.gain = 1.6;
  pi.zeros = {Complex(-2, 0)};
  pi.poles = {Complex(0, 0)};
  RequirementSet req;
  req.items = {{MetricId::SaturatedLoadPeak, Sense::AtMost, 1.0}, {MetricId::SaturatedLoadRecovery, Sense::AtMost, 10.0},
               {MetricId::LoadPeak, Sense::AtMost, 1.0}, {MetricId::LoadRecovery, Sense::AtMost, 10.0}};
  ActuatorLimits lim;
  lim.minimum = 0.0;
  lim.maximum = 1.0;
  lim.anti_windup = AntiWindup::Conditional;
  req.actuator = lim;
  req.reference_step = 1.5;
  req.disturbance_step = 0.8;
  const Region region = region_from_requirements(req);
  auto val = [](const LoopEvaluation& x, MetricId id) { return x.values[static_cast<size_t>(id)]; };
  const LoopEvaluation far = evaluate_loop(pi, g, req, region, AnalysisOptions{});
  REQUIRE(far.saturated_load);
  CHECK(far.saturated_load->baseline == Approx(1.5).margin(1e-12));
  CHECK(far.saturated_load->held_u == Approx(0.6).margin(1e-12));
  CHECK(*val(far, MetricId::SaturatedLoadPeak).value == Approx(0.5).margin(1e-6));
  CHECK(val(far, MetricId::SaturatedLoadRecovery).infinite);
  CHECK_FALSE(far.saturated);  // no saturated step requirement: no limited step simulated

  req.disturbance_step = 0.3;
  const LoopEvaluation near = evaluate_loop(pi, g, req, region, AnalysisOptions{});
  REQUIRE(near.saturated_load);
  CHECK(near.saturated_load->response.limited_time_s == 0.0);
  CHECK(*val(near, MetricId::SaturatedLoadPeak).value == Approx(*val(near, MetricId::LoadPeak).value).epsilon(1e-8));
  CHECK(*val(near, MetricId::SaturatedLoadRecovery).value ==
        Approx(*val(near, MetricId::LoadRecovery).value).epsilon(1e-6));

  // Screening skips it while the other requirements are far from met.
  req.items.push_back({MetricId::PhaseMargin, Sense::AtLeast, 179.0});
  EvaluationNeeds screening;
  screening.everything = false;
  screening.step_gate = 0.1;  // the phase margin misses by (179 - 65.8) / 179 of its limit
  CHECK_FALSE(evaluate_loop(pi, g, req, region, AnalysisOptions{}, screening).saturated_load);
  req.items.pop_back();
  CHECK(evaluate_loop(pi, g, req, region, AnalysisOptions{}, screening).saturated_load);
}
