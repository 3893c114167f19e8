#include "polewright/jobs/retune.hpp"

#include "polewright/model/pid_form.hpp"

#include <algorithm>
#include <chrono>
#include <cmath>
#include <random>

#include "polewright/jobs/check.hpp"
#include "polewright/requirements/metric.hpp"
#include "polewright/synthesis/parallel.hpp"
#include "polewright/synthesis/parameters.hpp"
#include "polewright/synthesis/problem.hpp"
#include "polewright/synthesis/retune_problem.hpp"
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
  if (!(budget_s >= 0.0) || budget_s > 1e7) return fail("budget_s must be within 0..1e7");
  return true;
}

RetuneOptions RetuneOptions::FromSpec(const Spec& spec) {
  RetuneOptions o;
  o.keep = spec.search.keep;
  o.seed = spec.search.seed;
  o.threads = spec.search.threads;
  o.budget_s = spec.search.budget_s;
  return o;
}

const char* change_item_name(ChangeItem item) {
  switch (item) {
    case ChangeItem::Gain: return "gain";
    case ChangeItem::Zero: return "zero";
    case ChangeItem::Pole: return "pole";
  }
  return "gain";
}

namespace {

bool cancelled(const RetuneOptions& o) { return o.cancel && o.cancel->load(std::memory_order_relaxed); }

using Clock = std::chrono::steady_clock;

// The result of one local run, with the change distance it rests on.
struct Point {
  std::vector<double> x;
  double distance = INFINITY;
  bool feasible = false;
  double violation = INFINITY;
  std::string origin;
};

// The local search's options for a retune: feasibility with an exact (L1) penalty on the violation
// plus the squared distance, a pull back towards the current design, then the squared distance with
// the requirements as a barrier.
LocalOptions retune_local_options(const RetuneSpace& rs, const RetuneOptions& o) {
  LocalOptions lo;
  lo.feasibility_evaluations = o.evaluations;
  lo.objective_evaluations = o.evaluations;
  lo.relative_tolerance = 0.0;
  lo.absolute_tolerance = 1e-4;
  lo.absolute_steps = true;  // decades
  lo.feasibility_step = 0.1;
  lo.objective_step = 0.02;
  lo.objective_weight = 1.0;
  lo.violation_weight = o.penalty;
  lo.stop_at_feasible = false;
  lo.anchor = rs.current;
  return lo;
}

Point local_retune(const RetuneSpace& rs, const CompensatorScorer& screen, const std::vector<double>& x0,
                   const RetuneOptions& o, long long& evaluations) {
  const RetuneProblem problem(rs, screen);
  const LocalResult r = local_search(problem, x0, retune_local_options(rs, o), o.cancel);
  evaluations += r.evaluations;
  return Point{r.x, change_distance(rs, r.x), r.score.feasible, r.score.violation, ""};
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
    g.item = ChangeItem::Gain;
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
    c.item = zero ? ChangeItem::Zero : ChangeItem::Pole;
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
    const int dim = added_stage_parameters(s);
    const std::string why = driver(p, dim);
    RetuneSpace single = make_retune_space(Zpk{{}, {}, 1.0}, rs.range, {s});
    std::vector<double> sx(1, 0.0);
    sx.insert(sx.end(), x.begin() + p, x.begin() + p + dim);
    const Zpk st = retune_to_zpk(single, sx);
    for (const Complex& r : st.zeros)
      if (r.imag() >= 0.0) out.push_back({ChangeItem::Zero, ++zi, std::nullopt, r, std::nullopt, std::nullopt, 0.0, why});
    for (const Complex& r : st.poles)
      if (r.imag() >= 0.0) out.push_back({ChangeItem::Pole, ++pi, std::nullopt, r, std::nullopt, std::nullopt, 0.0, why});
    p += dim;
  }
  return out;
}

std::string structure_label(const RetuneSpace& rs) {
  std::string s = "current";
  for (AddedStage a : rs.added) s += std::string(" + ") + added_stage_name(a);
  return s;
}

// Retune's escalation: a design of the spec (with its own escalation) gives verified candidates;
// those of the current design's structure (the same kinds of factors, retune_params_of) start a
// local search that pulls them back towards the current design and then shortens the change with
// the requirements as a barrier (twice the first pass's budget). Each design candidate is also kept
// as it is, so retune never ends worse than design in the same structure.
std::vector<RetuneCandidate> from_design(const Spec& spec, const RetuneOptions& o, const Verifier& verifier,
                                         const CompensatorScorer& screen, RetuneReport& rep) {
  DesignOptions d = DesignOptions::FromSpec(spec);
  d.seed = o.seed;
  d.threads = o.threads;
  d.budget_s = o.budget_s;
  d.keep = 10;
  d.explain_failure = false;
  d.cancel = o.cancel;
  const DesignReport dr = run_design(spec, d);
  rep.summary.evaluations += dr.summary.evaluations;
  rep.summary.local_runs += dr.summary.local_runs;
  rep.summary.escalation_budget += dr.summary.escalation_budget;
  rep.summary.escalation_spent += dr.summary.escalation_spent;
  rep.summary.phases.push_back({"escalation: design of the spec", dr.summary.evaluations, dr.summary.local_runs, dr.summary.seconds});
  const auto t_pull = Clock::now();
  struct Start {
    RetuneSpace space;
    std::vector<double> x;
    std::string origin;
  };
  std::vector<Start> starts;
  const double cap = rep.context.corner_cap_rad_s.value_or(INFINITY);
  for (const Candidate& c : dr.candidates) {
    if (!c.meets) continue;
    RetuneSpace rs = make_retune_space(*spec.current, rep.context.frequency_range, {}, o.corner_decades, o.gain_decades, cap);
    std::vector<double> x;
    if (retune_params_of(rs, c.compensator, &x)) starts.push_back({rs, x, "design rank " + std::to_string(c.rank)});
  }
  RetuneOptions wide = o;
  wide.evaluations = 2 * o.evaluations;
  std::vector<Point> results(starts.size());
  std::vector<long long> evals(starts.size(), 0);
  parallel_for(starts.size(), rep.summary.threads, [&](size_t i) {
    results[i] = local_retune(starts[i].space, screen, starts[i].x, wide, evals[i]);
  });
  long long pulled = 0;
  for (long long e : evals) pulled += e;
  rep.summary.evaluations += pulled;
  rep.summary.local_runs += static_cast<int>(starts.size());
  rep.summary.phases.push_back({"escalation: design candidates pulled back", pulled, static_cast<int>(starts.size()),
                                std::chrono::duration<double>(Clock::now() - t_pull).count()});
  // Both the pulled-back point and the design point itself, verified.
  std::vector<std::pair<size_t, std::vector<double>>> points;
  for (size_t i = 0; i < starts.size(); ++i) {
    points.push_back({i, results[i].x});
    points.push_back({i, starts[i].x});
  }
  std::vector<RetuneCandidate> out(points.size());
  parallel_for(points.size(), rep.summary.threads, [&](size_t k) {
    const Start& st = starts[points[k].first];
    const std::vector<double>& x = points[k].second;
    RetuneCandidate rc;
    rc.candidate = verifier.verify(retune_to_zpk(st.space, x));
    rc.candidate.parameters = x;
    rc.candidate.origin = st.origin + (k % 2 == 0 ? " pulled back towards the current design" : " as designed") + " (current)";
    rc.change_decades = change_distance(st.space, x);
    rc.response_change = response_distance(rc.candidate.compensator, *spec.current, rep.context.frequency_range);
    rc.changes = change_list(st.space, x, spec, rep.context.region, rep.current);
    out[k] = rc;
  });
  // Distinct ones only (a pull back that did not move duplicates its start).
  std::vector<RetuneCandidate> distinct;
  for (const RetuneCandidate& c : out) {
    bool same = false;
    for (const RetuneCandidate& d2 : distinct) {
      double dist = 0.0;
      for (size_t i = 0; i < c.candidate.parameters.size(); ++i)
        dist = std::max(dist, std::abs(c.candidate.parameters[i] - d2.candidate.parameters[i]));
      same = same || dist <= o.distinct_decades;
    }
    if (!same) distinct.push_back(c);
  }
  return distinct;
}

}  // namespace

namespace {

// stages.pid with a PID in service: a retuned PID stays a PID. Candidates without a notch that do not read as one (an
// added lag, or a PI corner moved above the derivative filter, gives terms of both signs) are
// dropped; a level that keeps none goes on to the next.
void keep_pid_shaped(const Spec& spec, std::vector<RetuneCandidate>& cands) {
  if (!spec.stages.pid || !spec.current || !pid_form(*spec.current)) return;  // only a PID in service
  cands.erase(std::remove_if(cands.begin(), cands.end(),
                             [](const RetuneCandidate& c) {
                               const bool notch = std::any_of(c.added.begin(), c.added.end(), [](AddedStage a) { return a == AddedStage::Notch; });
                               return !notch && !pid_form(c.candidate.compensator);
                             }),
              cands.end());
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
  const Verifier verifier(LoopContext::FromSpec(spec));
  rep.context = verifier.context();
  for (const Plant& p : spec.plants) check_cancellations(*spec.current, p, "$.current");
  rep.current = verifier.verify(*spec.current);
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
  // The search aims inside the limits tightened by the design margin; verdicts use the stated ones.
  const CompensatorScorer screen(spec.plants, with_design_margin(spec.requirements, spec.search.margin_pct / 100.0),
                                 rep.context.region, screening, Objective::LeastEffort,
                                 std::sqrt(rep.context.frequency_range.first * rep.context.frequency_range.second),
                                 spec.implementation);

  const double cap = rep.context.corner_cap_rad_s.value_or(INFINITY);
  // Structure levels by added order: the current structure, then one order-1 stage, then a notch.
  std::vector<std::vector<std::vector<AddedStage>>> levels = {{{}}};
  if (o.allow_new_stages) {
    std::vector<std::vector<AddedStage>> one = {{AddedStage::FirstOrder}};
    if (zpk_integrators(*spec.current) == 0) one.push_back({AddedStage::Integrator});
    levels.push_back(one);
    levels.push_back({{AddedStage::Notch}});
  }
  std::vector<RetuneCandidate> found;
  const char* level_names[] = {"current structure", "one added stage", "an added notch"};
  for (const auto& level : levels) {
    const long long evaluations_before = rep.summary.evaluations;
    const int runs_before = rep.summary.local_runs;
    const auto t_level = Clock::now();
    std::vector<RetuneSpace> spaces;
    for (const auto& added : level)
      spaces.push_back(make_retune_space(*spec.current, rep.context.frequency_range, added, o.corner_decades, o.gain_decades, cap));
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
    rep.summary.phases.push_back({level_names[&level - &levels.front()], rep.summary.evaluations - evaluations_before,
                                  rep.summary.local_runs - runs_before,
                                  std::chrono::duration<double>(Clock::now() - t_level).count()});
    if (cancelled(o)) break;  // stopped: nothing is verified or listed
    // Screening-feasible points by distance, distinct ones only, then full-accuracy verification.
    std::vector<size_t> order(tasks.size());
    for (size_t i = 0; i < order.size(); ++i) order[i] = i;
    auto score_of = [&](size_t i) { return DesignScore{results[i].violation, results[i].distance, results[i].feasible}; };
    std::stable_sort(order.begin(), order.end(), [&](size_t a, size_t b) { return better_score(score_of(a), score_of(b)); });
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
      rc.candidate = verifier.verify(retune_to_zpk(rs, results[i].x));
      rc.candidate.parameters = results[i].x;
      rc.candidate.origin = results[i].origin + " (" + structure_label(rs) + ")";
      rc.change_decades = change_distance(rs, results[i].x);
      rc.response_change = response_distance(rc.candidate.compensator, *spec.current, rep.context.frequency_range);
      rc.changes = change_list(rs, results[i].x, spec, rep.context.region, rep.current);
      level_found[k] = rc;
    });
    keep_pid_shaped(spec, level_found);
    found.insert(found.end(), level_found.begin(), level_found.end());
    bool any_meets = std::any_of(found.begin(), found.end(), [](const RetuneCandidate& c) { return c.candidate.meets; });
    // Escalation in the current structure (before any stage is added): design's verified
    // candidates of the same structure, each pulled back towards the current design.
    if (!any_meets && &level == &levels.front() && o.budget_s > 0.0 && !cancelled(o)) {
      std::vector<RetuneCandidate> more = from_design(spec, o, verifier, screen, rep);
      keep_pid_shaped(spec, more);
      found.insert(found.end(), more.begin(), more.end());
      any_meets = std::any_of(found.begin(), found.end(), [](const RetuneCandidate& c) { return c.candidate.meets; });
    }
    if (any_meets) break;
  }
  if (cancelled(o)) found.clear();  // a stopped retune lists no candidates
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
