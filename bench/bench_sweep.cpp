// Sweep benchmark: points per second of a design sweep over the joint-inertia demo (a Latin
// hypercube of N points) on 1 and 2 threads, and the peak resident memory of a whole sweep run
// (points written to a temporary directory as `polewright sweep` does) for N and 10 N points.
// Each run is a child process, so its peak RSS (getrusage of the child) is its own.
#include <sys/resource.h>
#include <sys/wait.h>
#include <unistd.h>

#include <chrono>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <filesystem>
#include <string>

#include "polewright/jobs/sweep.hpp"
#include "polewright/outputs/sweep_store.hpp"
#include "polewright/requirements/spec_parse.hpp"

using namespace pw;

namespace {

struct RunFigures {
  double seconds = 0.0;
  long peak_rss_kb = 0;
  long long met = 0;
};

// Runs the sweep in a child process; the child writes its time and count through a pipe.
RunFigures run_child(const nlohmann::json& doc, int threads) {
  int fd[2];
  if (pipe(fd) != 0) return {};
  const pid_t pid = fork();
  if (pid == 0) {
    close(fd[0]);
    const SweepFile f = parse_sweep(doc);
    char tmpl[] = "/tmp/pw-bench-sweep-XXXXXX";
    const std::string dir = mkdtemp(tmpl);
    long long met = 0;
    const auto t0 = std::chrono::steady_clock::now();
    {
      SweepStore store(dir, f, {}, false);
      SweepRunOptions o;
      o.threads = threads;
      for (long long i = 0; i < f.point_count(); ++i) o.todo.push_back(i);
      run_sweep(f, o, [&](const SweepPointResult& r) {
        store.append(r);
        met += r.status == pw::PointStatus::Met;
      });
      store.finish();
    }
    const double s = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
    std::filesystem::remove_all(dir);
    char buf[64];
    const int n = std::snprintf(buf, sizeof buf, "%.6f %lld", s, met);
    if (write(fd[1], buf, static_cast<size_t>(n)) != n) _exit(1);
    _exit(0);
  }
  close(fd[1]);
  char buf[64] = {0};
  const ssize_t n = read(fd[0], buf, sizeof buf - 1);
  close(fd[0]);
  int status = 0;
  rusage ru{};
  wait4(pid, &status, 0, &ru);
  RunFigures r;
  if (n > 0) std::sscanf(buf, "%lf %lld", &r.seconds, &r.met);
  r.peak_rss_kb = ru.ru_maxrss;
  return r;
}

}  // namespace

int bench_sweep(int argc, char** argv) {
  long long points = 200;
  for (int i = 1; i + 1 < argc; ++i)
    if (!std::strcmp(argv[i], "--points")) points = std::atoll(argv[i + 1]);
  nlohmann::json doc = read_json_file(std::string(POLEWRIGHT_SOURCE_DIR) + "/specs/sweeps/joint-inertia.json");
  doc["sample"] = {{"method", "latin"}, {"count", points}};
  std::printf("sweep benchmark: joint-inertia demo, design job, Latin hypercube\n");
  std::printf("%-8s %-8s %-10s %-12s %-14s %-8s\n", "points", "threads", "seconds", "points/s", "peak RSS MiB", "met");
  double rate1 = 0.0;
  for (int threads : {1, 2}) {
    const RunFigures r = run_child(doc, threads);
    const double rate = r.seconds > 0 ? points / r.seconds : 0.0;
    if (threads == 1) rate1 = rate;
    std::printf("%-8lld %-8d %-10.2f %-12.2f %-14.1f %-8lld\n", points, threads, r.seconds, rate, r.peak_rss_kb / 1024.0, r.met);
    if (threads == 2 && rate1 > 0) std::printf("speed-up on 2 threads: %.2fx\n", rate / rate1);
  }
  doc["sample"]["count"] = points * 10;
  const RunFigures big = run_child(doc, 2);
  std::printf("%-8lld %-8d %-10.2f %-12.2f %-14.1f %-8lld\n", points * 10, 2, big.seconds,
              big.seconds > 0 ? points * 10 / big.seconds : 0.0, big.peak_rss_kb / 1024.0, big.met);
  return 0;
}
