#include "polewright/jobs/design.hpp"

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <random>
#include <atomic>
#include <limits>
#include <condition_variable>
#include <map>
#include <set>
#include <tuple>
#include <mutex>

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
  if (global_points_base < 0 || global_points_per_dim < 0 || global_starts < 0) return fail("global search sizes must be >= 0");
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
  return buf;
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

bool better(const DesignScore& a, const DesignScore& b) {
  if (a.feasible != b.feasible) return a.feasible;
  if (a.feasible) return a.objective < b.objective;
  return a.violation < b.violation;
}

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
  StructureSetup st;
  st.structure = s;
  st.problem = std::make_shared<DesignProblem>(spec.plants, spec.requirements, region, screening, o.objective, ps);
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
  std::stable_sort(global.begin(), global.end(), [](const PoolEntry& a, const PoolEntry& b) { return better(a.score, b.score); });
  for (size_t i = 0; i < global.size() && static_cast<int>(i) < o.global_starts; ++i)
    st.starts.push_back({global[i].x, global[i].origin});
}

Candidate verify(const PoolEntry& e, const std::vector<StructureSetup>& setups, const Spec& spec, const Region& region,
                 Objective objective) {
  const StructureSetup& st = setups[e.structure];
  Candidate c;
  c.structure = st.structure;
  c.parameters = e.x;
  c.origin = e.origin;
  c.compensator = params_to_zpk(st.problem->space(), e.x);
  c.verification = evaluate_all(c.compensator, spec.plants, spec.requirements, region, spec.analysis);
  c.worst = worst_metrics(c.verification.plants, spec.requirements);
  c.meets = c.verification.all_met;
  c.violation = c.verification.total_violation;
  c.objective = objective_value(objective, c.worst, c.compensator.gain);
  return c;
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
  DesignReport rep;
  rep.spec_name = spec.name;
  rep.spec_document = spec.document;
  rep.plants = spec.plants;
  rep.requirements = spec.requirements;
  rep.analysis = spec.analysis;
  rep.objective = o.objective;
  rep.region = region_from_requirements(spec.requirements);
  rep.frequency_range = spec.stages.frequency_range_rad_s ? *spec.stages.frequency_range_rad_s
                                                          : default_frequency_range(spec.plants, rep.region);
  rep.limits = plant_limits(spec.plants, spec.requirements, rep.region, spec.stages);
  rep.summary.seed = o.seed;
  rep.summary.threads = resolve_threads(o.threads);
  const int threads = rep.summary.threads;

  AnalysisOptions screening = AnalysisOptions::Screening(spec.analysis);
  const std::vector<Structure> structures = enumerate_structures(spec.stages);
  // Every structure is one job: prepare, score its screening points, polish its starts. Jobs run in
  // level order (level = number of stages) from a shared queue. The stopping rule is applied to whole
  // levels in order and looks only at their results, so the set of results used never depends on the
  // thread count or on timing; a job of a later level that ran anyway is discarded.
  struct Job {
    StructureSetup setup;
    std::vector<LocalResult> results;
    bool done = false;
    double finished_s = 0.0;
    std::atomic<bool> cancel{false};  // set when the job's level falls beyond the stop level
  };
  const size_t n_jobs = structures.size();
  std::vector<Job> jobs(n_jobs);
  std::mutex mutex;
  int stop_level = std::numeric_limits<int>::max();
  size_t resolved = 0;  // jobs [0, resolved) belong to levels already judged
  long long feasible_so_far = 0, evaluations_so_far = 0;
  int levels_after_full = -1;
  std::atomic<bool> out_of_time{false};
  auto level_of = [&](size_t i) { return structures[i].stage_count(); };
  // Applies the stopping rule to every level that is complete, in order (called under the mutex).
  auto judge = [&] {
    while (resolved < n_jobs && stop_level == std::numeric_limits<int>::max()) {
      size_t end_of_level = resolved;
      while (end_of_level < n_jobs && level_of(end_of_level) == level_of(resolved)) ++end_of_level;
      for (size_t i = resolved; i < end_of_level; ++i)
        if (!jobs[i].done) return;
      for (size_t i = resolved; i < end_of_level; ++i) {
        evaluations_so_far += jobs[i].setup.global_evaluations;
        for (const LocalResult& r : jobs[i].results) {
          evaluations_so_far += r.evaluations;
          feasible_so_far += r.score.feasible;
        }
      }
      const int level = level_of(resolved);
      resolved = end_of_level;
      if (levels_after_full < 0 && feasible_so_far >= o.keep) levels_after_full = 0;
      else if (levels_after_full >= 0) ++levels_after_full;
      if ((levels_after_full >= 0 && levels_after_full >= o.extra_levels) || evaluations_so_far >= o.max_evaluations) {
        stop_level = level;
        for (size_t i = resolved; i < n_jobs; ++i) jobs[i].cancel = true;  // speculative work past the stop
      }
    }
  };
  // Tasks: per structure one preparation (seeds, screening points) and then one task per start.
  // The queue hands out the lowest (level, structure, start) first; tasks of levels past the stop
  // level are dropped, and running ones are cancelled.
  using Task = std::tuple<int, size_t, int, size_t>;  // level, job, kind (0 prepare, 1 polish), start
  std::set<Task> queue;
  for (size_t i = 0; i < n_jobs; ++i) queue.insert({level_of(i), i, 0, 0});
  std::vector<int> pending(n_jobs, -1);
  std::condition_variable wake;
  int running = 0;
  parallel_for(static_cast<size_t>(threads), threads, [&](size_t) {
    std::unique_lock<std::mutex> lock(mutex);
    for (;;) {
      while (!queue.empty() && std::get<0>(*queue.begin()) > stop_level) queue.erase(queue.begin());
      if (queue.empty()) {
        if (running == 0) {
          wake.notify_all();
          return;
        }
        wake.wait(lock);
        continue;
      }
      const Task task = *queue.begin();
      queue.erase(queue.begin());
      ++running;
      lock.unlock();
      const size_t i = std::get<1>(task);
      Job& job = jobs[i];
      const bool late = elapsed() >= o.time_limit_s || (o.cancel && o.cancel->load());
      if (late) {
        out_of_time = true;
      } else if (std::get<2>(task) == 0) {
        std::vector<PoolEntry> global;
        job.setup = prepare(structures[i], i, spec, rep.region, rep.frequency_range, screening, o, global);
        for (PoolEntry& e : global)
          if (!job.cancel) e.score = job.setup.problem->score(e.x);
        add_global_starts(job.setup, global, o);
        job.results.assign(job.setup.starts.size(), LocalResult{});
      } else {
        const size_t k = std::get<3>(task);
        job.results[k] = local_search(*job.setup.problem, job.setup.starts[k].x, o.local, &job.cancel);
      }
      lock.lock();
      --running;
      if (!late) {
        if (std::get<2>(task) == 0) {
          pending[i] = static_cast<int>(job.setup.starts.size());
          for (size_t k = 0; k < job.setup.starts.size(); ++k) queue.insert({std::get<0>(task), i, 1, k});
        } else {
          --pending[i];
        }
        if (pending[i] == 0) {
          job.done = true;
          job.finished_s = elapsed();
          judge();
        }
      }
      wake.notify_all();
    }
  });
  // The levels used: complete ones up to the stop level.
  std::vector<StructureSetup> setups;
  std::vector<PoolEntry> pool;
  std::vector<std::pair<size_t, size_t>> level_ranges;  // pool index ranges per level
  std::vector<double> level_finished;
  for (size_t i = 0; i < n_jobs;) {
    size_t end_of_level = i;
    while (end_of_level < n_jobs && level_of(end_of_level) == level_of(i)) ++end_of_level;
    bool complete = true;
    for (size_t j = i; j < end_of_level; ++j) complete = complete && jobs[j].done;
    if (!complete) {
      rep.summary.time_stop = out_of_time;
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
    if (level == stop_level) {
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
      out[k] = verify(e, setups, spec, rep.region, o.objective);
    });
    for (size_t k = 0; k < which.size(); ++k) verified[{pool[which[k]].structure, pool[which[k]].x}] = out[k];
    return out;
  };
  // Time to the first verified design: the first level whose best screening-feasible points verify.
  for (size_t l = 0; l < level_ranges.size() && !rep.summary.first_verified_s; ++l) {
    std::vector<size_t> order;
    for (size_t i = level_ranges[l].first; i < level_ranges[l].second; ++i)
      if (pool[i].score.feasible) order.push_back(i);
    std::stable_sort(order.begin(), order.end(), [&](size_t a, size_t b) { return better(pool[a].score, pool[b].score); });
    if (order.size() > 3) order.resize(3);
    const double t_verify = elapsed();
    const std::vector<Candidate> v = verify_cached(order);
    if (std::any_of(v.begin(), v.end(), [](const Candidate& c) { return c.meets; }))
      rep.summary.first_verified_s = level_finished[l] + (elapsed() - t_verify);
  }

  // Diverse shortlist by screening score, then full-accuracy verification.
  std::stable_sort(pool.begin(), pool.end(), [](const PoolEntry& a, const PoolEntry& b) { return better(a.score, b.score); });
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
    parallel_for(todo.size(), threads, [&](size_t k) { fresh[k] = verify(shortlist[todo[k]], setups, spec, rep.region, o.objective); });
    for (size_t k = 0; k < todo.size(); ++k) verified[{shortlist[todo[k]].structure, shortlist[todo[k]].x}] = fresh[k];
    for (size_t i = 0; i < shortlist.size(); ++i) {
      cands[i] = verified.at({shortlist[i].structure, shortlist[i].x});
      cands[i].origin = shortlist[i].origin;
    }
  }
  if (o.metric_objective)
    for (Candidate& c : cands) c.objective = metric_score(c, *o.metric_objective);
  std::stable_sort(cands.begin(), cands.end(), [&](const Candidate& a, const Candidate& b) {
    if (a.meets != b.meets) return a.meets;
    if (a.meets) {
      if (o.objective == Objective::Simplest && a.structure.stage_count() != b.structure.stage_count())
        return a.structure.stage_count() < b.structure.stage_count();
      return a.objective < b.objective;
    }
    return a.violation < b.violation;
  });
  // An unstable loop is no candidate while stable ones are there to show.
  const long stable_count = std::count_if(cands.begin(), cands.end(), [](const Candidate& c) { return c.verification.all_stable; });
  if (stable_count > 0)
    cands.erase(std::remove_if(cands.begin(), cands.end(), [](const Candidate& c) { return !c.verification.all_stable; }), cands.end());
  if (static_cast<int>(cands.size()) > o.keep) cands.resize(static_cast<size_t>(o.keep));
  for (size_t i = 0; i < cands.size(); ++i) cands[i].rank = static_cast<int>(i) + 1;
  rep.candidates = std::move(cands);
  if (!rep.summary.first_verified_s && rep.met()) rep.summary.first_verified_s = elapsed();

  // When nothing meets: for each requirement the best candidate misses, the best value reachable
  // when that requirement alone is relaxed (a smaller search over the structures already tried).
  if (!rep.met() && o.explain_failure && !rep.candidates.empty()) {
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
      // relaxed search's top candidate and any candidate already in hand.
      auto consider = [&](const Evaluation& ev) {
        bool rest = ev.all_stable;
        const RequirementOutcome* mine = nullptr;
        for (const RequirementOutcome& x : ev.outcomes) {
          if (x.requirement.metric == out.requirement.metric && x.requirement.sense == out.requirement.sense) mine = &x;
          else rest = rest && x.met;
        }
        if (!rest || !mine || !mine->worst.value) return;
        const double v = *mine->worst.value;
        const bool improves = !b.best_value.value ||
                              (out.requirement.sense == Sense::AtMost ? v < *b.best_value.value : v > *b.best_value.value);
        if (improves) b.best_value = mine->worst;
        b.relaxing_meets_the_rest = true;
      };
      if (!rr.candidates.empty())
        consider(evaluate_all(rr.candidates.front().compensator, spec.plants, spec.requirements, rep.region, spec.analysis));
      for (const Candidate& c : rep.candidates) consider(c.verification);
      rep.summary.evaluations += rr.summary.evaluations;
      rep.binding.push_back(b);
    }
  }
  rep.summary.seconds = elapsed();
  return rep;
}

}  // namespace pw
