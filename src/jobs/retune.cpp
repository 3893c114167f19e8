#include "polewright/jobs/retune.hpp"

#include <nlopt.hpp>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <random>

#include "polewright/jobs/check.hpp"
#include "polewright/requirements/metric.hpp"
#include "polewright/synthesis/parallel.hpp"
#include "polewright/synthesis/parameters.hpp"
#include "polewright/synthesis/problem.hpp"
#include "polewright/synthesis/seeds.hpp"

namespace pw {

bool RetuneOptions::IsValid(std::string* error) const {
  auto fail = [&](const char* m) {
    if (error) *error = m;
    return false;
  };
  if (keep < 1) return fail("keep must be >= 1");
  if (threads < 0) return fail("threads must be >= 0");
  if (starts < 1) return fail("starts must be >= 1");
  if (evaluations < 10) return fail("evaluations must be >= 10");
  if (!(start_spread_decades >= 0.0)) return fail("start_spread_decades must be >= 0");
  if (!(corner_decades > 0.0) || !(gain_decades > 0.0)) return fail("corner_decades and gain_decades must be > 0");
  if (!(penalty > 0.0)) return fail("penalty must be > 0");
  if (!(distinct_decades >= 0.0)) return fail("distinct_decades must be >= 0");
  return true;
}

RetuneOptions RetuneOptions::FromSpec(const Spec& spec) {
  RetuneOptions o;
  o.keep = spec.search.keep;
  o.seed = spec.search.seed;
  o.threads = spec.search.threads;
  return o;
}

namespace {

using Clock = std::chrono::steady_clock;

struct Point {
  std::vector<double> x;
  double distance = INFINITY;
  bool feasible = false;
  double violation = INFINITY;
  std::string origin;
};

// Scores points of one retune space with the screening evaluator.
struct RetuneProblem {
  const RetuneSpace* space;
  const DesignProblem* screen;
  long long evaluations = 0;
  Point best;  // feasible with the least distance, else the least violation
  const std::atomic<bool>* cancel = nullptr;

  Point score(const std::vector<double>& x) {
    if (cancel && cancel->load(std::memory_order_relaxed)) return Point{x, INFINITY, false, INFINITY, ""};  // winding down
    ++evaluations;
    const DesignScore s = screen->score_compensator(retune_to_zpk(*space, x));
    Point p{x, change_distance(*space, x), s.feasible, s.violation, ""};
    const bool better = best.x.empty() || (p.feasible && !best.feasible) ||
                        (p.feasible && best.feasible && p.distance < best.distance) ||
                        (!p.feasible && !best.feasible && p.violation < best.violation);
    if (better) best = p;
    return p;
  }
};

struct PhaseData {
  RetuneProblem* problem;
  double penalty;
  bool barrier;
};

double phase_objective(unsigned n, const double* x, double* grad, void* data) {
  (void)grad;
  PhaseData* d = static_cast<PhaseData*>(data);
  const Point p = d->problem->score(std::vector<double>(x, x + n));
  const double d2 = p.distance * p.distance;
  if (d->barrier) return p.feasible ? d2 : 1e6 + p.violation;
  return d2 + d->penalty * p.violation;
}

void run_phase(RetuneProblem& rp, std::vector<double> x, int evals, double step_decades, double penalty, bool barrier) {
  const RetuneSpace& rs = *rp.space;
  nlopt::opt opt(nlopt::LN_SBPLX, static_cast<unsigned>(rs.dim()));
  opt.set_lower_bounds(rs.lower);
  opt.set_upper_bounds(rs.upper);
  PhaseData data{&rp, penalty, barrier};
  opt.set_min_objective(phase_objective, &data);
  opt.set_maxeval(evals);
  opt.set_xtol_abs(1e-4);
  opt.set_initial_step(std::vector<double>(static_cast<size_t>(rs.dim()), step_decades));
  for (size_t i = 0; i < x.size(); ++i) x[i] = std::clamp(x[i], rs.lower[i], rs.upper[i]);
  double f = 0.0;
  try {
    opt.optimize(x, f);
  } catch (const std::exception&) {
    // NLopt throws (roundoff limited, forced stop) even after good points: the problem kept the best.
  }
}

// Pulls a feasible point back towards the current design along the segment between them: the
// least fraction of the step that stays feasible (bisection, 12 steps).
void pull_back(RetuneProblem& rp, const std::vector<double>& feasible) {
  const std::vector<double>& x0 = rp.space->current;
  double lo = 0.0, hi = 1.0;
  for (int k = 0; k < 12; ++k) {
    const double t = 0.5 * (lo + hi);
    std::vector<double> x(x0.size());
    for (size_t i = 0; i < x.size(); ++i) x[i] = x0[i] + t * (feasible[i] - x0[i]);
    (rp.score(x).feasible ? hi : lo) = t;
  }
}

// One local run: feasibility with an exact (L1) penalty on the violation plus the squared
// distance, then the squared distance with the requirements as a barrier.
Point local_retune(const RetuneSpace& rs, const DesignProblem& screen, const std::vector<double>& x0,
                   const RetuneOptions& o, long long& evaluations) {
  RetuneProblem rp{&rs, &screen, 0, Point{}, o.cancel};
  rp.score(x0);
  if (!rp.best.feasible) run_phase(rp, x0, o.evaluations, 0.1, o.penalty, false);
  if (rp.best.feasible) {
    pull_back(rp, rp.best.x);
    run_phase(rp, rp.best.x, o.evaluations, 0.02, o.penalty, true);
  }
  evaluations += rp.evaluations;
  return rp.best;
}

Candidate verify(const Zpk& c, const Spec& spec, const Region& region) {
  Candidate v;
  v.compensator = c;
  v.verification = evaluate_all(c, spec.plants, spec.requirements, region, spec.analysis);
  v.worst = worst_metrics(v.verification.plants, spec.requirements);
  v.meets = v.verification.all_met;
  v.violation = v.verification.total_violation;
  return v;
}

std::string requirement_key(const Requirement& r) {
  return std::string(metric_info(r.metric).key) + (r.sense == Sense::AtMost ? ".max" : ".min");
}

// The requirement most violated by `c`, or "" when it meets everything.
std::string worst_failing(const Evaluation& e) {
  const RequirementOutcome* w = nullptr;
  for (const RequirementOutcome& o : e.outcomes)
    if (!o.met && (!w || o.violation > w->violation)) w = &o;
  if (!w && !e.all_stable) return "stability";
  return w ? requirement_key(w->requirement) : std::string();
}

// The change list: every gain, zero and pole, old and new, and the requirement each change serves
// (the one that fails when that change alone is undone; failing that, the requirement of the
// current design whose violation that change alone reduces most).
std::vector<ParameterChange> change_list(const RetuneSpace& rs, const std::vector<double>& x, const Spec& spec,
                                         const Region& region, const Candidate& current) {
  std::vector<ParameterChange> out;
  auto driver = [&](int first, int count) -> std::string {
    bool moved = false;
    for (int i = first; i < first + count; ++i) moved = moved || std::abs(x[i] - rs.current[i]) > 1e-9;
    if (!moved) return "";
    std::vector<double> undone(x);
    for (int i = first; i < first + count; ++i) undone[i] = rs.current[i];
    const Evaluation e = evaluate_all(retune_to_zpk(rs, undone), spec.plants, spec.requirements, region, spec.analysis);
    std::string w = worst_failing(e);
    if (!w.empty()) return w;
    std::vector<double> alone(rs.current);
    for (int i = first; i < first + count; ++i) alone[i] = x[i];
    const Evaluation a = evaluate_all(retune_to_zpk(rs, alone), spec.plants, spec.requirements, region, spec.analysis);
    double best_gain = 0.0;
    for (size_t k = 0; k < a.outcomes.size() && k < current.verification.outcomes.size(); ++k) {
      const double gain = current.verification.outcomes[k].violation - a.outcomes[k].violation;
      if (gain > best_gain) {
        best_gain = gain;
        w = requirement_key(a.outcomes[k].requirement);
      }
    }
    return w;
  };
  auto pct = [](double o, double n) { return o != 0.0 ? 100.0 * (n - o) / std::abs(o) : 0.0; };
  const Zpk now = retune_to_zpk(rs, x);
  {
    ParameterChange g;
    g.item = "gain";
    const double K0 = rs.factors[0].sign * std::pow(10.0, rs.current[0]), K1 = bode_gain(now);
    g.old_value = Complex(K0, 0.0);
    g.new_value = Complex(K1, 0.0);
    g.percent_change = pct(K0, K1);
    g.driven_by = driver(0, 1);
    out.push_back(g);
  }
  int zi = 0, pi = 0;
  for (size_t f = 1; f < rs.factors.size(); ++f) {
    const Factor& fa = rs.factors[f];
    const bool zero = fa.kind == FactorKind::RealZero || fa.kind == FactorKind::ZeroPair || fa.kind == FactorKind::OriginZero;
    ParameterChange c;
    c.item = zero ? "zero" : "pole";
    c.index = zero ? ++zi : ++pi;
    if (fa.kind == FactorKind::OriginZero || fa.kind == FactorKind::OriginPole) {
      c.old_value = c.new_value = Complex(0.0, 0.0);
    } else if (fa.kind == FactorKind::RealZero || fa.kind == FactorKind::RealPole) {
      const double o = -fa.sign * std::pow(10.0, rs.current[fa.first_param]);
      const double n = -fa.sign * std::pow(10.0, std::clamp(x[fa.first_param], rs.lower[fa.first_param], rs.upper[fa.first_param]));
      c.old_value = Complex(o, 0.0);
      c.new_value = Complex(n, 0.0);
      c.percent_change = pct(std::abs(o), std::abs(n));
      c.driven_by = driver(fa.first_param, 1);
    } else {
      auto root = [&](const std::vector<double>& v) {
        const double wn = std::pow(10.0, std::clamp(v[fa.first_param], rs.lower[fa.first_param], rs.upper[fa.first_param]));
        const double zeta = fa.sign * std::pow(10.0, std::clamp(v[fa.first_param + 1], rs.lower[fa.first_param + 1],
                                                                rs.upper[fa.first_param + 1]));
        return std::make_pair(Complex(-zeta * wn, wn * std::sqrt(std::max(0.0, 1.0 - zeta * zeta))), zeta);
      };
      const auto o = root(rs.current), n = root(x);
      c.old_value = o.first;
      c.new_value = n.first;
      c.old_damping = o.second;
      c.new_damping = n.second;
      c.percent_change = pct(std::abs(o.first), std::abs(n.first));
      c.driven_by = driver(fa.first_param, 2);
      if (zero) ++zi; else ++pi;  // the conjugate
    }
    out.push_back(c);
  }
  // Added stages: their roots are new.
  int p = rs.base_dim;
  for (AddedStage s : rs.added) {
    const int dim = s == AddedStage::FirstOrder ? 2 : (s == AddedStage::Notch ? 3 : 1);
    const std::string why = driver(p, dim);
    RetuneSpace single = make_retune_space(Zpk{{}, {}, 1.0}, rs.range, {s});
    std::vector<double> sx(1, 0.0);
    sx.insert(sx.end(), x.begin() + p, x.begin() + p + dim);
    const Zpk st = retune_to_zpk(single, sx);
    for (const Complex& r : st.zeros)
      if (r.imag() >= 0.0) out.push_back({"zero", ++zi, std::nullopt, r, std::nullopt, std::nullopt, 0.0, why});
    for (const Complex& r : st.poles)
      if (r.imag() >= 0.0) out.push_back({"pole", ++pi, std::nullopt, r, std::nullopt, std::nullopt, 0.0, why});
    p += dim;
  }
  return out;
}

std::string structure_label(const RetuneSpace& rs) {
  std::string s = "current";
  for (AddedStage a : rs.added) s += std::string(" + ") + added_stage_name(a);
  return s;
}

}  // namespace

RetuneReport run_retune(const Spec& spec, const RetuneOptions& o) {
  const auto t0 = Clock::now();
  std::string err;
  if (!o.IsValid(&err)) throw std::invalid_argument("retune options: " + err);
  if (!spec.current) throw SpecError("$.current", "is missing: retune needs the compensator in service");
  RetuneReport rep;
  rep.spec_name = spec.name;
  rep.spec_document = spec.document;
  rep.plants = spec.plants;
  rep.requirements = spec.requirements;
  rep.analysis = spec.analysis;
  rep.region = region_from_requirements(spec.requirements);
  rep.frequency_range = spec.stages.frequency_range_rad_s ? *spec.stages.frequency_range_rad_s
                                                          : default_frequency_range(spec.plants, rep.region);
  for (const Plant& p : spec.plants) check_cancellations(*spec.current, p, "$.current");
  rep.current = verify(*spec.current, spec, rep.region);
  rep.current.rank = 0;
  rep.current.origin = "current";
  rep.summary.seed = o.seed;
  rep.summary.threads = resolve_threads(o.threads);
  rep.already_met = rep.current.meets;
  if (rep.already_met) {
    rep.summary.seconds = std::chrono::duration<double>(Clock::now() - t0).count();
    return rep;
  }

  const AnalysisOptions screening = AnalysisOptions::Screening(spec.analysis);
  const ParamSpace dummy = make_param_space(Structure{}, rep.frequency_range, -1.0, 1.0, 1.0);
  const DesignProblem screen(spec.plants, spec.requirements, rep.region, screening, Objective::LeastEffort, dummy);

  // Structure levels by added order: the current structure, then one order-1 stage, then a notch.
  std::vector<std::vector<std::vector<AddedStage>>> levels = {{{}}};
  if (o.allow_new_stages) {
    std::vector<std::vector<AddedStage>> one = {{AddedStage::FirstOrder}};
    if (zpk_integrators(*spec.current) == 0) one.push_back({AddedStage::Integrator});
    levels.push_back(one);
    levels.push_back({{AddedStage::Notch}});
  }
  std::vector<RetuneCandidate> found;
  for (const auto& level : levels) {
    std::vector<RetuneSpace> spaces;
    for (const auto& added : level)
      spaces.push_back(make_retune_space(*spec.current, rep.frequency_range, added, o.corner_decades, o.gain_decades));
    // Added stages start at the identity, centred on the current loop's crossover when it has one.
    const auto& wc = rep.current.worst[static_cast<size_t>(MetricId::Crossover)];
    for (RetuneSpace& rs : spaces)
      for (int i = rs.base_dim; i < rs.dim(); ++i)
        if (rs.names[i].find("centre") != std::string::npos && wc.value && *wc.value > 0.0)
          rs.current[i] = std::clamp(std::log10(*wc.value), rs.lower[i], rs.upper[i]);
    // Starts: the current design, then Halton perturbations of it (shifted by the seed).
    struct Task {
      size_t space;
      std::vector<double> x0;
      std::string origin;
    };
    std::vector<Task> tasks;
    for (size_t s = 0; s < spaces.size(); ++s) {
      const RetuneSpace& rs = spaces[s];
      std::mt19937_64 rng(o.seed * 0x9E3779B97F4A7C15ULL + s + 17 * found.size());
      std::vector<double> shift(static_cast<size_t>(rs.dim()));
      for (double& v : shift) v = std::uniform_real_distribution<double>(0.0, 1.0)(rng);
      tasks.push_back({s, rs.current, "current design"});
      for (int k = 1; k < o.starts; ++k) {
        const std::vector<double> u = halton_point(k, rs.dim(), shift);
        std::vector<double> x(rs.current);
        for (size_t i = 0; i < x.size(); ++i)
          x[i] = std::clamp(x[i] + o.start_spread_decades * (2.0 * u[i] - 1.0), rs.lower[i], rs.upper[i]);
        tasks.push_back({s, x, "perturbed start " + std::to_string(k)});
      }
    }
    std::vector<Point> results(tasks.size());
    std::vector<long long> evals(tasks.size(), 0);
    parallel_for(tasks.size(), rep.summary.threads, [&](size_t i) {
      results[i] = local_retune(spaces[tasks[i].space], screen, tasks[i].x0, o, evals[i]);
      results[i].origin = tasks[i].origin;
    });
    for (long long e : evals) rep.summary.evaluations += e;
    rep.summary.local_runs += static_cast<int>(tasks.size());
    rep.summary.structures_searched += static_cast<int>(spaces.size());
    // Screening-feasible points by distance, distinct ones only, then full-accuracy verification.
    std::vector<size_t> order(tasks.size());
    for (size_t i = 0; i < order.size(); ++i) order[i] = i;
    std::stable_sort(order.begin(), order.end(), [&](size_t a, size_t b) {
      if (results[a].feasible != results[b].feasible) return results[a].feasible;
      return results[a].feasible ? results[a].distance < results[b].distance : results[a].violation < results[b].violation;
    });
    std::vector<size_t> picked;
    for (size_t i : order) {
      bool distinct = true;
      for (size_t j : picked) {
        if (tasks[j].space != tasks[i].space) continue;
        double d = 0.0;
        for (size_t k = 0; k < results[i].x.size(); ++k) d = std::max(d, std::abs(results[i].x[k] - results[j].x[k]));
        distinct = distinct && d > o.distinct_decades;
      }
      if (distinct) picked.push_back(i);
    }
    std::vector<RetuneCandidate> level_found(picked.size());
    parallel_for(picked.size(), rep.summary.threads, [&](size_t k) {
      const size_t i = picked[k];
      const RetuneSpace& rs = spaces[tasks[i].space];
      RetuneCandidate rc;
      rc.added = rs.added;
      rc.candidate = verify(retune_to_zpk(rs, results[i].x), spec, rep.region);
      rc.candidate.parameters = results[i].x;
      rc.candidate.origin = results[i].origin + " (" + structure_label(rs) + ")";
      rc.change_decades = change_distance(rs, results[i].x);
      rc.response_change = response_distance(rc.candidate.compensator, *spec.current, rep.frequency_range);
      rc.changes = change_list(rs, results[i].x, spec, rep.region, rep.current);
      level_found[k] = rc;
    });
    found.insert(found.end(), level_found.begin(), level_found.end());
    const bool any_meets = std::any_of(found.begin(), found.end(), [](const RetuneCandidate& c) { return c.candidate.meets; });
    if (any_meets) break;
  }
  // Meeting candidates first, then the fewest added stages, then the smallest change.
  std::stable_sort(found.begin(), found.end(), [](const RetuneCandidate& a, const RetuneCandidate& b) {
    if (a.candidate.meets != b.candidate.meets) return a.candidate.meets;
    if (a.added.size() != b.added.size()) return a.added.size() < b.added.size();
    if (a.candidate.meets) return a.change_decades < b.change_decades;
    return a.candidate.violation < b.candidate.violation;
  });
  // A screening-feasible point can fail the full-accuracy check: once something meets, only
  // meeting candidates are listed.
  if (!found.empty() && found.front().candidate.meets)
    found.erase(std::remove_if(found.begin(), found.end(), [](const RetuneCandidate& c) { return !c.candidate.meets; }),
                found.end());
  if (found.size() > static_cast<size_t>(o.keep)) found.resize(static_cast<size_t>(o.keep));
  for (size_t i = 0; i < found.size(); ++i) found[i].candidate.rank = static_cast<int>(i + 1);
  rep.candidates = found;
  rep.summary.seconds = std::chrono::duration<double>(Clock::now() - t0).count();
  return rep;
}

}  // namespace pw
