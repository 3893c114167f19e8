// Cost of the loop simulation with a limited actuator (simulate_saturated) against the linear step
// (step_response), on the workload of `evaluate`: plant 180000/(s(s+8)(s^2+2.4s+3600)) with random
// lead + notch compensators, 1000 samples over 3 s. Only stable loops are timed. The actuator limit
// is a fraction of each loop's own linear peak effort (--fraction F, default 0.5), so every
// simulation switches; --rate R adds a rate limit of R times that limit per second.
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <random>
#include <vector>

#include "polewright/analysis/closed_loop.hpp"
#include "polewright/analysis/saturated.hpp"
#include "polewright/analysis/step.hpp"

using namespace pw;

int bench_saturated(int argc, char** argv) {
  double seconds = 3.0, fraction = 0.5, rate = 0.0;
  for (int i = 1; i + 1 < argc; i += 2) {
    if (!std::strcmp(argv[i], "--seconds")) seconds = std::atof(argv[i + 1]);
    if (!std::strcmp(argv[i], "--fraction")) fraction = std::atof(argv[i + 1]);
    if (!std::strcmp(argv[i], "--rate")) rate = std::atof(argv[i + 1]);
  }
  Plant plant;
  plant.tf.gain = 180000;
  const Complex mode(-0.02 * 60.0, 60.0 * std::sqrt(1.0 - 0.0004));
  plant.tf.poles = {Complex(0, 0), Complex(-8, 0), mode, std::conj(mode)};

  std::mt19937_64 rng(2026);
  std::uniform_real_distribution<double> U(0.0, 1.0);
  auto u = [&](double a, double b) { return a + (b - a) * U(rng); };
  struct Case {
    LoopParts parts;
    ClosedLoop loop;
    PoleAnalysis poles;
    double limit = 0.0;
  };
  std::vector<Case> cases;
  StepOptions so;
  so.horizon_s = 3.0;
  so.samples = 1000;
  so.adaptive_samples = false;
  so.exact_refinement = false;
  while (cases.size() < 256) {
    Zpk c;
    const double k = std::pow(10.0, u(-1, 1)), z = std::pow(10.0, u(0, 1.3)), p = std::pow(10.0, u(1.3, 2.5));
    const double wn = 60.0 * std::pow(10.0, u(-0.05, 0.05)), zz = u(0.01, 0.1), zp = u(0.3, 1.0);
    const Complex nz(-zz * wn, wn * std::sqrt(1 - zz * zz)), np(-zp * wn, wn * std::sqrt(1 - zp * zp));
    c.gain = k;
    c.zeros = {Complex(-z, 0), nz, std::conj(nz)};
    c.poles = {Complex(-p, 0), np, std::conj(np)};
    Case cs;
    cs.parts = make_loop_parts(c, plant, 6);
    cs.loop = close_loop(cs.parts.compensator, cs.parts.plant);
    cs.poles = analyze_poles(cs.loop, 0.02);
    if (!cs.poles.stable) continue;
    const StepMetrics m = step_response(cs.loop, cs.poles, so);
    if (!m.peak_effort || *m.peak_effort <= 0.0) continue;
    cs.limit = fraction * *m.peak_effort;
    cases.push_back(cs);
  }
  auto timed = [&](auto&& body) {
    long long n = 0;
    double checksum = 0.0, elapsed = 0.0;
    const auto t0 = std::chrono::steady_clock::now();
    while (elapsed < seconds) {
      for (int i = 0; i < 64; ++i, ++n) checksum += body(cases[static_cast<size_t>(n % 256)]);
      elapsed = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
    }
    std::printf("  %lld in %.2f s (checksum %.6g): %.0f per second\n", n, elapsed, checksum, n / elapsed);
    return n / elapsed;
  };
  std::printf("workload: 180000/(s(s+8)(s^2+2.4s+3600)) with 256 stable random lead + notch loops, 1000 samples over 3 s\n");
  std::printf("linear step (step_response, screening settings):\n");
  const double lin = timed([&](const Case& cs) { return step_response(cs.loop, cs.poles, so).final_value; });
  std::printf("saturated step (simulate_saturated, |u| <= %.2f x the linear peak effort%s):\n", fraction,
              rate > 0.0 ? ", rate limited" : "");
  long long switches = 0, runs = 0;
  const double sat = timed([&](const Case& cs) {
    ActuatorLimits lim;
    lim.minimum = -cs.limit;
    lim.maximum = cs.limit;
    if (rate > 0.0) lim.rate_limit = rate * cs.limit;
    SaturatedOptions o;
    o.horizon_s = 3.0;
    o.samples = 1000;
    const SaturatedResponse r = simulate_saturated(cs.parts.compensator_tf, cs.parts.plant, lim, {}, o);
    switches += static_cast<long long>(r.switch_times_s.size());
    ++runs;
    return r.y.back();
  });
  std::printf("mean switching instants per simulation: %.1f\n", runs ? double(switches) / runs : 0.0);
  std::printf("saturated / linear cost: %.2f\n", lin / sat);
  return 0;
}
