#include "polewright/synthesis/local_search.hpp"

#include <nlopt.hpp>

#include <algorithm>
#include <cmath>

namespace pw {

bool LocalOptions::IsValid(std::string* error) const {
  auto fail = [&](const std::string& m) {
    if (error) *error = m;
    return false;
  };
  if (feasibility_evaluations < 0 || objective_evaluations < 0) return fail("evaluation budgets must be >= 0");
  if (!(relative_tolerance >= 0.0) || !(absolute_tolerance >= 0.0) || !(relative_tolerance > 0.0 || absolute_tolerance > 0.0))
    return fail("relative_tolerance must be > 0");
  if (!(feasibility_step > 0.0) || !(objective_step > 0.0)) return fail("initial steps must be > 0");
  if (!(objective_weight >= 0.0) || !(violation_weight > 0.0)) return fail("feasibility weights must be >= 0 (violation > 0)");
  if (anchor_bisections < 0) return fail("anchor_bisections must be >= 0");
  try {
    (void)nlopt::opt(algorithm.c_str(), 2);
  } catch (const std::exception&) {
    return fail("unknown NLopt algorithm " + algorithm);
  }
  return true;
}

namespace {

struct Tracker {
  const Problem* problem;
  const LocalOptions* options;
  LocalResult* best;
  bool phase_two = false;
  long long count = 0;
  const std::atomic<bool>* cancel = nullptr;

  DesignScore evaluate(const std::vector<double>& x) {
    const DesignScore s = problem->score(x);
    ++count;
    if (best->x.empty() || better_score(s, best->score)) {
      best->x = x;
      best->score = s;
    }
    return s;
  }
};

double nlopt_objective(unsigned n, const double* x, double* grad, void* data) {
  (void)grad;
  Tracker* t = static_cast<Tracker*>(data);
  if (t->cancel && t->cancel->load(std::memory_order_relaxed)) throw nlopt::forced_stop();
  const DesignScore s = t->evaluate(std::vector<double>(x, x + n));
  if (t->phase_two) return s.feasible ? s.objective : kBarrierOffset + s.violation;
  const LocalOptions& o = *t->options;
  if (o.objective_weight == 0.0) return o.violation_weight == 1.0 ? s.violation : o.violation_weight * s.violation;
  return o.objective_weight * s.objective + o.violation_weight * s.violation;
}

void run_phase(Tracker& t, std::vector<double> x, int evals, double step_size, bool stop_at_feasible, std::string& reason) {
  if (evals <= 0) return;
  const LocalOptions& o = *t.options;
  const Problem& p = *t.problem;
  const std::vector<double>& lo = p.lower();
  const std::vector<double>& hi = p.upper();
  const size_t n = static_cast<size_t>(p.dim());
  nlopt::opt opt(o.algorithm.c_str(), static_cast<unsigned>(n));
  opt.set_lower_bounds(lo);
  opt.set_upper_bounds(hi);
  opt.set_min_objective(nlopt_objective, &t);
  opt.set_maxeval(evals);
  if (o.relative_tolerance > 0.0) opt.set_xtol_rel(o.relative_tolerance);
  if (o.absolute_tolerance > 0.0) opt.set_xtol_abs(o.absolute_tolerance);
  if (stop_at_feasible) opt.set_stopval(0.0);
  std::vector<double> step(n);
  for (size_t i = 0; i < n; ++i) step[i] = o.absolute_steps ? step_size : step_size * (hi[i] - lo[i]);
  opt.set_initial_step(step);
  for (size_t i = 0; i < n; ++i) x[i] = std::clamp(x[i], lo[i], hi[i]);
  double f = 0.0;
  try {
    const nlopt::result r = opt.optimize(x, f);
    reason = r == nlopt::STOPVAL_REACHED ? "feasible" : (r == nlopt::MAXEVAL_REACHED ? "evaluation budget" : "converged");
  } catch (const nlopt::roundoff_limited&) {
    reason = "roundoff limited";
  } catch (const nlopt::forced_stop&) {
    reason = "forced stop";
  } catch (const std::exception& e) {
    reason = std::string("optimizer error: ") + e.what();
  }
}

// Pulls a feasible point back towards the anchor along the segment between them: the least
// fraction of the step that stays feasible (bisection). `feasible` may be the tracked best point,
// which moves to every better (closer) feasible point the bisection meets.
void pull_back(Tracker& t, const std::vector<double>& feasible) {
  const std::vector<double>& x0 = t.options->anchor;
  double lo = 0.0, hi = 1.0;
  for (int k = 0; k < t.options->anchor_bisections; ++k) {
    if (t.cancel && t.cancel->load(std::memory_order_relaxed)) return;
    const double m = 0.5 * (lo + hi);
    std::vector<double> x(x0.size());
    for (size_t i = 0; i < x.size(); ++i) x[i] = x0[i] + m * (feasible[i] - x0[i]);
    (t.evaluate(x).feasible ? hi : lo) = m;
  }
}

}  // namespace

LocalResult local_search(const Problem& problem, const std::vector<double>& x0, const LocalOptions& o,
                         const std::atomic<bool>* cancel) {
  LocalResult best;
  Tracker t{&problem, &o, &best};
  t.cancel = cancel;
  t.evaluate(x0);
  std::string reason = "start";
  if (!best.score.feasible) run_phase(t, x0, o.feasibility_evaluations, o.feasibility_step, o.stop_at_feasible, reason);
  if (best.score.feasible && !(cancel && cancel->load())) {
    // The far end of the segment is the best point itself, so it follows each better point found.
    if (o.anchor.size() == static_cast<size_t>(problem.dim())) pull_back(t, best.x);
    t.phase_two = true;
    run_phase(t, best.x, o.objective_evaluations, o.objective_step, false, reason);
  }
  best.evaluations = t.count;
  best.stop_reason = reason;
  return best;
}

}  // namespace pw
