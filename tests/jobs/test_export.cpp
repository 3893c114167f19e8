// The export job: options, re-verification verdicts and warnings.
#include <catch2/catch.hpp>

#include <cmath>

#include "polewright/jobs/check.hpp"
#include "polewright/jobs/design.hpp"
#include "polewright/jobs/export.hpp"
#include "polewright/outputs/design_output.hpp"
#include "polewright/requirements/spec_parse.hpp"

using namespace pw;
using nlohmann::json;

namespace {

// A check-style result: 4 / (s (s + 2)) under a lead (the loop of the CLI's met example).
ResultInput lead_result(double pm_min = 45.0, double os_max = 25.0) {
  const json doc = {{"tool", {{"job", "check"}}},
                    {"spec",
                     {{"plant", {{"gain", 4}, {"poles", {0, -2}}}},
                      {"requirements", {{"phase_margin_deg", {{"min", pm_min}}}, {"overshoot_pct", {{"max", os_max}}}}}}},
                    {"compensator", {{"gain", 4.68}, {"zeros", {-2.9}}, {"poles", {-5.4}}}}};
  return parse_result(doc);
}

ExportOptions at(double T) {
  ExportOptions o;
  o.sample_time_s = T;
  return o;
}

bool has_warning(const ExportReport& r, const std::string& part) {
  for (const std::string& w : r.warnings)
    if (w.find(part) != std::string::npos) return true;
  return false;
}

}  // namespace

TEST_CASE("export options are validated", "[export][export_job]") {
  std::string err;
  CHECK(!at(0.0).IsValid(&err));
  CHECK(err.find("sample_time_s ") == 0);  // the field, not a command-line option
  CHECK(!at(-1.0).IsValid(&err));
  CHECK(!at(NAN).IsValid(&err));
  ExportOptions o = at(1e-3);
  CHECK(o.IsValid(&err));
  o.clamp = std::make_pair(1.0, -1.0);
  CHECK(!o.IsValid(&err));
  o.clamp.reset();
  o.prewarp_rad_s = 1e5;  // above pi / T
  CHECK(!o.IsValid(&err));
  CHECK_THROWS_AS(run_export(lead_result(), 1, at(0.0)), SpecError);
  CHECK_THROWS_AS(run_export(lead_result(), 2, at(1e-3)), SpecError);  // one compensator only
}

TEST_CASE("export errors name the ExportOptions field to blame, never a command-line option", "[export][export_job]") {
  auto path_of = [](const ResultInput& in, int rank, const ExportOptions& o) {
    try {
      run_export(in, rank, o);
    } catch (const SpecError& e) {
      return e.path();
    }
    return std::string("(no error)");
  };
  CHECK(path_of(lead_result(), 1, at(0.0)) == "sample_time_s");
  CHECK(path_of(lead_result(), 2, at(1e-3)) == "rank");
  ExportOptions o = at(1e-3);
  o.compute_delay_samples = -1;
  CHECK(path_of(lead_result(), 1, o) == "compute_delay_samples");
  o = at(1e-3);
  o.clamp = std::make_pair(1.0, -1.0);
  CHECK(path_of(lead_result(), 1, o) == "clamp");
  o = at(1e-3);
  o.min_rate_ratio = 0.0;
  CHECK(path_of(lead_result(), 1, o) == "min_rate_ratio");
  o = at(1e-3);
  o.float_radius_fraction = 1.0;
  CHECK(path_of(lead_result(), 1, o) == "float_radius_fraction");
  // Prewarp with a bare compensator has no crossover to warp at.
  o = at(1e-2);
  o.method = DiscreteMethod::Prewarp;
  CHECK(path_of(parse_result(json{{"gain", 2}, {"zeros", {-1}}, {"poles", {0}}}), 1, o) == "prewarp_rad_s");
  // Problem() and IsValid agree: the first bad field, then its message.
  o = at(-1.0);
  REQUIRE(o.Problem());
  CHECK(o.Problem()->field == "sample_time_s");
  std::string err;
  CHECK(!o.IsValid(&err));
  CHECK(err == "sample_time_s " + o.Problem()->message);
  CHECK(!at(1e-3).Problem());
}

TEST_CASE("a compensator cancelling an unstable plant pole is blamed at its own path in the result", "[export][export_job]") {
  // Plant 1/((s - 3)(s + 1)); a compensator zero at +3 cancels the unstable pole (refused).
  const json spec = {{"plant", {{"gain", 1}, {"poles", {3, -1}}}}, {"requirements", {{"phase_margin_deg", {{"min", 30}}}}}};
  const json good = {{"gain", 20}, {"zeros", {-1}}, {"poles", {-20}}};
  const json bad = {{"gain", 20}, {"zeros", {3}}, {"poles", {-20}}};
  const json design = {{"tool", {{"job", "design"}}},
                       {"spec", spec},
                       {"candidates", {{{"compensator", good}}, {{"compensator", bad}}}}};
  const ResultInput in = parse_result(design);
  CHECK(result_compensator_path(in, 2) == "$.candidates[1].compensator");
  CHECK_THROWS_WITH(run_export(in, 2, at(1e-3)), Catch::StartsWith("$.candidates[1].compensator: compensator zero"));
}

TEST_CASE("export's continuous column is check's worst case, and its sampled one uses the same rule", "[export][export_job]") {
  // One rule for the worst case over the plants (worst_over_plants): the continuous figures export
  // compares against are exactly what check reports for the same compensator and plants.
  const json doc = {{"tool", {{"job", "check"}}},
                    {"spec",
                     {{"plant", {{"gain", 4}, {"poles", {0, -2}}, {"variants", {{{"gain", 3}}, {{"gain", 6}}}}}},
                      {"requirements",
                       {{"phase_margin_deg", {{"min", 45}}}, {"overshoot_pct", {{"max", 25}}}, {"gain_margin_db", {{"min", 6}}},
                        {"settling_time_s", {{"max", 3}}}}}}},
                    {"compensator", {{"gain", 4.68}, {"zeros", {-2.9}}, {"poles", {-5.4}}}}};
  const ResultInput in = parse_result(doc);
  const ExportReport r = run_export(in, 1, at(0.02));
  const Spec& spec = *in.spec;
  const Evaluation ev = evaluate_all(in.compensators[0], spec.plants, spec.requirements,
                                     region_from_requirements(spec.requirements), spec.analysis);
  REQUIRE(r.outcomes.size() == ev.outcomes.size());
  for (size_t k = 0; k < r.outcomes.size(); ++k) {
    CHECK(r.outcomes[k].continuous.infinite == ev.outcomes[k].worst.infinite);
    CHECK(r.outcomes[k].continuous.value == ev.outcomes[k].worst.value);  // bit for bit
    // The sampled worst case is the plant worst_over_plants picks from the sampled figures.
    const size_t m = static_cast<size_t>(r.outcomes[k].requirement.metric);
    const WorstCase w = worst_over_plants(r.outcomes[k].requirement, r.loops.size(), [&](size_t i) {
      return PlantValue{r.loops[i].discrete[m], r.loops[i].discrete_eval.stable};
    });
    CHECK(r.outcomes[k].worst_plant == w.plant);
  }
}

TEST_CASE("the sampled loop's metrics are assigned by the continuous loop's routines", "[export][export_job]") {
  // discrete_metric_values on figures copied from a continuous evaluation gives the continuous
  // values for every metric drawn from them (the pole metrics come from the z-plane poles).
  const ResultInput in = lead_result();
  const Spec& spec = *in.spec;
  const Region region = region_from_requirements(spec.requirements);
  const LoopEvaluation e = evaluate_loop(in.compensators[0], spec.plants[0], spec.requirements, region, spec.analysis);
  REQUIRE(e.stable);
  REQUIRE(e.step);
  DiscreteLoopAnalysis a;
  a.well_posed = true;
  a.stable = true;
  a.frequency = e.frequency;
  a.steady_state = e.steady_state;
  a.step = e.step;
  const MetricValues v = discrete_metric_values(a);
  for (MetricId id : {MetricId::PhaseMargin, MetricId::GainMargin, MetricId::Crossover, MetricId::Bandwidth,
                      MetricId::PeakSensitivity, MetricId::SteadyStateError, MetricId::Overshoot, MetricId::SettlingTime,
                      MetricId::RiseTime, MetricId::PeakEffort}) {
    const size_t i = static_cast<size_t>(id);
    CHECK(v[i].infinite == e.values[i].infinite);
    CHECK(v[i].value == e.values[i].value);
  }
}

TEST_CASE("a fast-sampled export meets what the continuous loop meets", "[export][export_job]") {
  // Crossover about 4.4 rad/s: at T = 1 ms the rate is ~1400 times the crossover.
  const ExportReport r = run_export(lead_result(), 1, at(1e-3));
  REQUIRE(r.verified);
  CHECK(r.discrete_stable);
  CHECK(r.all_met);
  CHECK(r.warnings.empty());
  REQUIRE(r.loops.size() == 1);
  const auto pm = static_cast<size_t>(MetricId::PhaseMargin);
  // Field notes: the hold costs about wT/2 = 0.13 deg here.
  CHECK(*r.loops[0].continuous[pm].value - *r.loops[0].discrete[pm].value == Approx(0.13).margin(0.1));
  // The cascade reproduces the discrete transfer function.
  const Complex z = std::polar(1.0, 0.3);
  CHECK(std::abs(cascade_evaluate(r.cascade, z) - r.discrete.evaluate(z)) < 1e-12 * std::abs(r.discrete.evaluate(z)));
}

TEST_CASE("a slow-sampled export warns and fails the phase margin", "[export][export_job]") {
  // 2 pi / T = 3.1 times the crossover with one sample of computation delay: the predicted loss
  // wT/2 + wT (field notes) is ~150 deg at this crossover, far beyond the 5 deg threshold.
  ExportOptions o = at(0.2);
  o.compute_delay_samples = 1;
  const ExportReport r = run_export(lead_result(), 1, o);
  CHECK(!r.all_met);
  CHECK(has_warning(r, "sample rate"));
  // Moderately slow (T = 30 ms, ~47 times the crossover, d = 1): the margin drops by about
  // 1.5 wT = 11 deg: warned, while the rate is fine.
  ExportOptions m = at(0.03);
  m.compute_delay_samples = 1;
  const ExportReport q = run_export(lead_result(30.0, 40.0), 1, m);
  CHECK(has_warning(q, "phase margin drops"));
  CHECK(!has_warning(q, "sample rate"));
  CHECK(q.all_met);  // 30 deg and 40 % are still met (overshoot grows from 21 % to 30 %)
}

TEST_CASE("prewarp defaults to the crossover; a bare compensator is not re-verified", "[export][export_job]") {
  ExportOptions o = at(1e-2);
  o.method = DiscreteMethod::Prewarp;
  const ExportReport r = run_export(lead_result(), 1, o);
  REQUIRE(r.warp_rad_s);
  CHECK(*r.warp_rad_s == Approx(*r.loops[0].continuous_eval.frequency.crossover_rad_s));
  // Exact at the warp point (analytic property of the prewarped map).
  const Complex want = r.continuous.evaluate(Complex(0.0, *r.warp_rad_s));
  CHECK(std::abs(discrete_response(r.discrete, *r.warp_rad_s, 1e-2) - want) < 1e-12 * std::abs(want));

  const ResultInput bare = parse_result(json{{"gain", 2}, {"zeros", {-1}}, {"poles", {0}}});
  CHECK_THROWS_AS(run_export(bare, 1, o), SpecError);  // no crossover to warp at
  const ExportReport b = run_export(bare, 1, at(1e-2));
  CHECK(!b.verified);
  CHECK(b.cascade.sections.size() == 1);
  CHECK(b.cascade.sections[0].integrator);
  bool noted = false;
  for (const std::string& n : b.notes) noted = noted || n.find("not re-verified") != std::string::npos;
  CHECK(noted);
}

TEST_CASE("a section near the unit circle warns for float code", "[export][export_job]") {
  // A slow double lag pole (0.02 rad/s) sampled at 10 kHz: p = exp(-2e-6), float rounding of a1, a2
  // moves it by far more than its distance 2e-6 to the circle (see the biquad tests).
  const ResultInput slow = parse_result(json{{"gain", 1}, {"zeros", {-0.5, -0.6}}, {"poles", {-0.02, -0.021}}});
  ExportOptions o = at(1e-4);
  o.precision = Precision::Float;
  const ExportReport r = run_export(slow, 1, o);
  CHECK(has_warning(r, "close to instability in float"));
  o.precision = Precision::Double;
  CHECK(!has_warning(run_export(slow, 1, o), "close to instability in float"));
}

TEST_CASE("discrete_metric_values maps the sampled figures", "[export][export_job]") {
  const ExportReport r = run_export(lead_result(), 1, at(1e-3));
  const auto& v = r.loops[0].discrete;
  CHECK(v[static_cast<size_t>(MetricId::Overshoot)].value);
  CHECK(v[static_cast<size_t>(MetricId::PhaseMargin)].value);
  CHECK(!v[static_cast<size_t>(MetricId::GainTolerance)].known());  // not asked for by this spec
  CHECK(discrete_metric_values(r.loops[0].discrete_eval)[static_cast<size_t>(MetricId::Overshoot)].value ==
        v[static_cast<size_t>(MetricId::Overshoot)].value);
}

TEST_CASE("gain tolerance is re-verified on the sampled loop", "[export][export_job]") {
  // Reference: the continuous gain tolerance of the same loop (the existing check path). The
  // sampled figure converges to it as T shrinks (error of order wT): 1.2 points at T = 1 ms,
  // 0.12 at 0.1 ms.
  const json doc = {{"tool", {{"job", "check"}}},
                    {"spec",
                     {{"plant", {{"gain", 4}, {"poles", {0, -2}}}},
                      {"requirements", {{"gain_tolerance_pct", {{"min", 10}}}, {"damping_ratio", {{"min", 0.4}}}}}}},
                    {"compensator", {{"gain", 4.68}, {"zeros", {-2.9}}, {"poles", {-5.4}}}}};
  const auto gt = static_cast<size_t>(MetricId::GainTolerance);
  const ExportReport r = run_export(parse_result(doc), 1, at(1e-4));
  REQUIRE(r.loops[0].continuous[gt].value);
  REQUIRE(r.loops[0].discrete[gt].value);
  CHECK(*r.loops[0].discrete[gt].value == Approx(*r.loops[0].continuous[gt].value).margin(0.3));
  CHECK(r.all_met);
  const ExportReport coarse = run_export(parse_result(doc), 1, at(1e-3));
  CHECK(std::abs(*coarse.loops[0].discrete[gt].value - *coarse.loops[0].continuous[gt].value) >
        std::abs(*r.loops[0].discrete[gt].value - *r.loops[0].continuous[gt].value));
}

TEST_CASE("discrete_closed_loop_poles scales the compensator", "[export][discrete_loop]") {
  // K / (s (s + 1)) behind a ZOH at T = 1 reaches |z| = 1 at K = (1 - e^-1) / (1 - 2 e^-1) (Jury, see
  // the discrete-loop tests): the product of the two poles is a + K b0 = 1 there.
  Plant g;
  g.tf.poles = {Complex(0.0, 0.0), Complex(-1.0, 0.0)};
  const SampledPlant sp = sample_plant(g, 1.0, 0);
  const double limit = (1.0 - std::exp(-1.0)) / (1.0 - 2.0 * std::exp(-1.0));
  Zpk one;
  const DiscretePoles at_limit = discrete_closed_loop_poles(one, sp, limit, 0.02);
  REQUIRE(at_limit.poles.size() == 2);
  CHECK(std::abs(at_limit.poles[0].z * at_limit.poles[1].z) == Approx(1.0).epsilon(1e-9));
  CHECK(discrete_closed_loop_poles(one, sp, 0.9 * limit, 0.02).stable);
  CHECK(!discrete_closed_loop_poles(one, sp, 1.1 * limit, 0.02).stable);
}

TEST_CASE("a step cut at the sample cap gives no step figure and cannot pass", "[export][export_job]") {
  // The loop settles in a few seconds (closed-loop poles near -2 +/- 3.5j, from the report): at
  // T = 1e-6 that is millions of samples, above the 200000-sample cap.
  const ExportReport r = run_export(lead_result(), 1, at(1e-6));
  REQUIRE(r.loops.size() == 1);
  CHECK(r.loops[0].discrete_eval.step_truncated);
  CHECK_FALSE(r.loops[0].discrete[static_cast<size_t>(MetricId::Overshoot)].known());
  CHECK_FALSE(r.loops[0].discrete[static_cast<size_t>(MetricId::SettlingTime)].known());
  CHECK(r.loops[0].discrete[static_cast<size_t>(MetricId::PhaseMargin)].known());  // frequency figures stay
  for (const ExportOutcome& o : r.outcomes)
    if (o.requirement.metric == MetricId::Overshoot) CHECK_FALSE(o.met);
  CHECK_FALSE(r.all_met);
  CHECK(has_warning(r, "no step figure is given"));
  // At 1e-3 the same loop is stepped to the end and meets.
  CHECK(run_export(lead_result(), 1, at(1e-3)).all_met);
}

TEST_CASE("a sample time beyond double precision is refused", "[export][export_job]") {
  // Crossover about 3.3 rad/s: 3.3e-11 rad per sample at T = 1e-11, under the 1e-8 floor.
  CHECK_THROWS_WITH(run_export(lead_result(), 1, at(1e-11)), Catch::Contains("too short for double precision"));
  CHECK_NOTHROW(run_export(lead_result(), 1, at(1e-8)));  // 3.3e-8 rad per sample
}

TEST_CASE("export takes the spec's implementation as its default and gives check's sampled verdict", "[export][export_job]") {
  // Our own scenario: a gimbal axis 20 / (s (s + 4)) under a lead, run at T = 20 ms with a
  // fractional computation delay (0.5 sample) and float coefficients. Export with the options the
  // implementation block gives must judge the same sampled loop as check: every worst value and
  // verdict equal (both go through evaluate_sampled_loop), and a note says so.
  const json spec = json::parse(R"({"plant": {"gain": 20, "poles": [0, -4]},
    "requirements": {"overshoot_pct": {"max": 25}, "settling_time_s": {"max": 2.5},
                     "phase_margin_deg": {"min": 40}},
    "current": {"gain": 2.2, "zeros": [-3], "poles": [-12]},
    "implementation": {"sample_time_s": 0.02, "method": "tustin", "compute_delay_samples": 0.5,
                       "word_length": "float"}})");
  const Spec s = parse_spec(spec);
  REQUIRE(s.implementation);
  const ExportOptions o = ExportOptions::FromImplementation(*s.implementation);
  CHECK(o.sample_time_s == 0.02);
  CHECK(o.method == DiscreteMethod::Tustin);
  CHECK(o.compute_delay_samples == 0.5);
  CHECK(o.precision == Precision::Float);
  const Implementation back = o.implementation();
  CHECK(back.sample_time_s == 0.02);
  CHECK(back.compute_delay_samples == 0.5);
  CHECK(back.word_length == WordLength::Float);

  const CheckReport c = run_check(s, *s.current);
  REQUIRE(c.sampled);
  const ResultInput in = parse_result(json{{"tool", {{"job", "check"}}}, {"spec", spec}, {"compensator", {{"gain", 2.2}, {"zeros", {-3}}, {"poles", {-12}}}}});
  const ExportReport r = run_export(in, 1, o);
  REQUIRE(r.outcomes.size() == c.evaluation.outcomes.size());
  for (size_t i = 0; i < r.outcomes.size(); ++i) {
    INFO(metric_info(r.outcomes[i].requirement.metric).key);
    const MetricValue& a = r.outcomes[i].discrete;
    const MetricValue& b = c.evaluation.outcomes[i].worst;
    REQUIRE(a.value.has_value() == b.value.has_value());
    if (a.value) CHECK(*a.value == *b.value);
    CHECK(r.outcomes[i].met == c.evaluation.outcomes[i].met);
  }
  CHECK(r.all_met == c.evaluation.all_met);
  bool noted = false;
  for (const std::string& n : r.notes) noted = noted || n.find("implementation block") != std::string::npos;
  CHECK(noted);
  // Another sample time than the spec's: warned, since the verdict is then of another loop.
  ExportOptions other = o;
  other.sample_time_s = 0.01;
  CHECK(has_warning(run_export(in, 1, other), "implementation block"));
}

TEST_CASE("a design made at T re-exports at T with the same figures and verdict", "[export][export_job][implementation]") {
  // examples/sampled/arm-joint.json designs on the loop sampled at 2 ms (Tustin, one sample of
  // delay). Exporting rank 1 of that result with the defaults its spec gives must re-verify the same
  // sampled loop: every worst value equal to the design's, and the same verdict.
  const Spec spec = parse_spec(read_json_file(std::string(POLEWRIGHT_SOURCE_DIR) + "/examples/sampled/arm-joint.json"));
  REQUIRE(spec.implementation);
  DesignOptions d = DesignOptions::FromSpec(spec);
  d.threads = 1;
  const DesignReport rep = run_design(spec, d);
  REQUIRE(rep.met());
  const ResultInput in = parse_result(design_report_json(rep, false));
  const ExportReport r = run_export(in, 1, ExportOptions::FromImplementation(*spec.implementation));
  const Candidate& c = rep.candidates.front();
  CHECK(r.all_met == c.meets);
  for (const ExportOutcome& o : r.outcomes) {
    INFO(metric_info(o.requirement.metric).key);
    const MetricValue& want = c.worst[static_cast<size_t>(o.requirement.metric)];
    REQUIRE(o.discrete.value.has_value() == want.value.has_value());
    if (want.value) CHECK(*o.discrete.value == *want.value);
  }
}

TEST_CASE("export lists the figures without a sampled evaluation as not judged, and its verdict counts the rest",
          "[export][export_job][actuator]") {
  // The lead loop with an actuator-limited overshoot bound and a load-step peak: neither has a
  // sampled-loop evaluation, so they are shown with their continuous value, marked not judged, and
  // the sampled verdict rests on phase margin and overshoot alone (both met at T = 0.02 s).
  const json doc = {{"tool", {{"job", "check"}}},
                    {"spec",
                     {{"plant", {{"gain", 4}, {"poles", {0, -2}}}},
                      {"requirements",
                       {{"phase_margin_deg", {{"min", 45}}}, {"overshoot_pct", {{"max", 25}}},
                        {"saturated_overshoot_pct", {{"max", 1}}}, {"load_peak", {{"max", 10}}}}},
                      {"actuator", {{"min", -2}, {"max", 2}}}}},
                    {"compensator", {{"gain", 4.68}, {"zeros", {-2.9}}, {"poles", {-5.4}}}}};
  const ExportReport r = run_export(parse_result(doc), 1, at(0.02));
  REQUIRE(r.outcomes.size() == 4);
  int judged = 0;
  for (const ExportOutcome& o : r.outcomes) {
    const bool on_request = metric_info(o.requirement.metric).on_request;
    CHECK(o.judged == !on_request);
    if (on_request) {
      CHECK(o.continuous.known());   // the continuous figure is shown
      CHECK_FALSE(o.discrete.known());
      CHECK_FALSE(o.met);
    }
    judged += o.judged;
  }
  CHECK(judged == 2);
  CHECK(r.not_judged == std::vector<std::string>{"load_peak", "saturated_overshoot_pct"});
  CHECK(r.all_met);  // the judged two are met, and the unjudged do not count either way
}
