// Planted-problem benchmark: problems known to be feasible, built from a random plant of a family
// seen in practice and a random compensator of an allowed structure placed around a target
// crossover; the requirements are what that compensator achieves, loosened by the slack factor.
// Reports the share that design meets, the median and worst time and the evaluations.
#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <random>
#include <string>
#include <vector>

#include "polewright/jobs/design.hpp"
#include "polewright/requirements/spec_parse.hpp"
#include "polewright/synthesis/candidate.hpp"

using namespace pw;
using nlohmann::json;

namespace {

const char* kFamilies[] = {"motor position",  "third-order process", "flexible joint", "first order plus dead time",
                           "open-loop unstable", "non-minimum phase", "double integrator", "parameter spread"};

json root(double re, double im = 0.0) {
  if (im == 0.0) return re;
  const double wn = std::hypot(re, im);
  return json{{"wn", wn}, {"zeta", -re / wn}};
}

struct Planted {
  std::string family;
  json plant;
  json stages;
  Zpk compensator;
  double crossover = 1.0;
};

// The plant of family f (parameters drawn from `rng`) and the stages its compensator uses.
Planted make_plant(int f, std::mt19937_64& rng) {
  auto U = [&](double a, double b) { return std::uniform_real_distribution<double>(a, b)(rng); };
  auto LU = [&](double a, double b) { return std::exp(U(std::log(a), std::log(b))); };
  Planted p;
  p.family = kFamilies[f];
  json pl;
  int lead = 1, lag = 0, notch = 0;
  bool integ = false;
  switch (f) {
    case 0: {  // K / (s (s + a))
      const double a = LU(0.5, 20);
      pl = {{"gain", LU(0.5, 50) * a}, {"poles", {0, -a}}};
      p.crossover = a * LU(0.7, 3);
      break;
    }
    case 1: {  // K / ((s + a)(s + b)(s + c)), PI plus lead
      const double a = LU(0.2, 2), b = a * LU(2, 6), c = b * LU(2, 6);
      pl = {{"gain", a * b * c * LU(0.5, 4)}, {"poles", {-a, -b, -c}}};
      p.crossover = a * LU(0.8, 2.5);
      integ = true;
      break;
    }
    case 2: {  // K / (s (s + a)(s^2 + 2 zeta w s + w^2)), lead plus notch
      const double a = LU(1, 10), w = a * LU(6, 15), z = U(0.01, 0.05);
      pl = {{"gain", LU(0.5, 5) * a * w * w}, {"poles", {0, -a, root(-z * w, w * std::sqrt(1 - z * z))}}};
      p.crossover = a * LU(0.8, 2);
      notch = 1;
      break;
    }
    case 3: {  // K e^{-L s} / (tau s + 1), PI plus lag
      const double tau = LU(1, 50), L = tau * LU(0.05, 0.4);
      pl = {{"gain", LU(0.5, 5) / tau}, {"poles", {-1.0 / tau}}, {"delay_s", L}};
      p.crossover = LU(0.2, 0.5) / L;
      integ = true;
      lead = 0;
      lag = 1;
      break;
    }
    case 4: {  // K / ((s - a)(s + b)): the crossover above the unstable pole
      const double a = LU(0.5, 5), b = a * LU(3, 10);
      pl = {{"gain", a * b * LU(1, 5)}, {"poles", {a, -b}}};
      p.crossover = a * LU(2.5, 4);
      break;
    }
    case 5: {  // K (z - s) / ((s + a)(s + b)), PI; crossover well below the zero
      const double a = LU(0.5, 5), b = a * LU(2, 8), z = a * LU(3, 10);
      pl = {{"gain", -LU(0.5, 4) * a * b / z}, {"zeros", {z}}, {"poles", {-a, -b}}};
      p.crossover = std::min(a * LU(0.5, 1.5), z / 4);
      integ = true;
      lead = 0;
      break;
    }
    case 6: {  // K / s^2
      pl = {{"gain", LU(0.1, 100)}, {"poles", {0, 0}}};
      p.crossover = LU(0.5, 20);
      break;
    }
    default: {  // motor position with three gain and pole variants
      const double a = LU(0.5, 20), k = LU(0.5, 50) * a;
      pl = {{"gain", k}, {"poles", {0, -a}}};
      pl["variants"] = json::array({json{{"gain", 0.85 * k}, {"poles", {0, -1.1 * a}}},
                                    json{{"gain", 1.15 * k}, {"poles", {0, -0.9 * a}}}});
      p.crossover = a * LU(0.7, 3);
      break;
    }
  }
  p.plant = pl;
  p.stages = {{"lead", lead}, {"lag", lag}, {"notch", notch}, {"integrator", integ},
              {"frequency_range_rad_s", {p.crossover / 100.0, p.crossover * 100.0}}};
  return p;
}

// A compensator of the stages around the crossover, gain from |C G (j wc)| = 1.
Zpk plant_compensator(const Planted& p, const Plant& g, std::mt19937_64& rng) {
  auto LU = [&](double a, double b) { return std::exp(std::uniform_real_distribution<double>(std::log(a), std::log(b))(rng)); };
  const double wc = p.crossover;
  Zpk c;
  c.gain = 1.0;
  if (p.stages["integrator"].get<bool>()) {
    c.zeros.push_back(Complex(-wc / LU(3, 10), 0));
    c.poles.push_back(Complex(0, 0));
  }
  for (int i = 0; i < p.stages["lead"].get<int>(); ++i) {
    const double r = LU(3, 12);
    c.zeros.push_back(Complex(-wc / std::sqrt(r), 0));
    c.poles.push_back(Complex(-wc * std::sqrt(r), 0));
  }
  for (int i = 0; i < p.stages["lag"].get<int>(); ++i) {
    const double r = LU(2, 8), z = wc / LU(5, 15);
    c.zeros.push_back(Complex(-z, 0));
    c.poles.push_back(Complex(-z / r, 0));
  }
  if (p.stages["notch"].get<int>() > 0) {
    Complex light(0, 0);
    for (const Complex& q : g.tf.poles)
      if (q.imag() > 0) light = q;
    const double wn = std::abs(light) * LU(0.95, 1.05), zp = LU(0.3, 0.7), zz = std::max(0.01, -light.real() / std::abs(light) * LU(0.5, 2));
    c.zeros.push_back(Complex(-zz * wn, wn * std::sqrt(1 - zz * zz)));
    c.zeros.push_back(std::conj(c.zeros.back()));
    c.poles.push_back(Complex(-zp * wn, wn * std::sqrt(1 - zp * zp)));
    c.poles.push_back(std::conj(c.poles.back()));
  }
  const Complex jw(0, wc);
  Complex v = c.evaluate(jw) * g.tf.evaluate(jw) * std::exp(-jw * g.delay_s);
  c.gain = 1.0 / std::abs(v);
  if (zpk_low_frequency_gain(g.tf) < 0) c.gain = -c.gain;
  for (const Complex& q : g.tf.poles)
    if (q.imag() == 0.0 && q.real() > 0.0) c.gain = -c.gain;
  return c;
}

json zpk_json(const Zpk& z) {
  json zs = json::array(), ps = json::array();
  for (const Complex& r : z.zeros)
    if (r.imag() >= 0) zs.push_back(root(r.real(), r.imag()));
  for (const Complex& r : z.poles)
    if (r.imag() >= 0) ps.push_back(root(r.real(), r.imag()));
  return {{"gain", z.gain}, {"zeros", zs}, {"poles", ps}};
}

// The planted problem's spec: requirements loosened from what the compensator achieves, or none
// when it does not stabilise every plant.
bool make_spec(const Planted& p, const Zpk& c, double slack, json& spec) {
  json probe = {{"plant", p.plant}, {"stages", p.stages},
                {"requirements", {{"overshoot_pct", {{"max", 99.0}}}, {"settling_time_s", {{"max", 200.0 / p.crossover}}},
                                  {"phase_margin_deg", {{"min", 0.001}}}, {"gain_margin_db", {{"min", 0.001}}},
                                  {"peak_effort", {{"max", 1e12}}}}}};
  const Spec s = parse_spec(probe);
  const Verifier v(LoopContext::FromSpec(s));
  const Candidate k = v.verify(c);
  if (!k.verification.all_stable) return false;
  auto val = [&](MetricId id) -> std::optional<double> {
    const MetricValue& m = k.worst[static_cast<size_t>(id)];
    return m.value && std::isfinite(*m.value) ? m.value : std::nullopt;
  };
  json req = json::object();
  const auto os = val(MetricId::Overshoot), ts = val(MetricId::SettlingTime), pm = val(MetricId::PhaseMargin);
  const auto gm = val(MetricId::GainMargin), ef = val(MetricId::PeakEffort);
  if (!os || !ts || !pm) return false;
  req["overshoot_pct"] = {{"max", std::min(99.0, std::max(*os, 0.5) * (1 + slack))}};
  req["settling_time_s"] = {{"max", *ts * (1 + slack)}};
  req["phase_margin_deg"] = {{"min", *pm / (1 + slack)}};
  if (gm && *gm > 0) req["gain_margin_db"] = {{"min", *gm / (1 + slack)}};
  if (ef) req["peak_effort"] = {{"max", *ef * (1 + slack)}};
  spec = {{"name", p.family}, {"plant", p.plant}, {"stages", p.stages}, {"requirements", req}};
  return true;
}

}  // namespace

int bench_planted(int argc, char** argv) {
  int count = 200;
  unsigned long long seed = 1;
  double slack = 0.25;
  int threads = 1;
  bool verbose = false;
  double budget_s = -1.0;  // the spec's default unless given
  std::string spec_dir;    // --write-specs: each problem's spec as DIR/planted-NNN.json, to rerun alone
  for (int i = 1; i < argc; ++i) {
    const std::string a = argv[i];
    auto next = [&] { return i + 1 < argc ? argv[++i] : ""; };
    if (a == "--count") count = std::atoi(next());
    else if (a == "--seed") seed = std::strtoull(next(), nullptr, 10);
    else if (a == "--slack") slack = std::atof(next());
    else if (a == "--threads") threads = std::atoi(next());
    else if (a == "--verbose") verbose = true;
    else if (a == "--budget-s") budget_s = std::atof(next());
    else if (a == "--write-specs") spec_dir = next();
    else {
      std::fprintf(stderr, "usage: polewright-bench planted [--count N] [--seed S] [--slack F] [--threads T] [--budget-s B] [--write-specs DIR] [--verbose]\n");
      return 2;
    }
  }
  std::mt19937_64 rng(seed);
  std::vector<double> times;
  std::vector<long long> evals;
  int met = 0, escalated = 0, fragile_first = 0;
  std::vector<int> fam_total(8, 0), fam_met(8, 0);
  for (int n = 0; n < count; ++n) {
    const int f = n % 8;
    json spec;
    Planted p;
    for (int tries = 0; tries < 50; ++tries) {
      p = make_plant(f, rng);
      const Spec probe = parse_spec(json{{"plant", p.plant}, {"stages", p.stages}, {"requirements", json::object()}});
      p.compensator = plant_compensator(p, probe.plants.front(), rng);
      if (make_spec(p, p.compensator, slack, spec)) break;
      spec = nullptr;
    }
    if (spec.is_null()) continue;
    if (!spec_dir.empty()) {
      char name[32];
      std::snprintf(name, sizeof name, "/planted-%03d.json", n);
      if (FILE* out = std::fopen((spec_dir + name).c_str(), "w")) {
        std::fputs(spec.dump(2).c_str(), out);
        std::fclose(out);
      }
    }
    const Spec s = parse_spec(spec);
    DesignOptions o = DesignOptions::FromSpec(s);
    o.threads = threads;
    if (budget_s >= 0.0) o.budget_s = budget_s;
    const auto t0 = std::chrono::steady_clock::now();
    const DesignReport rep = run_design(s, o);
    const double t = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
    times.push_back(t);
    evals.push_back(rep.summary.evaluations);
    met += rep.met();
    escalated += rep.summary.escalation_budget > 0;
    fragile_first += !rep.candidates.empty() && rep.candidates.front().meets && rep.candidates.front().fragile;
    fam_total[f] += 1;
    fam_met[f] += rep.met();
    if (verbose || !rep.met())
      std::printf("%3d %-28s %-6s %8.3f s %9lld evaluations%s\n", n, p.family.c_str(), rep.met() ? "met" : "NOT", t,
                  rep.summary.evaluations, rep.met() ? "" : ("  " + zpk_json(p.compensator).dump() + " " + spec["requirements"].dump()).c_str());
    std::fflush(stdout);
  }
  if (times.empty()) return 1;
  std::vector<double> ts = times;
  std::sort(ts.begin(), ts.end());
  std::vector<long long> es = evals;
  std::sort(es.begin(), es.end());
  std::printf("planted problems: %zu (seed %llu, slack %.2f, %d thread(s)); met %d (%.1f %%), escalated %d\n", times.size(),
              seed, slack, threads, met, 100.0 * met / times.size(), escalated);
  std::printf("rank 1 met but fragile (settling cliff): %d\n", fragile_first);
  std::printf("time: median %.3f s, worst %.3f s; evaluations: median %lld, worst %lld\n", ts[ts.size() / 2], ts.back(),
              es[es.size() / 2], es.back());
  for (int f = 0; f < 8; ++f)
    if (fam_total[f]) std::printf("  %-28s %d / %d met\n", kFamilies[f], fam_met[f], fam_total[f]);
  return 0;
}
