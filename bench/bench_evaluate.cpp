// Throughput of the screening evaluator the design search uses, on the workload of issue 2:
// plant 180000/(s(s+8)(s^2+2.4s+3600)); compensator k(s+z)(s^2+2 zz wn s+wn^2)/((s+p)(s^2+2 zp wn s+wn^2))
// with k = 10^U(-1,1), z = 10^U(0,1.3), p = 10^U(1.3,2.5), wn = 60*10^U(-0.05,0.05), zz = U(0.01,0.1),
// zp = U(0.3,1). One evaluation: closed-loop poles, region test, 1000-sample step of y and u over 3 s
// (overshoot, settling, rise, peak effort) and margins from the loop frequency response.
// With --sample-time T: the same pool through both the continuous screening evaluator and the
// sampled one the search uses with an implementation (Tustin at T, one sample of computation
// delay: implement_compensator + evaluate_sampled_loop in its screening form, step figures at the
// instants from a window of four settling limits; --between: the check path's figures between the
// samples over the whole horizon), each for the given time, and both rates printed with their ratio.
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
#include "polewright/requirements/sampled_evaluate.hpp"

using namespace pw;

namespace {

Complex pair_root(double wn, double zeta) { return Complex(-zeta * wn, wn * std::sqrt(1.0 - zeta * zeta)); }

}  // namespace

int bench_evaluate(int argc, char** argv) {
  double seconds = 3.0;
  unsigned seed = 2026;
  long long count = 0;  // with --count N: exactly N evaluations (for instruction counts under callgrind)
  bool full = false;    // --full: the check path (full accuracy, every figure) instead of screening
  double sample_time = 0.0;  // --sample-time T: compare with the sampled loop at T
  bool screening_instants = true;  // the search's sampled screening (instants, window); --between: the check path
  for (int i = 1; i < argc; ++i)
    if (!std::strcmp(argv[i], "--full")) full = true;
  for (int i = 1; i < argc; ++i)
    if (!std::strcmp(argv[i], "--between")) screening_instants = false;
  bool disturbance = false;
  for (int i = 1; i < argc; ++i)
    if (!std::strcmp(argv[i], "--disturbance")) disturbance = true;
  double actuator = 0.0;  // --actuator F: limits |u| <= F and the saturated_* requirements
  double actuator_load = 0.0;  // --actuator-load D: with --actuator, the saturated_load_* figures of a load D
  for (int i = 1; i + 1 < argc; ++i) {
    if (!std::strcmp(argv[i], "--actuator")) actuator = std::atof(argv[i + 1]);
    if (!std::strcmp(argv[i], "--actuator-load")) actuator_load = std::atof(argv[i + 1]);
  }
  for (int i = 1; i + 1 < argc; i += 2) {
    if (!std::strcmp(argv[i], "--seconds")) seconds = std::atof(argv[i + 1]);
    if (!std::strcmp(argv[i], "--count")) count = std::atoll(argv[i + 1]);
    if (!std::strcmp(argv[i], "--seed")) seed = static_cast<unsigned>(std::atoi(argv[i + 1]));
    if (!std::strcmp(argv[i], "--sample-time")) sample_time = std::atof(argv[i + 1]);
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
  if (actuator > 0.0) {
    ActuatorLimits lim;
    lim.minimum = -actuator;
    lim.maximum = actuator;
    req.actuator = lim;
    req.items.insert(req.items.end(), {{MetricId::SaturatedOvershoot, Sense::AtMost, 10}, {MetricId::SaturatedSettlingTime, Sense::AtMost, 1.0}});
    if (actuator_load != 0.0) {
      req.disturbance_step = actuator_load;
      req.items.insert(req.items.end(), {{MetricId::SaturatedLoadPeak, Sense::AtMost, 2e-4 * std::abs(actuator_load)},
                                         {MetricId::SaturatedLoadRecovery, Sense::AtMost, 1.0}});
    }
  }
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

  Implementation im;
  im.sample_time_s = sample_time;
  im.method = DiscreteMethod::Tustin;
  im.compute_delay_samples = 1.0;
  struct Run {
    long long n = 0, stable = 0, met = 0, simulated = 0, limited = 0;
    double checksum = 0.0, elapsed = 0.0;
  };
  auto run = [&](bool sampled) {
    Run r;
    const auto t0 = std::chrono::steady_clock::now();
    while (count > 0 ? r.n < count : r.elapsed < seconds) {
      for (int i = 0; i < 256 && (count == 0 || r.n < count); ++i, ++r.n) {
        const Zpk& c = pool[static_cast<size_t>(r.n % 4096)];
        const LoopEvaluation e =
            sampled ? evaluate_sampled_loop(implement_compensator(c, im, std::nullopt).discrete, plant, im, req, region, opt, 0,
                                        screening_instants, needs)
                      .loop
                    : evaluate_loop(c, plant, req, region, opt, needs);
        r.stable += e.stable;
        bool all = e.stable;
        for (const Requirement& q : req.items) all = all && requirement_met(q, e.values[static_cast<size_t>(q.metric)]);
        r.met += all;
        r.simulated += e.load.has_value() || e.saturated.has_value() || e.saturated_load.has_value();
        r.limited += e.saturated.has_value() || e.saturated_load.has_value();
        if (e.values[0].value) r.checksum += *e.values[0].value;
      }
      r.elapsed = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
    }
    return r;
  };
  std::printf("workload: 180000/(s(s+8)(s^2+2.4s+3600)) with random lead + notch compensators (seed %u), %s path\n",
              seed, full ? "full-accuracy (check)" : "screening");
  if (disturbance) std::printf("with the disturbance and noise requirements\n");
  if (actuator > 0.0) std::printf("with saturated_overshoot_pct and saturated_settling_time_s, |u| <= %g\n", actuator);
  if (actuator > 0.0 && actuator_load != 0.0)
    std::printf("and saturated_load_peak, saturated_load_recovery_s for a load step of %g\n", actuator_load);
  const Run c = run(false);
  std::printf("evaluations: %lld in %.2f s on one thread; stable %lld, meeting all %lld (checksum %.6g)\n", c.n, c.elapsed,
              c.stable, c.met, c.checksum);
  if (disturbance || actuator > 0.0)
    std::printf("disturbance or limited steps simulated for %lld evaluations, with the actuator limits for %lld (the rest "
                "screened out)\n", c.simulated, c.limited);
  std::printf("evaluations per second: %.0f\n", c.n / c.elapsed);
  if (sample_time > 0.0) {
    const Run d = run(true);
    std::printf("%s: %lld in %.2f s; stable %lld, meeting all %lld (checksum %.6g)\n", sampled_label(im).c_str(), d.n,
                d.elapsed, d.stable, d.met, d.checksum);
    std::printf("sampled evaluations per second: %.0f (cost %.2f times the continuous evaluation)\n", d.n / d.elapsed,
                (c.n / c.elapsed) / (d.n / d.elapsed));
  }
  return 0;
}
