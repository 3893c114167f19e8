#include "polewright/synthesis/global_search.hpp"

#include <nlopt.hpp>

#include <algorithm>

namespace pw {

bool GlobalOptions::IsValid(std::string* error) const {
  auto fail = [&](const std::string& m) {
    if (error) *error = m;
    return false;
  };
  if (evaluations < 1 || local_evaluations < 1) return fail("global evaluation budgets must be >= 1");
  try {
    (void)nlopt::opt(algorithm.c_str(), 2);
    (void)nlopt::opt(local_algorithm.c_str(), 2);
  } catch (const std::exception&) {
    return fail("unknown NLopt algorithm " + algorithm + " or " + local_algorithm);
  }
  return true;
}

namespace {

struct GlobalTracker {
  const Problem* problem;
  LocalResult* best;
  long long count = 0;
  const std::atomic<bool>* cancel = nullptr;
};

double violation_objective(unsigned n, const double* x, double* grad, void* data) {
  (void)grad;
  GlobalTracker* t = static_cast<GlobalTracker*>(data);
  if (t->cancel && t->cancel->load(std::memory_order_relaxed)) throw nlopt::forced_stop();
  std::vector<double> v(x, x + n);
  const DesignScore s = t->problem->score(v);
  ++t->count;
  if (t->best->x.empty() || better_score(s, t->best->score)) {
    t->best->x = std::move(v);
    t->best->score = s;
  }
  return s.violation;
}

}  // namespace

LocalResult global_search(const Problem& problem, const std::vector<double>& x0, const GlobalOptions& g,
                          const LocalOptions& polish, const std::atomic<bool>* cancel) {
  LocalResult best;
  GlobalTracker t{&problem, &best, 0, cancel};
  const size_t n = static_cast<size_t>(problem.dim());
  std::string reason = "global budget";
  {
    nlopt::srand(g.seed);  // thread-local in NLopt: the run is the same on any thread
    nlopt::opt opt(g.algorithm.c_str(), static_cast<unsigned>(n));
    opt.set_lower_bounds(problem.lower());
    opt.set_upper_bounds(problem.upper());
    opt.set_min_objective(violation_objective, &t);
    opt.set_maxeval(g.evaluations);
    opt.set_stopval(0.0);
    nlopt::opt local(g.local_algorithm.c_str(), static_cast<unsigned>(n));
    local.set_maxeval(g.local_evaluations);
    local.set_xtol_rel(1e-4);
    local.set_stopval(0.0);
    opt.set_local_optimizer(local);
    std::vector<double> x(x0);
    for (size_t i = 0; i < n; ++i) x[i] = std::clamp(x[i], problem.lower()[i], problem.upper()[i]);
    double f = 0.0;
    try {
      const nlopt::result r = opt.optimize(x, f);
      if (r == nlopt::STOPVAL_REACHED) reason = "feasible";
    } catch (const nlopt::forced_stop&) {
      reason = "forced stop";
    } catch (const std::exception& e) {
      reason = std::string("global: ") + e.what();
    }
  }
  if (best.x.empty()) best.x = x0;
  // The objective phase (and the feasibility phase when the global one fell short) from its best point.
  LocalResult polished = local_search(problem, best.x, polish, cancel);
  polished.evaluations += t.count;
  if (!polished.x.empty() && !better_score(polished.score, best.score) && better_score(best.score, polished.score)) {
    polished.x = best.x;
    polished.score = best.score;
  }
  polished.stop_reason = reason + ", then " + polished.stop_reason;
  return polished;
}

}  // namespace pw
