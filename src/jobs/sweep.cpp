#include "polewright/jobs/sweep.hpp"

#include <chrono>
#include <cstdio>
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

void run_job(const SweepFile& file, const Spec& spec, SweepPointResult& r, const std::atomic<bool>* cancel) {
  switch (file.job) {
    case SweepJob::Design: {
      DesignOptions o = DesignOptions::FromSpec(spec);
      o.threads = 1;
      o.time_limit_s = 1e9;         // the evaluation budget stops a search, never the clock: deterministic
      o.explain_failure = false;    // binding requirements are not part of a sweep's summary
      o.cancel = cancel;            // the watchdog's per-point wall-clock cap and the stop signal
      const bool limited = file.point_evaluations > 0 && file.point_evaluations < o.max_evaluations;
      if (limited) o.max_evaluations = file.point_evaluations;
      const DesignReport rep = run_design(spec, o);
      if (!rep.candidates.empty()) {
        r.top = rep.candidates.front();
        r.structure = structure_text(r.top->structure);
      }
      r.status = rep.met() ? PointStatus::Met : PointStatus::NotMet;
      if (limited && rep.summary.budget_stop && !rep.met()) {
        r.status = PointStatus::BadPoint;
        r.message = "stopped by the per-point evaluation limit (point_limit.evaluations = " +
                    std::to_string(file.point_evaluations) + ") before meeting the requirements";
      }
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
      r.status = c.meets ? PointStatus::Met : PointStatus::NotMet;
      return;
    }
    case SweepJob::Retune: {
      RetuneOptions o = RetuneOptions::FromSpec(spec);
      o.threads = 1;
      o.cancel = cancel;
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
      r.status = rep.met() ? PointStatus::Met : PointStatus::NotMet;
      return;
    }
  }
}

}  // namespace

const char* point_status_name(PointStatus s) {
  switch (s) {
    case PointStatus::Met: return "met";
    case PointStatus::NotMet: return "not_met";
    case PointStatus::BadPoint: return "bad_point";
    case PointStatus::Error: return "error";
  }
  return "error";
}

std::optional<PointStatus> point_status_from_name(const std::string& name) {
  for (PointStatus s : {PointStatus::Met, PointStatus::NotMet, PointStatus::BadPoint, PointStatus::Error})
    if (name == point_status_name(s)) return s;
  return std::nullopt;
}

bool SweepRunOptions::IsValid(std::string* error) const {
  if (threads < 0) {
    if (error) *error = "threads must be >= 0";
    return false;
  }
  if (!(poll_s > 0.0)) {
    if (error) *error = "poll_s must be > 0";
    return false;
  }
  for (size_t i = 1; i < todo.size(); ++i)
    if (todo[i] <= todo[i - 1]) {
      if (error) *error = "todo must be ascending";
      return false;
    }
  return true;
}

namespace {
SweepPointResult run_point_at(const SweepFile& file, std::vector<double> values, long long index,
                              const std::atomic<bool>* cancel) {
  const auto t0 = Clock::now();
  SweepPointResult r;
  r.index = index;
  r.values = std::move(values);
  try {
    const Spec spec = parse_spec(point_spec(file, r.values, point_seed(file.seed, index)));
    run_job(file, spec, r, cancel);
  } catch (const SpecError& e) {
    r.status = PointStatus::BadPoint;
    r.message = e.what();
    r.top.reset();
  } catch (const std::exception& e) {
    r.status = PointStatus::Error;
    r.message = e.what();
    r.top.reset();
  }
  r.seconds = std::chrono::duration<double>(Clock::now() - t0).count();
  return r;
}
}  // namespace

SweepPointResult run_sweep_point(const SweepFile& file, const SweepPoints& points, long long index,
                                 const std::atomic<bool>* cancel) {
  return run_point_at(file, points.at(index), index, cancel);
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
  SweepPoints points(file);  // read in todo order under the lock: Sobol points are generated as they go
  SweepRunSummary summary;
  const size_t n = o.todo.size();
  const int threads = std::max(1, std::min<int>(resolve_threads(o.threads), static_cast<int>(std::max<size_t>(n, 1))));
  // One slot per worker: the point in flight, when it started, and its cancel flag, which the
  // watchdog raises on the stop signal or when the point runs past the per-point wall-clock cap.
  enum : int { kRunning = 0, kStopSignal = 1, kTimeCap = 2 };
  struct Slot {
    std::atomic<bool> cancel{false};
    std::atomic<int> reason{kRunning};
    std::atomic<long long> started_ns{0};  // 0 = idle
  };
  std::vector<Slot> slots(static_cast<size_t>(threads));
  struct Finished {
    SweepPointResult result;
    bool abandoned = false;
  };
  std::mutex m;
  std::condition_variable cv;
  std::map<size_t, Finished> finished;  // out of order, waiting for earlier points
  size_t next_task = 0, next_delivery = 0;
  bool stopped = false, workers_done = false;
  std::exception_ptr failure;
  auto now_ns = [] { return static_cast<long long>(std::chrono::duration_cast<std::chrono::nanoseconds>(Clock::now().time_since_epoch()).count()); };
  // Each worker takes the next point, runs it, then delivers every point that is now in order.
  // Workers are held back when they run too far ahead of delivery, so memory stays bounded.
  const size_t window = static_cast<size_t>(threads) * 4;
  auto worker = [&](size_t me) {
    Slot& slot = slots[me];
    for (;;) {
      size_t task;
      std::vector<double> values;
      {
        std::unique_lock<std::mutex> lock(m);
        cv.wait(lock, [&] { return next_task < next_delivery + window || next_task >= n || stopped || failure; });
        if (o.stop && o.stop->load()) stopped = true;
        if (next_task >= n || stopped || failure) {
          cv.notify_all();
          return;
        }
        task = next_task++;
        values = points.at(o.todo[task]);
        slot.cancel = false;
        slot.reason = kRunning;
        slot.started_ns = now_ns();
      }
      Finished done{run_point_at(file, std::move(values), o.todo[task], &slot.cancel), false};
      slot.started_ns = 0;
      if (slot.cancel.load()) {
        if (slot.reason.load() == kTimeCap) {
          // The safety net, not a verdict: the search was cut where the clock happened to be.
          done.result.status = PointStatus::BadPoint;
          char buf[200];
          std::snprintf(buf, sizeof buf,
                        "stopped by the per-point time limit (point_limit.seconds = %g; wall clock, so not "
                        "deterministic): raise it or lower the search budget",
                        file.point_seconds);
          done.result.message = buf;
          done.result.top.reset();
          done.result.structure.clear();
          done.result.change_decades.reset();
        } else {
          done.abandoned = true;  // cut by the stop signal: done again on --resume
        }
      }
      std::unique_lock<std::mutex> lock(m);
      if (done.abandoned) ++summary.abandoned;
      else if (slot.reason.load() == kTimeCap) ++summary.time_limited;
      finished.emplace(task, std::move(done));
      // Deliver in order; the mutex serialises the callback. An abandoned point ends delivery.
      while (!failure && !finished.empty() && finished.begin()->first == next_delivery) {
        if (finished.begin()->second.abandoned) {
          stopped = true;
          break;
        }
        try {
          deliver(finished.begin()->second.result);
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
  // The watchdog: raises a slot's cancel flag on the stop signal or past the wall-clock cap.
  const long long cap_ns = static_cast<long long>(std::min(file.point_seconds, 1e9) * 1e9);
  std::thread watchdog([&] {
    std::unique_lock<std::mutex> lock(m);
    while (!workers_done) {
      cv.wait_for(lock, std::chrono::duration<double>(o.poll_s));
      const bool stop = o.stop && o.stop->load();
      const long long t = now_ns();
      for (Slot& s : slots) {
        const long long started = s.started_ns.load();
        if (started == 0 || s.cancel.load()) continue;
        if (stop) s.reason = kStopSignal;
        else if (t - started > cap_ns) s.reason = kTimeCap;
        else continue;
        s.cancel = true;
      }
    }
  });
  std::vector<std::thread> pool;
  for (int t = 0; t < threads; ++t) pool.emplace_back(worker, static_cast<size_t>(t));
  for (std::thread& t : pool) t.join();
  {
    std::lock_guard<std::mutex> lock(m);
    workers_done = true;
  }
  cv.notify_all();
  watchdog.join();
  if (failure) std::rethrow_exception(failure);
  summary.stopped = stopped && summary.ran < static_cast<long long>(n);
  summary.seconds = std::chrono::duration<double>(Clock::now() - t0).count();
  return summary;
}

}  // namespace pw
