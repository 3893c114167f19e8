#include "polewright/synthesis/local_search.hpp"

#include <nlopt.hpp>

#include <algorithm>
#include <cmath>

namespace pw {

bool LocalOptions::IsValid(std::string* error) const {
  if (feasibility_evaluations < 0 || objective_evaluations < 0) {
    if (error) *error = "evaluation budgets must be >= 0";
    return false;
  }
  if (!(relative_tolerance > 0.0)) {
    if (error) *error = "relative_tolerance must be > 0";
    return false;
  }
  try {
    (void)nlopt::opt(algorithm.c_str(), 2);
  } catch (const std::exception&) {
    if (error) *error = "unknown NLopt algorithm " + algorithm;
    return false;
  }
  return true;
}

namespace {

struct Tracker {
  const DesignProblem* problem;
  LocalResult* best;
  bool phase_two = false;
  long long count = 0;
  const std::atomic<bool>* cancel = nullptr;

  // Better: feasible beats infeasible; among feasible the lower objective, else the lower violation.
  void consider(const std::vector<double>& x, const DesignScore& s) {
    const DesignScore& b = best->score;
    const bool better = best->x.empty() || (s.feasible && !b.feasible) ||
                        (s.feasible && b.feasible && s.objective < b.objective) ||
                        (!s.feasible && !b.feasible && s.violation < b.violation);
    if (better) {
      best->x = x;
      best->score = s;
    }
  }
};

double nlopt_objective(unsigned n, const double* x, double* grad, void* data) {
  (void)grad;
  Tracker* t = static_cast<Tracker*>(data);
  if (t->cancel && t->cancel->load(std::memory_order_relaxed)) throw nlopt::forced_stop();
  const std::vector<double> v(x, x + n);
  const DesignScore s = t->problem->score(v);
  ++t->count;
  t->consider(v, s);
  if (!t->phase_two) return s.violation;
  return s.feasible ? s.objective : 1e6 + s.violation;
}

void run_phase(Tracker& t, const LocalOptions& o, std::vector<double> x, int evals, double step_fraction,
               bool stop_at_feasible, std::string& reason) {
  if (evals <= 0) return;
  const ParamSpace& ps = t.problem->space();
  nlopt::opt opt(o.algorithm.c_str(), static_cast<unsigned>(ps.dim()));
  opt.set_lower_bounds(ps.lower);
  opt.set_upper_bounds(ps.upper);
  opt.set_min_objective(nlopt_objective, &t);
  opt.set_maxeval(evals);
  opt.set_xtol_rel(o.relative_tolerance);
  if (stop_at_feasible) opt.set_stopval(0.0);
  std::vector<double> step(static_cast<size_t>(ps.dim()));
  for (int i = 0; i < ps.dim(); ++i) step[static_cast<size_t>(i)] = step_fraction * (ps.upper[static_cast<size_t>(i)] - ps.lower[static_cast<size_t>(i)]);
  opt.set_initial_step(step);
  for (int i = 0; i < ps.dim(); ++i)
    x[static_cast<size_t>(i)] = std::clamp(x[static_cast<size_t>(i)], ps.lower[static_cast<size_t>(i)], ps.upper[static_cast<size_t>(i)]);
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

}  // namespace

LocalResult local_search(const DesignProblem& problem, const std::vector<double>& x0, const LocalOptions& o,
                         const std::atomic<bool>* cancel) {
  LocalResult best;
  Tracker t{&problem, &best};
  t.cancel = cancel;
  const DesignScore s0 = problem.score(x0);
  ++t.count;
  t.consider(x0, s0);
  std::string reason = "start";
  if (!best.score.feasible) run_phase(t, o, x0, o.feasibility_evaluations, 0.15, true, reason);
  if (best.score.feasible && !(cancel && cancel->load())) {
    t.phase_two = true;
    run_phase(t, o, best.x, o.objective_evaluations, 0.03, false, reason);
  }
  best.evaluations = t.count;
  best.stop_reason = reason;
  return best;
}

}  // namespace pw
