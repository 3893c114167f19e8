#include "polewright/jobs/sweep.hpp"

#include <chrono>
#include <condition_variable>
#include <map>
#include <mutex>
#include <thread>

#include "polewright/jobs/check.hpp"
#include "polewright/jobs/retune.hpp"
#include "polewright/requirements/spec_parse.hpp"
#include "polewright/synthesis/parallel.hpp"
#include "polewright/synthesis/problem.hpp"

namespace pw {

namespace {

using Clock = std::chrono::steady_clock;

std::string structure_text(const Structure& s) {
  std::string out;
  for (const std::string& n : s.names()) out += (out.empty() ? "" : "+") + n;
  return out.empty() ? "gain" : out;
}

void run_job(const SweepFile& file, const Spec& spec, SweepPointResult& r) {
  switch (file.job) {
    case SweepJob::Design: {
      DesignOptions o = DesignOptions::FromSpec(spec);
      o.threads = 1;
      o.time_limit_s = 1e9;         // the evaluation budget stops a search, never the clock: deterministic
      o.explain_failure = false;    // binding requirements are not part of a sweep's summary
      const DesignReport rep = run_design(spec, o);
      if (!rep.candidates.empty()) {
        r.top = rep.candidates.front();
        r.structure = structure_text(r.top->structure);
      }
      r.status = rep.met() ? "met" : "not_met";
      return;
    }
    case SweepJob::Check: {
      const CheckReport rep = run_check(spec, *spec.current);
      Candidate c;
      c.rank = 1;
      c.compensator = *spec.current;
      c.verification = rep.evaluation;
      c.worst = worst_metrics(rep.evaluation.plants, spec.requirements);
      c.meets = rep.evaluation.all_met;
      c.violation = rep.evaluation.total_violation;
      r.top = c;
      r.structure = "current";
      r.status = c.meets ? "met" : "not_met";
      return;
    }
    case SweepJob::Retune: {
      RetuneOptions o = RetuneOptions::FromSpec(spec);
      o.threads = 1;
      const RetuneReport rep = run_retune(spec, o);
      if (rep.already_met) {
        r.top = rep.current;
        r.structure = "current";
        r.change_decades = 0.0;
      } else if (!rep.candidates.empty()) {
        r.top = rep.candidates.front().candidate;
        r.structure = "current";
        for (AddedStage s : rep.candidates.front().added) r.structure += std::string(" + ") + added_stage_name(s);
        r.change_decades = rep.candidates.front().change_decades;
      }
      r.status = rep.met() ? "met" : "not_met";
      return;
    }
  }
}

}  // namespace

bool SweepRunOptions::IsValid(std::string* error) const {
  if (threads < 0) {
    if (error) *error = "threads must be >= 0";
    return false;
  }
  for (size_t i = 1; i < todo.size(); ++i)
    if (todo[i] <= todo[i - 1]) {
      if (error) *error = "todo must be ascending";
      return false;
    }
  return true;
}

SweepPointResult run_sweep_point(const SweepFile& file, const SweepPoints& points, long long index) {
  const auto t0 = Clock::now();
  SweepPointResult r;
  r.index = index;
  r.values = points.at(index);
  try {
    const Spec spec = parse_spec(point_spec(file, r.values, point_seed(file.seed, index)));
    run_job(file, spec, r);
  } catch (const SpecError& e) {
    r.status = "bad_point";
    r.message = e.what();
    r.top.reset();
  } catch (const std::exception& e) {
    r.status = "error";
    r.message = e.what();
    r.top.reset();
  }
  r.seconds = std::chrono::duration<double>(Clock::now() - t0).count();
  return r;
}

std::vector<long long> shard_indices(long long total, int k, int n) {
  std::vector<long long> out;
  if (n < 1 || k < 1 || k > n) return out;
  for (long long i = k - 1; i < total; i += n) out.push_back(i);
  return out;
}

SweepRunSummary run_sweep(const SweepFile& file, const SweepRunOptions& o,
                          const std::function<void(const SweepPointResult&)>& deliver) {
  std::string err;
  if (!o.IsValid(&err)) throw std::invalid_argument("sweep options: " + err);
  const auto t0 = Clock::now();
  const SweepPoints points(file);
  SweepRunSummary summary;
  const size_t n = o.todo.size();
  const int threads = std::max(1, std::min<int>(resolve_threads(o.threads), static_cast<int>(std::max<size_t>(n, 1))));
  std::mutex m;
  std::condition_variable cv;
  std::map<size_t, SweepPointResult> finished;  // out of order, waiting for earlier points
  size_t next_task = 0, next_delivery = 0;
  bool stopped = false;
  std::exception_ptr failure;
  // Each worker takes the next point, runs it, then delivers every point that is now in order.
  // Workers are held back when they run too far ahead of delivery, so memory stays bounded.
  const size_t window = static_cast<size_t>(threads) * 4;
  auto worker = [&] {
    for (;;) {
      size_t task;
      {
        std::unique_lock<std::mutex> lock(m);
        cv.wait(lock, [&] { return next_task < next_delivery + window || next_task >= n || stopped || failure; });
        if (o.stop && o.stop->load()) stopped = true;
        if (next_task >= n || stopped || failure) {
          cv.notify_all();
          return;
        }
        task = next_task++;
      }
      SweepPointResult r = run_sweep_point(file, points, o.todo[task]);
      std::unique_lock<std::mutex> lock(m);
      finished.emplace(task, std::move(r));
      // Deliver in order; the mutex serialises the callback.
      while (!failure && !finished.empty() && finished.begin()->first == next_delivery) {
        try {
          deliver(finished.begin()->second);
        } catch (...) {
          failure = std::current_exception();
          break;
        }
        finished.erase(finished.begin());
        ++next_delivery;
        ++summary.ran;
      }
      cv.notify_all();
    }
  };
  std::vector<std::thread> pool;
  for (int t = 0; t < threads; ++t) pool.emplace_back(worker);
  for (std::thread& t : pool) t.join();
  if (failure) std::rethrow_exception(failure);
  summary.stopped = stopped && summary.ran < static_cast<long long>(n);
  summary.seconds = std::chrono::duration<double>(Clock::now() - t0).count();
  return summary;
}

}  // namespace pw
