// The sampled loop against the requirements: compensator as it runs, plant with the computation
// delay folded into its dead time, metric values through the shared set_*_metrics routines.
#include <catch2/catch.hpp>

#include <cmath>

#include "polewright/model/discretize.hpp"
#include "polewright/requirements/region.hpp"
#include "polewright/requirements/sampled_evaluate.hpp"
#include "polewright/requirements/spec.hpp"
#include "support/make_zpk.hpp"

using namespace pw;
using pw::test::make;
using pw::test::plant_of;

namespace {
Implementation impl(double T, double d = 0.0) {
  Implementation im;
  im.sample_time_s = T;
  im.compute_delay_samples = d;
  return im;
}
RequirementSet overshoot_max(double pct) {
  RequirementSet r;
  r.items.push_back({MetricId::Overshoot, Sense::AtMost, pct});
  return r;
}
}  // namespace

TEST_CASE("the computation delay adds d T to the plant's dead time", "[implementation][sampled_evaluate]") {
  const Plant p = plant_with_compute_delay(plant_of(make(1.0, {}, {-1.0}), 0.01), impl(0.002, 1.5));
  CHECK(p.delay_s == Approx(0.013).epsilon(1e-15));  // 0.01 + 1.5 * 0.002
}

TEST_CASE("a first-order sampled loop has its closed-loop pole in closed form", "[implementation][sampled_evaluate]") {
  // Closed form (ZOH table entry, from memory): K a / (s + a) sampled at T is K (1 - e^(-aT)) / (z - e^(-aT)),
  // so the loop's pole is z = e^(-aT) - K (1 - e^(-aT)); with a computation delay of one sample
  // z^2 - e^(-aT) z + K (1 - e^(-aT)) = 0.
  const double a = 2.0, K = 0.5, T = 0.1, e = std::exp(-a * T);
  const Zpk c = make(K, {}, {});
  const Plant g = plant_of(make(a, {}, {-a}));
  const Region region;
  SampledLoopEvaluation s = evaluate_sampled_loop(c, g, impl(T), overshoot_max(50), region, AnalysisOptions{});
  REQUIRE(s.loop.stable);
  REQUIRE(s.analysis.poles.size() == 1);
  const double z = e - K * (1.0 - e);
  CHECK(s.analysis.poles[0].z.real() == Approx(z).epsilon(1e-12));
  REQUIRE(s.loop.poles.poles.size() == 1);
  CHECK(s.loop.poles.poles[0].pole.real() == Approx(std::log(z) / T).epsilon(1e-12));
  // Step final value K / (1 + K) (type 0) in both the figure and the metric path.
  REQUIRE(s.loop.step);
  CHECK(s.loop.step->final_value == Approx(K / (1.0 + K)).epsilon(1e-12));
  s = evaluate_sampled_loop(c, g, impl(T, 1.0), overshoot_max(50), region, AnalysisOptions{});
  const Complex disc = std::sqrt(Complex(e * e - 4.0 * K * (1.0 - e), 0.0));
  const Complex r1 = 0.5 * (e + disc);
  REQUIRE(s.analysis.poles.size() == 2);
  CHECK(std::abs(s.analysis.poles[0].z) == Approx(std::abs(r1)).epsilon(1e-12));
}

TEST_CASE("a whole-sample computation delay folded into the dead time equals the delay register path",
          "[implementation][sampled_evaluate]") {
  // The same loop two ways: compute_delay = 1 in analyze_discrete_loop (a register of u) and one
  // sample added to the plant's dead time (the modified ZOH): figures agree to rounding.
  const Zpk c = make(1.0, {-0.5}, {-4.0});
  const Plant g = plant_of(make(4.0, {}, {0.0, -2.0}), 0.013);
  DiscreteLoopOptions o;
  o.sample_time_s = 0.05;
  o.compute_delay = 1;
  const Zpk cd = discretize(c, DiscretizeOptions{0.05, DiscreteMethod::Tustin, 0.0, true});
  const DiscreteLoopAnalysis ref = analyze_discrete_loop(cd, g, o);
  const SampledLoopEvaluation s = evaluate_sampled_loop(cd, g, impl(0.05, 1.0), overshoot_max(90), Region{}, AnalysisOptions{});
  REQUIRE(ref.step);
  REQUIRE(s.analysis.step_at_samples);
  CHECK(*s.analysis.step_at_samples->overshoot_pct == Approx(*ref.step->overshoot_pct).margin(1e-9));
  CHECK(*s.analysis.frequency.phase_margin_deg == Approx(*ref.frequency.phase_margin_deg).margin(1e-6));
  // And the metric value is the figure between the samples, at least the one at the instants.
  const MetricValue& os = s.loop.values[static_cast<size_t>(MetricId::Overshoot)];
  REQUIRE(os.value);
  CHECK(*os.value >= *ref.step->overshoot_pct);
}

TEST_CASE("float coefficients: the compensator rebuilt from float-rounded biquads", "[implementation][sampled_evaluate]") {
  // A pole at z = 1 - 3e-9 becomes the nearest float to it (a1 = -p rounded to float): here 1, a
  // value anyone can check (float spacing just below 1 is 2^-24 ~ 6e-8).
  const Zpk d = make(0.01, {0.5}, {1.0 - 3e-9});
  const Zpk q = float_rounded_compensator(d);
  REQUIRE(q.poles.size() == 1);
  CHECK(q.poles[0].real() == static_cast<double>(static_cast<float>(1.0 - 3e-9)));
  // Elsewhere the response agrees to float precision.
  const Zpk d2 = make(0.37, {0.81, Complex(0.6, 0.3), Complex(0.6, -0.3)}, {0.2, Complex(0.9, 0.1), Complex(0.9, -0.1)});
  const Zpk q2 = float_rounded_compensator(d2);
  for (double w : {0.05, 0.5, 2.0}) {
    const Complex z = std::polar(1.0, w);
    CHECK(std::abs(q2.evaluate(z) - d2.evaluate(z)) <= 1e-5 * std::abs(d2.evaluate(z)));
  }
}

TEST_CASE("implement_compensator warps at the crossover unless a warp point is given", "[implementation][sampled_evaluate]") {
  // Prewarped Tustin is exact at the warp point (field notes: s = (w0 / tan(w0 T / 2)) (z - 1) / (z + 1)).
  const Zpk c = make(3.0, {-1.0}, {-10.0});
  Implementation im = impl(0.05);
  im.method = DiscreteMethod::Prewarp;
  const ImplementedCompensator a = implement_compensator(c, im, 7.0);
  REQUIRE(a.warp_rad_s);
  CHECK(*a.warp_rad_s == 7.0);
  CHECK(std::abs(discrete_response(a.discrete, 7.0, 0.05) - c.evaluate(Complex(0.0, 7.0))) < 1e-12);
  im.prewarp_rad_s = 20.0;
  const ImplementedCompensator b = implement_compensator(c, im, 7.0);
  CHECK(std::abs(discrete_response(b.discrete, 20.0, 0.05) - c.evaluate(Complex(0.0, 20.0))) < 1e-12);
  im.prewarp_rad_s.reset();
  CHECK_THROWS_WITH(implement_compensator(c, im, std::nullopt), Catch::StartsWith("$.implementation.prewarp_rad_s: is needed"));
  CHECK_THROWS_WITH(implement_compensator(c, im, 100.0), Catch::StartsWith("$.implementation.sample_time_s: is too long"));
}

TEST_CASE("sampled_label names T, the method and the delay", "[implementation][sampled_evaluate]") {
  Implementation im = impl(0.002, 0.5);
  CHECK(sampled_label(im) == "sampled at T = 0.002 s (tustin, delay 0.5 samples)");
  im.word_length = WordLength::Float;
  im.method = DiscreteMethod::Zoh;
  CHECK(sampled_label(im) == "sampled at T = 0.002 s (zoh, delay 0.5 samples, float coefficients)");
}

TEST_CASE("implementation_words: one sample, not one samples", "[implementation][sampled_evaluate]") {
  Implementation im = impl(0.01, 1.0);
  CHECK(implementation_words(im) == "tustin, delay 1 sample");
  CHECK(sampled_label(im) == "sampled at T = 0.01 s (tustin, delay 1 sample)");
  im.compute_delay_samples = 0.0;
  CHECK(implementation_words(im) == "tustin, delay 0 samples");
  im.compute_delay_samples = 2.0;
  im.word_length = WordLength::Float;
  CHECK(implementation_words(im) == "tustin, delay 2 samples, float coefficients");
}

TEST_CASE("the screening window is four times the longest time limit, in samples", "[implementation][sampled_evaluate]") {
  RequirementSet r = overshoot_max(10);
  CHECK(screening_window_samples(r, 0.002) == 0);  // no time limit: no window
  r.items.push_back({MetricId::SettlingTime, Sense::AtMost, 0.8});
  r.items.push_back({MetricId::RiseTime, Sense::AtMost, 0.3});
  CHECK(screening_window_samples(r, 0.002) == 1600);  // 4 * 0.8 / 0.002 (by hand)
  CHECK(screening_window_samples(r, 0.1) == 200);     // 32 samples, raised to the floor of 200
}

TEST_CASE("the screening form of the sampled loop: figures at the instants from the window", "[implementation][sampled_evaluate]") {
  // K a / (s + a) with a = 2, K = 0.5 at T = 0.1 (closed form above): a first-order loop with pole
  // z = e^(-aT) - K (1 - e^(-aT)) = 0.7280 has no overshoot between or at the samples, and its
  // samples y[k] = y_f (1 - z^k) (first-order difference equation, by hand) reach the 2 % band
  // after ln(0.02) / ln(z) = 12.3 samples, well inside the window of 4 * 5 s / 0.1 = 200 samples.
  const double a = 2.0, K = 0.5, T = 0.1, e = std::exp(-a * T), z = e - K * (1.0 - e);
  const Zpk c = make(K, {}, {});
  const Plant g = plant_of(make(a, {}, {-a}));
  RequirementSet req = overshoot_max(50);
  req.items.push_back({MetricId::SettlingTime, Sense::AtMost, 5.0});
  const Region region;
  const SampledLoopEvaluation full = evaluate_sampled_loop(c, g, impl(T), req, region, AnalysisOptions{});
  const SampledLoopEvaluation screen = evaluate_sampled_loop(c, g, impl(T), req, region, AnalysisOptions{}, 0, true);
  REQUIRE(full.loop.step);
  REQUIRE(screen.loop.step);
  CHECK_FALSE(screen.analysis.step_at_samples);  // no look between the samples
  CHECK(full.analysis.step_at_samples);
  CHECK(screen.loop.step->samples <= 200);
  const double ts = std::log(0.02) / std::log(z) * T;  // continuous-k crossing; the tool interpolates linearly
  REQUIRE(screen.loop.step->settling_time_s);
  CHECK(*screen.loop.step->settling_time_s == Approx(ts).epsilon(0.03));
  CHECK(*screen.loop.step->settling_time_s == Approx(*full.analysis.step_at_samples->settling_time_s).epsilon(1e-12));
}

TEST_CASE("the screening window cuts a long step without flagging it truncated", "[implementation][sampled_evaluate]") {
  // The same loop at T = 0.01: z = e^(-0.02) - 0.5 (1 - e^(-0.02)) = 0.9703; the envelope horizon
  // (a tenth of the 2 % band) is about ln(0.002 / 3) / ln(z) = 243 samples, the window 200 (the floor;
  // 4 * 0.05 / 0.01 = 20), and the band is reached after ln(0.02) / ln(z) = 130 samples (by hand).
  const double a = 2.0, K = 0.5, T = 0.01, e = std::exp(-a * T), z = e - K * (1.0 - e);
  const Zpk c = make(K, {}, {});
  const Plant g = plant_of(make(a, {}, {-a}));
  RequirementSet req = overshoot_max(50);
  req.items.push_back({MetricId::SettlingTime, Sense::AtMost, 0.05});
  const Region region;
  const SampledLoopEvaluation full = evaluate_sampled_loop(c, g, impl(T), req, region, AnalysisOptions{});
  const SampledLoopEvaluation screen = evaluate_sampled_loop(c, g, impl(T), req, region, AnalysisOptions{}, 0, true);
  REQUIRE(full.loop.step);
  REQUIRE(screen.loop.step);
  CHECK(full.loop.step->samples > 200);
  CHECK(screen.loop.step->samples == 200);
  CHECK_FALSE(screen.analysis.step_truncated);
  REQUIRE(screen.loop.step->settling_time_s);
  CHECK(*screen.loop.step->settling_time_s == Approx(std::log(0.02) / std::log(z) * T).epsilon(0.01));
}
