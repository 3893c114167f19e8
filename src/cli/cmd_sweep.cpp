#include <unistd.h>

#include <chrono>
#include <csignal>
#include <cstdio>
#include <cstdlib>
#include <iostream>
#include <memory>
#include <thread>

#include "commands.hpp"
#include "polewright/requirements/measured_parse.hpp"
#include "polewright/outputs/sweep_store.hpp"
#include "polewright/requirements/spec_parse.hpp"
#include "polewright/requirements/sweep_parse.hpp"
#include "sweep_progress.hpp"

namespace pw::cli {

namespace {

std::atomic<bool> g_stop{false};

// The first signal stops the run after cancelling the points in flight; a second one ends the
// process at once (the points file holds whole lines only; --resume cuts a torn one).
extern "C" void on_stop_signal(int) {
  if (g_stop.exchange(true)) _exit(kExitStopped);
}

// Seconds the points in flight get to wind down after the stop signal before the process exits
// without them (a point stuck inside one long evaluation).
constexpr double kStopGraceSeconds = 10.0;

constexpr long long kMaxShards = 1000000000LL;  // far above any job array, far below int's range

long long env_integer(const char* name, bool* present) {
  const char* v = std::getenv(name);
  *present = v && *v;
  if (!*present) return 0;
  long long x = 0;
  if (!parse_whole(v, -kMaxShards, kMaxShards, &x))
    throw SpecError(name, std::string("is \"") + v + "\": not a whole number within " + std::to_string(-kMaxShards) + ".." +
                              std::to_string(kMaxShards));
  return x;
}

// --shard K/N, or the Slurm job-array variables, or the whole sweep.
Shard resolve_shard(const std::string& text) {
  Shard s;
  if (!text.empty()) {
    const size_t slash = text.find('/');
    long long k = 0, n = 0;
    if (slash == std::string::npos || !parse_whole(text.substr(0, slash), 1, kMaxShards, &k) ||
        !parse_whole(text.substr(slash + 1), 1, kMaxShards, &n) || k > n)
      throw SpecError("--shard", "is \"" + text + "\": expected K/N with 1 <= K <= N <= " + std::to_string(kMaxShards));
    return {static_cast<int>(k), static_cast<int>(n)};
  }
  bool has_id = false, has_count = false, has_min = false, has_max = false;
  const long long id = env_integer("SLURM_ARRAY_TASK_ID", &has_id);
  if (!has_id) return s;
  const long long count = env_integer("SLURM_ARRAY_TASK_COUNT", &has_count);
  const long long lo = env_integer("SLURM_ARRAY_TASK_MIN", &has_min);
  const long long hi = env_integer("SLURM_ARRAY_TASK_MAX", &has_max);
  if (!has_min && !has_count) throw SpecError("SLURM_ARRAY_TASK_MIN", "is missing next to SLURM_ARRAY_TASK_ID");
  const long long base = has_min ? lo : 0;
  const long long n = has_count ? count : (has_max ? hi - base + 1 : 0);
  if (n < 1) throw SpecError("SLURM_ARRAY_TASK_COUNT", "is missing or not positive next to SLURM_ARRAY_TASK_ID");
  if (n > kMaxShards) throw SpecError("SLURM_ARRAY_TASK_COUNT", "makes more than " + std::to_string(kMaxShards) + " shards");
  const long long k = id - base + 1;
  if (k < 1 || k > n) throw SpecError("SLURM_ARRAY_TASK_ID", "is outside the job array's range");
  return {static_cast<int>(k), static_cast<int>(n)};
}

}  // namespace

void register_sweep(CLI::App& app) {
  auto* cmd = app.add_subcommand("sweep", "Run a job at every point of a design-space sweep (resumable, shardable)");
  struct Args {
    std::string file, out, shard;
    int threads = 0;
    bool resume = false, quiet = false;
  };
  auto a = std::make_shared<Args>();
  cmd->add_option("SWEEP", a->file, "sweep file (JSON)")->required();
  cmd->add_option("--out", a->out, "output directory (sweep.json, points.jsonl, summary.csv)")->required();
  cmd->add_option("--threads", a->threads, "worker threads, 0 = all cores; results do not depend on it")->check(whole_range(0, 1024));
  cmd->add_option("--shard", a->shard, "run the K-th of N disjoint slices (K/N); default: Slurm job-array variables, else all");
  cmd->add_flag("--resume", a->resume, "continue a sweep that was stopped or killed (no point lost or repeated)");
  cmd->add_flag("--quiet", a->quiet, "no progress on stderr");
  cmd->callback([a] {
    select([a] {
      return guarded(a->file, [&] {
        const SweepFile f = parse_sweep(read_sweep_file(a->file));
        const Shard shard = resolve_shard(a->shard);
        SweepStore store = naming_options({{"dir", "--out"}, {"resume", "--resume"}},
                                          [&] { return SweepStore(a->out, f, shard, a->resume); });
        for (const std::string& w : f.warnings) std::fprintf(stderr, "polewright: warning: %s: %s\n", a->file.c_str(), w.c_str());
        for (const std::string& r : store.repairs()) std::fprintf(stderr, "polewright: %s\n", r.c_str());
        SweepRunOptions o;
        o.threads = a->threads;
        long long mine = 0;
        for (long long i = shard.k - 1; i < f.point_count(); i += shard.n, ++mine)
          if (!store.done(i)) o.todo.push_back(i);
        o.stop = &g_stop;
        std::signal(SIGINT, on_stop_signal);
        std::signal(SIGTERM, on_stop_signal);
        // After the stop signal the points in flight are cancelled; one stuck inside a single long
        // evaluation cannot be, so the process leaves without it once the grace period is over.
        std::atomic<bool> finished{false};
        std::thread grace([&] {
          while (!finished.load() && !g_stop.load()) std::this_thread::sleep_for(std::chrono::milliseconds(20));
          for (double t = 0.0; !finished.load() && t < kStopGraceSeconds; t += 0.02)
            std::this_thread::sleep_for(std::chrono::milliseconds(20));
          if (finished.load()) return;
          std::fprintf(stderr, "polewright: sweep stopped by a signal; a point still running after %g s was left "
                               "(no summary.csv written); continue with --resume\n", kStopGraceSeconds);
          _exit(kExitStopped);
        });
        struct Join {
          std::atomic<bool>& finished;
          std::thread& t;
          ~Join() {
            finished = true;
            t.join();
          }
        } join{finished, grace};
        SweepProgress progress(mine, mine - static_cast<long long>(o.todo.size()), a->quiet);
        const SweepRunSummary s = run_sweep(f, o, [&](const SweepPointResult& r) {
          store.append(r);
          progress.point_done(r.status == PointStatus::Met);
        });
        store.finish();
        progress.finish();
        if (s.time_limited > 0)
          std::fprintf(stderr, "polewright: %lld point(s) stopped by the per-point time limit of %g s (recorded as bad_point)\n",
                       s.time_limited, f.point_seconds);
        if (s.stopped) {
          std::fprintf(stderr, "polewright: sweep stopped by a signal after %lld point(s); continue with --resume\n", s.ran);
          return kExitStopped;
        }
        return kExitMet;
      });
    });
  });

  auto* merge = app.add_subcommand("merge", "Merge sweep shard directories into one summary.csv-format file");
  struct MergeArgs {
    std::vector<std::string> dirs;
    std::string out;
  };
  auto m = std::make_shared<MergeArgs>();
  merge->add_option("DIR", m->dirs, "sweep output directories")->required();
  merge->add_option("-o,--output", m->out, "summary file to write (atomically)")->required();
  merge->callback([m] {
    select([m] {
      return guarded(m->dirs.front(), [&] {
        const MergeResult r = naming_options({{"dirs", "DIR"}}, [&] { return merge_sweep_dirs(m->dirs); });
        for (const std::string& d : r.dropped) std::fprintf(stderr, "polewright: merge: %s\n", d.c_str());
        emit(m->out, r.csv);
        if (!r.missing.empty()) {
          std::string list;
          for (size_t i = 0; i < r.missing.size() && i < 10; ++i) list += (i ? ", " : "") + std::to_string(r.missing[i]);
          if (r.missing.size() > 10) list += ", ...";
          std::fprintf(stderr, "polewright: merge: %zu of %lld point(s) missing: %s\n", r.missing.size(), r.expected,
                       list.c_str());
          return kExitNotMet;
        }
        return kExitMet;
      });
    });
  });
}

}  // namespace pw::cli
