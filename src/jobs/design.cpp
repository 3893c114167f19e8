#include "polewright/jobs/design.hpp"

#include "polewright/model/pid_form.hpp"

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <map>
#include <random>

#include "polewright/synthesis/fragility.hpp"
#include "polewright/synthesis/global_search.hpp"
#include "polewright/synthesis/level_scheduler.hpp"
#include "polewright/synthesis/parallel.hpp"
#include "polewright/synthesis/problem.hpp"
#include "polewright/synthesis/seeds.hpp"

namespace pw {

bool DesignOptions::IsValid(std::string* error) const {
  auto fail = [&](const char* m) {
    if (error) *error = m;
    return false;
  };
  if (keep < 1 || keep > 100) return fail("keep must be within 1..100");
  if (threads < 0) return fail("threads must be >= 0");
  if (max_evaluations < 1) return fail("max_evaluations must be >= 1");
  if (!(time_limit_s > 0.0)) return fail("time_limit_s must be > 0");
  if (!(budget_s >= 0.0) || budget_s > 1e7) return fail("budget_s must be within 0..1e7");
  if (global_points_base < 0 || global_points_per_dim < 0 || global_starts < 0) return fail("global search sizes must be >= 0");
  if (!(margin >= 0.0 && margin <= 0.5)) return fail("margin must be within 0..0.5");
  if (!(diversity >= 0.0 && diversity < 1.0)) return fail("diversity must be within [0, 1)");
  return local.IsValid(error);
}

DesignOptions DesignOptions::FromSpec(const Spec& spec) {
  DesignOptions o;
  o.keep = spec.search.keep;
  o.seed = spec.search.seed;
  o.threads = spec.search.threads;
  o.objective = spec.search.objective;
  o.max_evaluations = spec.search.max_evaluations;
  o.time_limit_s = spec.search.time_limit_s;
  o.budget_s = spec.search.budget_s;
  o.margin = spec.search.margin_pct / 100.0;
  return o;
}

std::string DesignSummary::FullReport() const {
  char buf[512];
  std::snprintf(buf, sizeof buf,
                "search: %lld evaluations in %.3f s on %d thread(s), seed %llu; %d structure(s), %d local run(s)%s%s; "
                "first verified design %s",
                evaluations, seconds, threads, seed, structures_searched, local_runs,
                budget_stop ? "; stopped by the evaluation budget" : "", time_stop ? "; stopped by the time limit" : "",
                first_verified_s ? (std::to_string(*first_verified_s).substr(0, 6) + " s").c_str() : "none");
  std::string out = buf;
  // Only an escalation adds lines, so a design met by the first pass reads as before.
  if (escalation_budget > 0) {
    std::snprintf(buf, sizeof buf, "\nescalation: %lld of %lld evaluations spent; %s", escalation_spent, escalation_budget,
                  met ? "a design meets" : "nothing meets after all of this search");
    out += buf;
    for (const SearchPhase& p : phases) {
      std::snprintf(buf, sizeof buf, "\n  %-20s %9lld evaluations %5d local run(s) %8.3f s", p.name.c_str(), p.evaluations,
                    p.local_runs, p.seconds);
      out += buf;
    }
  }
  return out;
}

namespace {

using Clock = std::chrono::steady_clock;

struct PoolEntry {
  size_t structure = 0;
  std::vector<double> x;
  DesignScore score;
  std::string origin;
};

struct StructureSetup {
  Structure structure;
  std::shared_ptr<DesignProblem> problem;
  std::vector<Seed> starts;
  long long global_evaluations = 0;
};

// A pool point this close to feasible (total normalised violation) is a near miss worth polishing.
constexpr double kNearMissViolation = 0.5;

bool cancelled(const DesignOptions& o) { return o.cancel && o.cancel->load(std::memory_order_relaxed); }

// Distance in the unit cube (max norm), for the diversity rule.
double unit_distance(const ParamSpace& ps, const std::vector<double>& a, const std::vector<double>& b) {
  double d = 0.0;
  for (size_t i = 0; i < a.size(); ++i) {
    const double span = ps.upper[i] - ps.lower[i];
    if (span > 0.0) d = std::max(d, std::abs(a[i] - b[i]) / span);
  }
  return d;
}

// The structure's parameter space, problem and seeds; the screening points are drawn here and
// scored by the caller (in parallel across every structure of a level).
StructureSetup prepare(const Structure& s, size_t index, const Spec& spec, const Region& region,
                       std::pair<double, double> range, const AnalysisOptions& screening, const DesignOptions& o,
                       std::vector<PoolEntry>& global) {
  const Plant& nominal = spec.plants.front();
  const double sign = feedback_sign(nominal);
  // Seeds with wide gain bounds first, then bounds three decades either side of their gains.
  ParamSpace wide = make_param_space(s, range, -12.0, 12.0, sign);
  std::vector<Seed> seeds = published_seeds(wide, nominal, region, spec.requirements);
  double glo = INFINITY, ghi = -INFINITY;
  for (const Seed& sd : seeds) {
    glo = std::min(glo, sd.x[0]);
    ghi = std::max(ghi, sd.x[0]);
  }
  if (!std::isfinite(glo)) glo = ghi = 0.0;
  ParamSpace ps = make_param_space(s, range, glo - 3.0, ghi + 3.0, sign);
  ps.pid_shape = spec.stages.pid;
  StructureSetup st;
  st.structure = s;
  st.problem = std::make_shared<DesignProblem>(spec.plants, with_design_margin(spec.requirements, o.margin), region, screening,
                                               o.objective, ps, spec.implementation);
  if (o.metric_objective) st.problem->set_metric_objective(*o.metric_objective);
  for (Seed& sd : seeds) st.starts.push_back(sd);
  // Low-discrepancy screening points, shifted by a rotation drawn from the seed and structure.
  std::mt19937_64 rng(o.seed * 0x9E3779B97F4A7C15ULL + index);
  std::uniform_real_distribution<double> U(0.0, 1.0);
  std::vector<double> shift(static_cast<size_t>(ps.dim()));
  for (double& v : shift) v = U(rng);
  const int n = o.global_points_base + o.global_points_per_dim * ps.dim();
  global.assign(static_cast<size_t>(n), PoolEntry{});
  for (int i = 0; i < n; ++i) {
    global[static_cast<size_t>(i)].x = from_unit(ps, halton_point(i, ps.dim(), shift));
    global[static_cast<size_t>(i)].origin = "low-discrepancy start " + std::to_string(i);
  }
  st.global_evaluations = n;
  return st;
}

// Adds the best scored screening points to the starts.
void add_global_starts(StructureSetup& st, std::vector<PoolEntry>& global, const DesignOptions& o) {
  std::stable_sort(global.begin(), global.end(), [](const PoolEntry& a, const PoolEntry& b) { return better_score(a.score, b.score); });
  for (size_t i = 0; i < global.size() && static_cast<int>(i) < o.global_starts; ++i)
    st.starts.push_back({global[i].x, global[i].origin});
}

Candidate verify(const PoolEntry& e, const std::vector<StructureSetup>& setups, const Verifier& verifier,
                 Objective objective) {
  const StructureSetup& st = setups[e.structure];
  Candidate c = verifier.verify(params_to_zpk(st.problem->space(), e.x), objective, false);
  c.structure = st.structure;
  c.parameters = e.x;
  c.origin = e.origin;
  return c;
}

// Nominal screening evaluations per second of budget on the machine the default was set on (two
// cores, 2026): the escalation's budget is counted in evaluations so that its outcome does not
// depend on the machine's speed or load. With a binding plant limit (a bound the requirements
// exceed, limits.hpp) a tenth of it is spent.
constexpr double kEvaluationsPerSecond = 5000.0;
long long escalation_evaluations(double budget_s, bool limited) {
  return static_cast<long long>(std::llround(budget_s * kEvaluationsPerSecond * (limited ? 0.1 : 1.0)));
}

// Screening margins per escalation round: every limit tightened by this fraction of its size, so
// that points on the edge of a bound (screening-feasible, failing the full-accuracy check) are
// pushed inside. The cycle starts small and returns to none.
constexpr double kRoundMargins[] = {0.02, 0.05, 0.0, 0.1};

// One escalation round: near misses first (the best pool points, screening-feasible ones that
// failed the full check and those a small violation away), then fresh low-discrepancy starts per
// structure, then a global search (NLopt MLSL) per structure; local budgets double every round
// (up to 16 times the first pass's). Every result is scored again on the requirements with the design margin.
// Returns the evaluations spent; the new points go to `found`.
long long escalate_round(int round, const std::vector<StructureSetup>& setups, const std::vector<PoolEntry>& pool,
                         const std::map<std::pair<size_t, std::vector<double>>, Candidate>& verified, const Spec& spec,
                         const Region& region, const AnalysisOptions& screening, const DesignOptions& o, int threads,
                         std::vector<PoolEntry>& found, int& runs) {
  // The round's margin comes on top of the design margin (the last round returns to it).
  const double margin = o.margin + kRoundMargins[round % 4];
  const int scale = std::min(16, 2 << std::min(round, 3));
  LocalOptions local = o.local;
  local.feasibility_evaluations *= scale;
  local.objective_evaluations *= scale;
  std::vector<std::shared_ptr<DesignProblem>> problems;
  for (const StructureSetup& st : setups) {
    problems.push_back(std::make_shared<DesignProblem>(spec.plants, with_design_margin(spec.requirements, margin), region, screening,
                                                       o.objective, st.problem->space(), spec.implementation));
  }
  struct Task {
    int kind = 0;  // 0 polish a near miss, 1 fresh starts, 2 global
    size_t structure = 0;
    std::vector<double> x;
    std::string origin;
  };
  std::vector<Task> tasks;
  const std::string tag = "escalation " + std::to_string(round + 1) + ": ";
  // Near misses: distinct pool points by screening score, those with a small violation only.
  std::vector<size_t> order(pool.size());
  for (size_t i = 0; i < order.size(); ++i) order[i] = i;
  std::stable_sort(order.begin(), order.end(), [&](size_t a, size_t b) { return better_score(pool[a].score, pool[b].score); });
  const size_t near_count = static_cast<size_t>(4 + 2 * round);
  std::vector<size_t> near;
  for (size_t i : order) {
    const PoolEntry& e = pool[i];
    if (!e.score.feasible && e.score.violation > kNearMissViolation) break;
    bool close = false;
    for (size_t j : near)
      if (pool[j].structure == e.structure && unit_distance(setups[e.structure].problem->space(), pool[j].x, e.x) < o.diversity)
        close = true;
    if (close) continue;
    near.push_back(i);
    tasks.push_back({0, e.structure, e.x, tag + "near miss from " + e.origin});
    if (near.size() >= near_count) break;
  }
  for (size_t s = 0; s < setups.size(); ++s) tasks.push_back({1, s, {}, tag + "fresh starts"});
  for (size_t s = 0; s < setups.size(); ++s) tasks.push_back({2, s, {}, tag + "global search"});
  std::vector<std::vector<LocalResult>> results(tasks.size());
  std::vector<long long> extra(tasks.size(), 0);
  parallel_for(tasks.size(), threads, [&](size_t t) {
    const Task& task = tasks[t];
    const DesignProblem& p = *problems[task.structure];
    const ParamSpace& ps = p.space();
    if (task.kind == 0) {
      results[t].push_back(local_search(p, task.x, local, o.cancel));
    } else if (task.kind == 1) {
      // Fresh low-discrepancy points further along the structure's own sequence rotation.
      std::mt19937_64 rng((o.seed + 7919ULL * static_cast<unsigned long long>(round + 1)) * 0x9E3779B97F4A7C15ULL + task.structure);
      std::uniform_real_distribution<double> U(0.0, 1.0);
      std::vector<double> shift(static_cast<size_t>(ps.dim()));
      for (double& v : shift) v = U(rng);
      const int n = 2 * (o.global_points_base + o.global_points_per_dim * ps.dim());
      std::vector<PoolEntry> pts(static_cast<size_t>(n));
      for (int i = 0; i < n; ++i) {
        pts[static_cast<size_t>(i)].x = from_unit(ps, halton_point(i, ps.dim(), shift));
        pts[static_cast<size_t>(i)].score = p.score(pts[static_cast<size_t>(i)].x);
      }
      extra[t] += n;
      std::stable_sort(pts.begin(), pts.end(), [](const PoolEntry& a, const PoolEntry& b) { return better_score(a.score, b.score); });
      for (int k = 0; k < 2 && k < n; ++k) results[t].push_back(local_search(p, pts[static_cast<size_t>(k)].x, local, o.cancel));
    } else {
      GlobalOptions g;
      g.evaluations = 400 * scale;
      g.seed = (o.seed * 0x9E3779B97F4A7C15ULL) ^ (static_cast<unsigned long long>(round) << 32) ^ task.structure;
      const std::vector<double> mid = from_unit(ps, std::vector<double>(static_cast<size_t>(ps.dim()), 0.5));
      results[t].push_back(global_search(p, mid, g, local, o.cancel));
    }
  });
  long long used = 0;
  for (size_t t = 0; t < tasks.size(); ++t) {
    used += extra[t];
    for (LocalResult& r : results[t]) {
      used += r.evaluations + 1;
      runs += 1;
      const DesignScore truth = setups[tasks[t].structure].problem->score(r.x);
      found.push_back({tasks[t].structure, r.x, truth, tasks[t].origin});
    }
  }
  (void)verified;
  return used;
}

// Two objectives this close (relative) are equal for the robust-before-fragile tie-break.
constexpr double kEqualObjective = 1e-9;

// The listed order: meeting candidates first (by objective; the simplest objective puts fewer
// stages first), then the others by violation. At equal objective a robust candidate goes before
// a fragile one (a tie-break only: clearly different objectives keep their order).
void order_candidates(std::vector<Candidate>& cands, Objective objective) {
  std::stable_sort(cands.begin(), cands.end(), [&](const Candidate& a, const Candidate& b) {
    if (a.meets != b.meets) return a.meets;
    if (a.meets) {
      if (objective == Objective::Simplest && a.structure.stage_count() != b.structure.stage_count())
        return a.structure.stage_count() < b.structure.stage_count();
      return a.objective < b.objective;
    }
    return a.violation < b.violation;
  });
  for (bool swapped = true; swapped;) {
    swapped = false;
    for (size_t i = 0; i + 1 < cands.size(); ++i) {
      Candidate& a = cands[i];
      Candidate& b = cands[i + 1];
      const bool tie = a.meets && b.meets &&
                       (objective != Objective::Simplest || a.structure.stage_count() == b.structure.stage_count()) &&
                       std::abs(a.objective - b.objective) <= kEqualObjective * std::max(std::abs(a.objective), std::abs(b.objective));
      if (tie && a.fragile && !b.fragile) {
        std::swap(a, b);
        swapped = true;
      }
    }
  }
}

// Two candidates of one structure that are the same loop over the frequency range: their
// compensators' responses agree within the negligible-stage threshold at every sample (fragility.hpp).
bool same_design(const Candidate& a, const Candidate& b, std::pair<double, double> range) {
  if (!(a.structure == b.structure)) return false;
  for (int i = 0; i < kNegligibleStageSamples; ++i) {
    const double w = range.first * std::pow(range.second / range.first, i / (kNegligibleStageSamples - 1.0));
    const Complex x = a.compensator.evaluate(Complex(0.0, w)), y = b.compensator.evaluate(Complex(0.0, w));
    if (!(std::abs(y) > 0.0) || !(std::abs(x / y - 1.0) < kNegligibleStageShare)) return false;
  }
  return true;
}

// Degenerate candidates: a stage that does nothing over the frequency range is folded into the
// gain, an integrator parked at the bottom of the range dropped (fragility.hpp), and the simpler
// loop verified again; it replaces the candidate when its
// verdict is no worse (a stage whose removal changes the verdict acts outside the range and
// stays). A candidate that is the same loop over the range as one listed before it is dropped.
std::vector<Candidate> without_degenerate(std::vector<Candidate> cands, const Verifier& verifier, Objective objective,
                                          int threads) {
  std::vector<Candidate> folded(cands.size());
  std::vector<char> use(cands.size(), 0);
  parallel_for(cands.size(), threads, [&](size_t i) {
    const Candidate& c = cands[i];
    const PrunedCompensator p =
        prune_negligible_stages(c.compensator, c.structure, c.parameters, verifier.context().frequency_range);
    if (p.dropped == 0) return;
    Candidate v = verifier.verify(p.compensator, objective, false);
    if ((c.meets && !v.meets) || (!c.meets && !v.meets && v.violation > c.violation)) return;
    v.structure = p.structure;
    v.parameters = p.parameters;
    const int folded_stages = p.dropped - (p.integrator_dropped ? 1 : 0);
    std::string what;
    if (p.integrator_dropped) what = "parked integrator dropped";
    if (folded_stages > 0)
      what += (what.empty() ? "" : ", ") + std::to_string(folded_stages) + " negligible stage(s) folded into the gain";
    v.origin = c.origin + " (" + what + ")";
    folded[i] = std::move(v);
    use[i] = 1;
  });
  std::vector<Candidate> out;
  for (size_t i = 0; i < cands.size(); ++i) {
    Candidate c = use[i] ? std::move(folded[i]) : std::move(cands[i]);
    bool dup = false;
    for (const Candidate& k : out) dup = dup || same_design(k, c, verifier.context().frequency_range);
    if (!dup) out.push_back(std::move(c));
  }
  return out;
}

double metric_score(const Candidate& c, const Requirement& r) {
  const MetricValue& mv = c.worst[static_cast<size_t>(r.metric)];
  const double v = mv.value ? *mv.value : (mv.infinite ? INFINITY : NAN);
  const double s = r.sense == Sense::AtMost ? v : -v;
  return std::isnan(s) ? INFINITY : s;
}

}  // namespace

DesignReport run_design(const Spec& spec, const DesignOptions& o) {
  const auto t0 = Clock::now();
  auto elapsed = [&] { return std::chrono::duration<double>(Clock::now() - t0).count(); };
  const Verifier verifier(LoopContext::FromSpec(spec));
  const LoopContext& ctx = verifier.context();
  DesignReport rep;
  rep.spec_name = spec.name;
  rep.spec_document = spec.document;
  rep.context = ctx;
  rep.objective = o.objective;
  rep.limits = plant_limits(spec.plants, spec.requirements, rep.context.region, spec.stages);
  rep.summary.seed = o.seed;
  rep.summary.threads = resolve_threads(o.threads);
  const int threads = rep.summary.threads;

  const AnalysisOptions screening = AnalysisOptions::Screening(spec.analysis);
  // A load-recovery or load-IAE bound needs the compensator's own integrator: "auto" tries only with.
  StageSettings stage_settings = spec.stages;
  if (stage_settings.integrator == IntegratorChoice::Auto && compensator_integrator_driver(spec.requirements))
    stage_settings.integrator = IntegratorChoice::On;
  const std::vector<Structure> structures = enumerate_structures(stage_settings);
  // Every structure is one job of the level scheduler (level = number of stages): prepare and score
  // its screening points, then polish its starts.
  struct Job {
    StructureSetup setup;
    std::vector<LocalResult> results;
    double finished_s = 0.0;
  };
  const size_t n_jobs = structures.size();
  std::vector<Job> jobs(n_jobs);
  long long feasible_so_far = 0, evaluations_so_far = 0;
  int levels_after_full = -1;
  LevelJobs lj;
  for (const Structure& s : structures) lj.levels.push_back(s.stage_count());
  lj.prepare = [&](size_t i, const std::atomic<bool>& cancel) {
    Job& job = jobs[i];
    std::vector<PoolEntry> global;
    job.setup = prepare(structures[i], i, spec, rep.context.region, rep.context.frequency_range, screening, o, global);
    for (PoolEntry& e : global)
      if (!cancel && !cancelled(o)) e.score = job.setup.problem->score(e.x);
    add_global_starts(job.setup, global, o);
    job.results.assign(job.setup.starts.size(), LocalResult{});
    return job.setup.starts.size();
  };
  lj.run = [&](size_t i, size_t k, const std::atomic<bool>& cancel) {
    Job& job = jobs[i];
    job.results[k] = local_search(*job.setup.problem, job.setup.starts[k].x, o.local, &cancel);
  };
  lj.job_done = [&](size_t i) { jobs[i].finished_s = elapsed(); };
  lj.level_done = [&](size_t first, size_t end) {
    for (size_t i = first; i < end; ++i) {
      evaluations_so_far += jobs[i].setup.global_evaluations;
      for (const LocalResult& r : jobs[i].results) {
        evaluations_so_far += r.evaluations;
        feasible_so_far += r.score.feasible;
      }
    }
    if (levels_after_full < 0 && feasible_so_far >= o.keep) levels_after_full = 0;
    else if (levels_after_full >= 0) ++levels_after_full;
    return (levels_after_full >= 0 && levels_after_full >= o.extra_levels) || evaluations_so_far >= o.max_evaluations ||
           cancelled(o);
  };
  lj.out_of_time = [&] { return elapsed() >= o.time_limit_s || cancelled(o); };
  const LevelRun run = run_levels(lj, threads);
  if (cancelled(o)) {  // stopped from outside: no candidate is verified or listed
    rep.summary.seconds = elapsed();
    return rep;
  }
  auto level_of = [&](size_t i) { return structures[i].stage_count(); };
  // The levels used: complete ones up to the stop level.
  std::vector<StructureSetup> setups;
  std::vector<PoolEntry> pool;
  std::vector<std::pair<size_t, size_t>> level_ranges;  // pool index ranges per level
  std::vector<double> level_finished;
  for (size_t i = 0; i < n_jobs;) {
    size_t end_of_level = i;
    while (end_of_level < n_jobs && level_of(end_of_level) == level_of(i)) ++end_of_level;
    bool complete = true;
    for (size_t j = i; j < end_of_level; ++j) complete = complete && run.done[j];
    if (!complete) {
      rep.summary.time_stop = run.out_of_time;
      break;
    }
    const size_t first = pool.size();
    double finished = 0.0;
    for (size_t j = i; j < end_of_level; ++j) {
      Job& job = jobs[j];
      rep.summary.evaluations += job.setup.global_evaluations;
      for (size_t k = 0; k < job.results.size(); ++k) {
        rep.summary.evaluations += job.results[k].evaluations;
        pool.push_back({setups.size(), job.results[k].x, job.results[k].score, job.setup.starts[k].origin});
      }
      rep.summary.local_runs += static_cast<int>(job.results.size());
      rep.summary.structures_searched += 1;
      finished = std::max(finished, job.finished_s);
      setups.push_back(std::move(job.setup));
    }
    level_ranges.push_back({first, pool.size()});
    level_finished.push_back(finished);
    const int level = level_of(i);
    i = end_of_level;
    if (level == run.stop_level) {
      rep.summary.budget_stop = rep.summary.evaluations >= o.max_evaluations && feasible_so_far < o.keep;
      break;
    }
  }
  // Full-accuracy verifications are cached by pool index (the shortlist reuses them).
  std::map<std::pair<size_t, std::vector<double>>, Candidate> verified;
  auto verify_cached = [&](const std::vector<size_t>& which) {
    std::vector<Candidate> out(which.size());
    parallel_for(which.size(), threads, [&](size_t k) {
      const PoolEntry& e = pool[which[k]];
      out[k] = verify(e, setups, verifier, o.objective);
    });
    for (size_t k = 0; k < which.size(); ++k) verified[{pool[which[k]].structure, pool[which[k]].x}] = out[k];
    return out;
  };
  // Time to the first verified design: the first level whose best screening-feasible points verify.
  for (size_t l = 0; l < level_ranges.size() && !rep.summary.first_verified_s; ++l) {
    std::vector<size_t> order;
    for (size_t i = level_ranges[l].first; i < level_ranges[l].second; ++i)
      if (pool[i].score.feasible) order.push_back(i);
    std::stable_sort(order.begin(), order.end(), [&](size_t a, size_t b) { return better_score(pool[a].score, pool[b].score); });
    if (order.size() > 3) order.resize(3);
    const double t_verify = elapsed();
    const std::vector<Candidate> v = verify_cached(order);
    if (std::any_of(v.begin(), v.end(), [](const Candidate& c) { return c.meets; }))
      rep.summary.first_verified_s = level_finished[l] + (elapsed() - t_verify);
  }

  // Diverse shortlist by screening score, then full-accuracy verification. After an escalation
  // round, points already verified and failing go after the others (a screening-feasible point on
  // the edge of a bound must not crowd out the new ones), verified meeting ones first.
  auto rank_pool = [&](bool escalated) {
    if (escalated) {
      auto group = [&](const PoolEntry& e) {
        const auto it = verified.find({e.structure, e.x});
        return it == verified.end() ? 1 : (it->second.meets ? 0 : 2);
      };
      std::stable_sort(pool.begin(), pool.end(), [&](const PoolEntry& a, const PoolEntry& b) {
        const int ga = group(a), gb = group(b);
        if (ga != gb) return ga < gb;
        return better_score(a.score, b.score);
      });
    } else {
      std::stable_sort(pool.begin(), pool.end(), [](const PoolEntry& a, const PoolEntry& b) { return better_score(a.score, b.score); });
    }
    std::vector<PoolEntry> shortlist;
    for (const PoolEntry& e : pool) {
      bool close = false;
      for (const PoolEntry& s : shortlist)
        if (s.structure == e.structure && unit_distance(setups[e.structure].problem->space(), s.x, e.x) < o.diversity) close = true;
      if (!close) shortlist.push_back(e);
      if (static_cast<int>(shortlist.size()) >= 2 * o.keep) break;
    }
    std::vector<Candidate> cands(shortlist.size());
    {
      std::vector<size_t> todo;
      for (size_t i = 0; i < shortlist.size(); ++i)
        if (!verified.count({shortlist[i].structure, shortlist[i].x})) todo.push_back(i);
      std::vector<Candidate> fresh(todo.size());
      parallel_for(todo.size(), threads, [&](size_t k) { fresh[k] = verify(shortlist[todo[k]], setups, verifier, o.objective); });
      for (size_t k = 0; k < todo.size(); ++k) verified[{shortlist[todo[k]].structure, shortlist[todo[k]].x}] = fresh[k];
      for (size_t i = 0; i < shortlist.size(); ++i) {
        cands[i] = verified.at({shortlist[i].structure, shortlist[i].x});
        cands[i].origin = shortlist[i].origin;
      }
    }
    cands = without_degenerate(std::move(cands), verifier, o.objective, threads);
    // stages.pid: a listed candidate without a notch reads as a PID (the search scores the shape;
    // this keeps a non-meeting one of another shape off the list too).
    if (spec.stages.pid)
      cands.erase(std::remove_if(cands.begin(), cands.end(),
                                 [](const Candidate& c) { return c.structure.notch == 0 && !pid_form(c.compensator); }),
                  cands.end());
    if (o.metric_objective)
      for (Candidate& c : cands) c.objective = metric_score(c, *o.metric_objective);
    order_candidates(cands, o.objective);
    // The design margin is the aim: while some candidate meets the limits tightened by it, those
    // that meet only the stated limits (on the edge of a bound) are not listed.
    if (std::any_of(cands.begin(), cands.end(), [&](const Candidate& c) { return meets_with_margin(c.verification, o.margin); }))
      cands.erase(std::remove_if(cands.begin(), cands.end(),
                                 [&](const Candidate& c) { return c.meets && !meets_with_margin(c.verification, o.margin); }),
                  cands.end());
    // An unstable loop is no candidate while stable ones are there to show.
    const long stable_count = std::count_if(cands.begin(), cands.end(), [](const Candidate& c) { return c.verification.all_stable; });
    if (stable_count > 0)
      cands.erase(std::remove_if(cands.begin(), cands.end(), [](const Candidate& c) { return !c.verification.all_stable; }), cands.end());
    if (static_cast<int>(cands.size()) > o.keep) cands.resize(static_cast<size_t>(o.keep));
    // The settling-cliff check only for the listed candidates (it costs four step responses per
    // plant); then the robust-before-fragile tie-break among them.
    parallel_for(cands.size(), threads, [&](size_t i) { verifier.add_fragility(cands[i]); });
    order_candidates(cands, o.objective);
    for (size_t i = 0; i < cands.size(); ++i) cands[i].rank = static_cast<int>(i) + 1;
    rep.candidates = std::move(cands);
  };
  rank_pool(false);
  rep.summary.phases.push_back({"first pass", rep.summary.evaluations, rep.summary.local_runs, elapsed()});

  // Escalation: while nothing meets and the budget lasts, rounds of harder search (see
  // escalate_round). Each round is a fixed set of tasks whose results land in fixed slots, and
  // the budget is checked between rounds only, so the outcome does not depend on the thread count.
  if (!rep.met() && !o.metric_objective && o.budget_s > 0.0 && !setups.empty()) {
    const bool limited = std::any_of(rep.limits.begin(), rep.limits.end(), [](const PlantLimit& l) { return l.binding; });
    const long long budget = escalation_evaluations(o.budget_s, limited);
    rep.summary.escalation_budget = budget;
    long long spent = 0;
    for (int round = 0; spent < budget && !rep.met() && !cancelled(o) && elapsed() < o.time_limit_s; ++round) {
      const double t_round = elapsed();
      std::vector<PoolEntry> found;
      int runs = 0;
      const long long used = escalate_round(round, setups, pool, verified, spec, rep.context.region, screening, o, threads, found, runs);
      spent += used;
      rep.summary.evaluations += used;
      rep.summary.local_runs += runs;
      for (PoolEntry& e : found) pool.push_back(std::move(e));
      rank_pool(true);
      rep.summary.phases.push_back({"escalation round " + std::to_string(round + 1), used, runs, elapsed() - t_round});
    }
    rep.summary.escalation_spent = spent;
  }
  if (!rep.summary.first_verified_s && rep.met()) rep.summary.first_verified_s = elapsed();

  // When nothing meets: for each requirement the best candidate misses, the best value reachable
  // when that requirement alone is relaxed (a smaller search over the structures already tried).
  if (!rep.met() && o.explain_failure && !rep.candidates.empty()) {
    std::vector<Candidate> solutions;
    for (const RequirementOutcome& out : rep.candidates.front().verification.outcomes) {
      if (out.met) continue;
      Spec relaxed = spec;
      relaxed.requirements.items.clear();
      for (const Requirement& r : spec.requirements.items)
        if (!(r.metric == out.requirement.metric && r.sense == out.requirement.sense)) relaxed.requirements.items.push_back(r);
      DesignOptions ro = o;
      ro.keep = 1;
      ro.explain_failure = false;
      ro.global_starts = 1;
      ro.time_limit_s = std::max(1.0, o.time_limit_s / 4.0);
      ro.metric_objective = out.requirement;
      const DesignReport rr = run_design(relaxed, ro);
      BindingRequirement b;
      b.requirement = out.requirement;
      // The best value of the relaxed metric among designs that meet every other requirement: the
      // relaxed search's top candidate and every candidate verified so far. A design whose value
      // meets the limit too is a full solution: it is returned as a candidate.
      auto consider = [&](const Candidate& c) {
        const Evaluation& ev = c.verification;
        bool rest = ev.all_stable;
        const RequirementOutcome* mine = nullptr;
        for (const RequirementOutcome& x : ev.outcomes) {
          if (x.requirement.metric == out.requirement.metric && x.requirement.sense == out.requirement.sense) mine = &x;
          else rest = rest && x.met;
        }
        // An unbounded value (a recovery the actuator cannot make, an infinite margin) counts too:
        // the worst an at-most bound can see, the best an at-least one can.
        if (!rest || !mine || !(mine->worst.value || mine->worst.infinite)) return;
        auto key = [](const MetricValue& m) { return m.value ? *m.value : INFINITY; };
        const double v = key(mine->worst);
        const bool none = !b.best_value.value && !b.best_value.infinite;
        const bool improves =
            none || (out.requirement.sense == Sense::AtMost ? v < key(b.best_value) : v > key(b.best_value));
        if (improves) {
          b.best_value = mine->worst;
          b.best_design = c.compensator;
        }
        b.relaxing_meets_the_rest = true;
        if (c.meets) solutions.push_back(c);
      };
      if (!rr.candidates.empty()) {
        const Candidate& top = rr.candidates.front();
        Candidate c = verifier.verify(top.compensator, o.objective);
        c.structure = top.structure;
        c.parameters = top.parameters;
        c.origin = top.origin + " (search with " + metric_info(out.requirement.metric).key + " relaxed)";
        consider(c);
      }
      for (const Candidate& c : rep.candidates) consider(c);
      for (const auto& kv : verified) consider(kv.second);
      rep.summary.evaluations += rr.summary.evaluations;
      rep.summary.phases.push_back({std::string("relaxed ") + metric_info(out.requirement.metric).key, rr.summary.evaluations,
                                    rr.summary.local_runs, rr.summary.seconds});
      rep.binding.push_back(b);
    }
    // A design found on the way that meets everything: the spec is met after all.
    if (!solutions.empty()) {
      std::vector<Candidate> all = solutions;
      for (const Candidate& c : rep.candidates) all.push_back(c);
      order_candidates(all, o.objective == Objective::Simplest ? Objective::LeastEffort : o.objective);
      std::vector<Candidate> kept;
      for (const Candidate& c : all) {
        bool dup = false;
        for (const Candidate& k : kept) dup = dup || (k.structure == c.structure && k.compensator.gain == c.compensator.gain &&
                                                      k.parameters == c.parameters);
        if (!dup) kept.push_back(c);
      }
      if (static_cast<int>(kept.size()) > o.keep) kept.resize(static_cast<size_t>(o.keep));
      for (size_t i = 0; i < kept.size(); ++i) kept[i].rank = static_cast<int>(i) + 1;
      rep.candidates = std::move(kept);
      rep.binding.clear();
      if (!rep.summary.first_verified_s) rep.summary.first_verified_s = elapsed();
    }
  }
  rep.summary.met = rep.met();
  rep.summary.seconds = elapsed();
  if (cancelled(o)) {  // stopped during the escalation or the relaxed searches
    rep.candidates.clear();
    rep.binding.clear();
    rep.summary.time_stop = false;
  }
  return rep;
}

}  // namespace pw
