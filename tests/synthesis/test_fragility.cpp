#include <catch2/catch.hpp>

#include <cmath>

#include "polewright/requirements/spec_parse.hpp"
#include "polewright/synthesis/candidate.hpp"
#include "polewright/synthesis/fragility.hpp"
#include "polewright/synthesis/parameters.hpp"

using namespace pw;

namespace {

Spec spec_of(const char* text) { return parse_spec(nlohmann::json::parse(text)); }

// Our own scenario: a three-pole type-0 plant 6 / ((s + 1)(s + 2)(s + 3)) under a PI
// kp (s + 0.8149) / s (the PI zero of issue 17's case).
Zpk pi(double kp) {
  Zpk c;
  c.gain = kp;
  c.zeros = {Complex(-0.8149, 0.0)};
  c.poles = {Complex(0.0, 0.0)};
  return c;
}

const char* kPiSpec = R"({"plant": {"gain": 6, "poles": [-1, -2, -3]},
  "requirements": {"settling_time_s": {"max": 10, "band_pct": 2}}})";

}  // namespace

TEST_CASE("a PI that parks overshoot on the settling band is fragile, a well-damped one is not", "[synthesis][fragility]") {
  const Spec spec = spec_of(kPiSpec);
  const LoopContext ctx = LoopContext::FromSpec(spec);
  // kp = 0.7708487406029477 puts the overshoot at 2.00001 % (scipy.signal.step, 400001 samples
  // over 40 s, gain found by scipy.optimize.brentq). Settling times from the same scipy run
  // (2 % band 4.1289 s; band 1.8 % 4.4326 s, 2.2 % 3.1582 s; gain +1 % 4.3851 s, -1 % 3.2237 s):
  // the largest jump is (4.1289 - 3.1582) / 3.1582 = 30.7 % of the shorter time.
  const Fragility parked = settling_fragility(pi(0.7708487406029477), ctx.plants, ctx.requirements, ctx.region, ctx.analysis);
  REQUIRE(parked.assessed);
  CHECK(parked.fragile);
  CHECK(parked.jump_share == Approx(0.3074).margin(0.01));
  // kp = 0.5: no overshoot, settling 7.5626 s at 2 %; its neighbours move it by at most 2.9 %
  // (7.7829 s at a 1.8 % band; same scipy run).
  const Fragility damped = settling_fragility(pi(0.5), ctx.plants, ctx.requirements, ctx.region, ctx.analysis);
  REQUIRE(damped.assessed);
  CHECK_FALSE(damped.fragile);
  CHECK(damped.jump_share == Approx(0.0291).margin(0.005));
  // The verifier carries the flag on the candidate.
  const Verifier v(ctx);
  const Candidate c = v.verify(pi(0.7708487406029477), Objective::Fastest);
  CHECK(c.fragility_assessed);
  CHECK(c.fragile);
  CHECK_FALSE(v.verify(pi(0.5), Objective::Fastest).fragile);
  // An unstable loop is not assessed: kp = 20 gives s^4 + 6 s^3 + 11 s^2 + 126 s + 97.8, whose
  // Routh column changes sign (11 - 126 / 6 < 0; Routh criterion, analytic).
  CHECK_FALSE(settling_fragility(pi(20.0), ctx.plants, ctx.requirements, ctx.region, ctx.analysis).assessed);
}

TEST_CASE("a loop whose margin is within numerical noise of zero is not a stable design", "[synthesis][fragility]") {
  // K / (s + 1)^3: the loop is on the stability boundary at K = 8 (Routh, s^3 + 3 s^2 + 3 s + 1 + K:
  // 3 * 3 = 1 + K), with the gain margin 20 log10(8 / K) dB. K = 7.9999 gives 1.1e-4 dB and a stable
  // loop (closed-loop real part -1 + K^(1/3) / 2 = -2.1e-6): on the boundary within noise.
  const Spec spec = spec_of(R"({"plant": {"gain": 1, "poles": [-1, -1, -1]},
    "requirements": {"crossover_rad_s": {"min": 0.01}}})");  // met by both loops below
  const Verifier v(LoopContext::FromSpec(spec));
  Zpk edge;
  edge.gain = 7.9999;
  const Candidate c = v.verify(edge);
  REQUIRE(c.verification.plants.front().stable);  // the poles alone call it stable
  CHECK(c.margins_at_noise);
  CHECK_FALSE(c.verification.all_stable);
  CHECK_FALSE(c.meets);
  CHECK(c.violation >= kNoiseMarginViolation);
  Zpk half;
  half.gain = 4.0;  // gain margin 20 log10 2 = 6.02 dB
  const Candidate h = v.verify(half);
  CHECK_FALSE(h.margins_at_noise);
  CHECK(h.meets);
  CHECK(*h.worst[static_cast<size_t>(MetricId::GainMargin)].value == Approx(20.0 * std::log10(2.0)).epsilon(1e-6));
}

TEST_CASE("a stage that does nothing over the frequency range is folded into the gain", "[synthesis][fragility]") {
  const std::pair<double, double> range{0.01, 100.0};
  // A lead with zero -1, pole -10 (kept) and a stage with zero -5000, pole -6000: over 0.01..100
  // rad/s (jw + 5000) / (jw + 6000) stays within |(1 + j/50) / (1 + j/60) - 1| = 0.33 % of its DC
  // value 5/6 (analytic), so it folds into the gain as 5/6.
  Zpk c;
  c.gain = 3.0;
  c.zeros = {Complex(-1.0, 0.0), Complex(-5000.0, 0.0)};
  c.poles = {Complex(-10.0, 0.0), Complex(-6000.0, 0.0)};
  Structure two;
  two.lead = 2;
  const PrunedCompensator p = prune_negligible_stages(c, two, {}, range);
  CHECK(p.dropped == 1);
  CHECK(p.structure.lead == 1);
  REQUIRE(p.compensator.zeros.size() == 1);
  CHECK(p.compensator.zeros[0] == Complex(-1.0, 0.0));
  CHECK(p.compensator.poles[0] == Complex(-10.0, 0.0));
  CHECK(p.compensator.gain == Approx(3.0 * 5000.0 / 6000.0).epsilon(1e-12));
  // The folded loop is the same within the threshold over the range.
  for (double w : {0.01, 1.0, 100.0}) {
    const Complex a = c.evaluate(Complex(0.0, w)), b = p.compensator.evaluate(Complex(0.0, w));
    CHECK(std::abs(b / a - 1.0) < kNegligibleStageShare);
  }
  // Corners both far below the range (lag zero -2e-5, pole -1e-5): close to its high-frequency
  // value 1, within 1e-5 / 0.01 = 0.1 % (analytic).
  Zpk low;
  low.zeros = {Complex(-2e-5, 0.0)};
  low.poles = {Complex(-1e-5, 0.0)};
  Structure lag;
  lag.lag = 1;
  const PrunedCompensator q = prune_negligible_stages(low, lag, {}, range);
  CHECK(q.dropped == 1);
  CHECK(q.compensator.zeros.empty());
  CHECK(q.compensator.gain == Approx(1.0).epsilon(1e-12));
  // An integrator is not folded by the asymptote test: with its zero at 1 rad/s, mid-range, it stays.
  Zpk integ;
  integ.zeros = {Complex(-1.0, 0.0)};
  integ.poles = {Complex(0.0, 0.0)};
  Structure i_only;
  i_only.integrator = true;
  const PrunedCompensator kept = prune_negligible_stages(integ, i_only, {}, range);
  CHECK(kept.dropped == 0);
  CHECK_FALSE(kept.integrator_dropped);
  // Its zero parked at the bottom of the range (0.01 rad/s, inside the lowest half decade up to
  // 0.0316): dropped, gain unchanged, since (s + wi) / s tends to 1 above wi.
  integ.gain = 2.5;
  integ.zeros = {Complex(-0.01, 0.0)};
  const PrunedCompensator parked = prune_negligible_stages(integ, i_only, {}, range);
  CHECK(parked.dropped == 1);
  CHECK(parked.integrator_dropped);
  CHECK_FALSE(parked.structure.integrator);
  CHECK(parked.compensator.zeros.empty());
  CHECK(parked.compensator.poles.empty());
  CHECK(parked.compensator.gain == 2.5);
  // Just above the half decade (0.04 rad/s) it stays.
  integ.zeros = {Complex(-0.04, 0.0)};
  CHECK_FALSE(prune_negligible_stages(integ, i_only, {}, range).integrator_dropped);
}

TEST_CASE("folding a stage keeps the design parameters of the simpler structure", "[synthesis][fragility]") {
  // Parameter space over 1e-4..100 rad/s: a lead of the least ratio 1.2 at the bottom (zero 1e-4,
  // pole 1.2e-4) and a lag (pole 1, zero 10). Over the loop's range 0.1..100 rad/s the lead is
  // within 2e-5 / 0.1 = 0.02 % of its high-frequency value 1 (analytic): it is folded. The pruned
  // parameters, mapped by the lag-only parameter space, must give the pruned compensator
  // (params_to_zpk is the reference for the mapping).
  const std::pair<double, double> space_range{1e-4, 100.0}, range{0.1, 100.0};
  Structure both;
  both.lead = 1;
  both.lag = 1;
  const ParamSpace ps = make_param_space(both, space_range, -6.0, 6.0, 1.0);
  const std::vector<double> x = {0.5, std::log10(1.2), 0.0, 1.0, 0.8};
  const Zpk c = params_to_zpk(ps, x);
  REQUIRE(c.zeros.size() == 2);
  CHECK(c.zeros[0].real() == Approx(-1e-4).epsilon(1e-9));
  const PrunedCompensator p = prune_negligible_stages(c, both, x, range);
  REQUIRE(p.dropped == 1);
  CHECK(p.structure.lead == 0);
  CHECK(p.structure.lag == 1);
  REQUIRE(p.parameters.size() == 3);
  Structure lag_only;
  lag_only.lag = 1;
  const Zpk back = params_to_zpk(make_param_space(lag_only, space_range, -6.0, 6.0, 1.0), p.parameters);
  CHECK(p.compensator.poles[0].real() == Approx(-1.0).epsilon(1e-9));
  CHECK(back.gain == Approx(p.compensator.gain).epsilon(1e-12));
  REQUIRE(back.zeros.size() == 1);
  CHECK(back.zeros[0].real() == Approx(p.compensator.zeros[0].real()).epsilon(1e-12));
  CHECK(back.poles[0].real() == Approx(p.compensator.poles[0].real()).epsilon(1e-12));
}

TEST_CASE("with an implementation the settling cliff is judged on the sampled loop", "[synthesis][fragility][implementation]") {
  // The same PI loops run at T = 1 ms by Tustin (2 pi / T is about 6000 times the loop's
  // frequencies): the sampled loop tends to the continuous one as T -> 0 (field notes: the hold
  // costs w T / 2, here below 0.03 deg), so the flags agree with the continuous ones and the jump
  // shares with the scipy figures above (30.7 % parked, 2.9 % damped) within a few percent.
  const Spec spec = spec_of(kPiSpec);
  const LoopContext ctx = LoopContext::FromSpec(spec);
  Implementation fast;
  fast.sample_time_s = 1e-3;
  const Fragility parked = settling_fragility(pi(0.7708487406029477), ctx.plants, ctx.requirements, ctx.region,
                                              ctx.analysis, fast);
  REQUIRE(parked.assessed);
  CHECK(parked.fragile);
  CHECK(parked.jump_share == Approx(0.3074).margin(0.03));
  const Fragility damped = settling_fragility(pi(0.5), ctx.plants, ctx.requirements, ctx.region, ctx.analysis, fast);
  REQUIRE(damped.assessed);
  CHECK_FALSE(damped.fragile);
  CHECK(damped.jump_share == Approx(0.0291).margin(0.01));
  // Prewarp with no warp point to take (no crossover given here): not assessed, not an error.
  Implementation warp;
  warp.sample_time_s = 1e-3;
  warp.method = DiscreteMethod::Prewarp;
  CHECK_FALSE(settling_fragility(pi(0.5), ctx.plants, ctx.requirements, ctx.region, ctx.analysis, warp).assessed);
}
