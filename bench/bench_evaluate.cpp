// Throughput of the screening evaluator the design search uses, on the workload of issue 2:
// plant 180000/(s(s+8)(s^2+2.4s+3600)); compensator k(s+z)(s^2+2 zz wn s+wn^2)/((s+p)(s^2+2 zp wn s+wn^2))
// with k = 10^U(-1,1), z = 10^U(0,1.3), p = 10^U(1.3,2.5), wn = 60*10^U(-0.05,0.05), zz = U(0.01,0.1),
// zp = U(0.3,1). One evaluation: closed-loop poles, region test, 1000-sample step of y and u over 3 s
// (overshoot, settling, rise, peak effort) and margins from the loop frequency response.
// --disturbance adds load-step peak, recovery and IAE, output-step IAE and the |C S| noise peak
// requirements (issue 13); the disturbance steps are screened like the reference step.
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <random>
#include <vector>

#include "polewright/requirements/evaluate.hpp"

using namespace pw;

namespace {

Complex pair_root(double wn, double zeta) { return Complex(-zeta * wn, wn * std::sqrt(1.0 - zeta * zeta)); }

}  // namespace

int bench_evaluate(int argc, char** argv) {
  double seconds = 3.0;
  unsigned seed = 2026;
  long long count = 0;  // with --count N: exactly N evaluations (for instruction counts under callgrind)
  bool full = false;    // --full: the check path (full accuracy, every figure) instead of screening
  bool disturbance = false;
  for (int i = 1; i < argc; ++i) {
    if (!std::strcmp(argv[i], "--full")) full = true;
    if (!std::strcmp(argv[i], "--disturbance")) disturbance = true;
  }
  for (int i = 1; i + 1 < argc; i += 2) {
    if (!std::strcmp(argv[i], "--seconds")) seconds = std::atof(argv[i + 1]);
    if (!std::strcmp(argv[i], "--count")) count = std::atoll(argv[i + 1]);
    if (!std::strcmp(argv[i], "--seed")) seed = static_cast<unsigned>(std::atoi(argv[i + 1]));
  }
  Plant plant;
  plant.name = "wafer-stage workload";
  plant.tf.gain = 180000;
  const Complex mode = pair_root(60.0, 0.02);
  plant.tf.poles = {Complex(0, 0), Complex(-8, 0), mode, std::conj(mode)};

  RequirementSet req;
  req.items = {{MetricId::Overshoot, Sense::AtMost, 10},   {MetricId::SettlingTime, Sense::AtMost, 1.0},
               {MetricId::RiseTime, Sense::AtMost, 0.2},   {MetricId::PeakEffort, Sense::AtMost, 50},
               {MetricId::PhaseMargin, Sense::AtLeast, 45}, {MetricId::GainMargin, Sense::AtLeast, 8},
               {MetricId::DampingRatio, Sense::AtLeast, 0.5}};
  if (disturbance)
    req.items.insert(req.items.end(), {{MetricId::LoadPeak, Sense::AtMost, 2e-4}, {MetricId::LoadRecovery, Sense::AtMost, 1.0},
                                       {MetricId::LoadIae, Sense::AtMost, 1e-4}, {MetricId::OutputIae, Sense::AtMost, 0.1},
                                       {MetricId::NoiseEffortPeak, Sense::AtMost, 30}});
  const Region region = region_from_requirements(req);
  AnalysisOptions opt = AnalysisOptions::Screening(AnalysisOptions{});
  opt.step.horizon_s = 3.0;
  opt.step.samples = 1000;
  EvaluationNeeds needs;
  needs.everything = false;
  if (full) {
    opt = AnalysisOptions{};
    needs = EvaluationNeeds{};
  }

  std::mt19937_64 rng(seed);
  std::uniform_real_distribution<double> U(0.0, 1.0);
  auto u = [&](double a, double b) { return a + (b - a) * U(rng); };
  std::vector<Zpk> pool(4096);
  for (Zpk& c : pool) {
    const double k = std::pow(10.0, u(-1, 1)), z = std::pow(10.0, u(0, 1.3)), p = std::pow(10.0, u(1.3, 2.5));
    const double wn = 60.0 * std::pow(10.0, u(-0.05, 0.05)), zz = u(0.01, 0.1), zp = u(0.3, 1.0);
    c.gain = k;
    c.zeros = {Complex(-z, 0), pair_root(wn, zz), std::conj(pair_root(wn, zz))};
    c.poles = {Complex(-p, 0), pair_root(wn, zp), std::conj(pair_root(wn, zp))};
  }

  long long n = 0, stable = 0, met = 0, simulated = 0;
  double checksum = 0.0;
  const auto t0 = std::chrono::steady_clock::now();
  double elapsed = 0.0;
  while (count > 0 ? n < count : elapsed < seconds) {
    for (int i = 0; i < 256 && (count == 0 || n < count); ++i, ++n) {
      const LoopEvaluation e = evaluate_loop(pool[static_cast<size_t>(n % 4096)], plant, req, region, opt, needs);
      stable += e.stable;
      bool all = e.stable;
      for (const Requirement& r : req.items) all = all && requirement_met(r, e.values[static_cast<size_t>(r.metric)]);
      met += all;
      simulated += e.load.has_value();
      if (e.values[0].value) checksum += *e.values[0].value;
    }
    elapsed = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
  }
  std::printf("workload: 180000/(s(s+8)(s^2+2.4s+3600)) with random lead + notch compensators (seed %u), %s path\n",
              seed, full ? "full-accuracy (check)" : "screening");
  if (disturbance) std::printf("with the disturbance and noise requirements\n");
  std::printf("evaluations: %lld in %.2f s on one thread; stable %lld, meeting all %lld (checksum %.6g)\n", n, elapsed,
              stable, met, checksum);
  if (disturbance) std::printf("disturbance steps simulated for %lld evaluations (the rest screened out)\n", simulated);
  std::printf("evaluations per second: %.0f\n", n / elapsed);
  return 0;
}
