#include "sweep_progress.hpp"

#include <unistd.h>

#include <cstdio>

namespace pw::cli {

namespace {
std::string duration_text(double s) {
  char buf[32];
  if (s < 120) std::snprintf(buf, sizeof buf, "%.0f s", s);
  else if (s < 7200) std::snprintf(buf, sizeof buf, "%.0f min", s / 60);
  else std::snprintf(buf, sizeof buf, "%.1f h", s / 3600);
  return buf;
}
}  // namespace

SweepProgress::SweepProgress(long long total, long long already_done, bool quiet)
    : total_(total), done_(already_done), started_with_(already_done), quiet_(quiet), terminal_(isatty(2) == 1),
      start_(std::chrono::steady_clock::now()), last_(start_) {}

void SweepProgress::point_done(bool feasible) {
  ++done_;
  if (feasible) ++feasible_;
  const auto now = std::chrono::steady_clock::now();
  const double since = std::chrono::duration<double>(now - last_).count();
  if (quiet_ || since < (terminal_ ? 0.2 : 5.0)) return;
  last_ = now;
  print(false);
}

void SweepProgress::finish() {
  if (!quiet_) print(true);
}

void SweepProgress::print(bool final_line) {
  const double elapsed = std::chrono::duration<double>(std::chrono::steady_clock::now() - start_).count();
  const long long ran = done_ - started_with_;
  const double rate = elapsed > 0 ? ran / elapsed : 0.0;
  const double left = rate > 0 ? (total_ - done_) / rate : 0.0;
  char line[256];
  const double frac = total_ > 0 ? static_cast<double>(done_) / total_ : 1.0;
  if (terminal_) {
    const int width = 30, filled = static_cast<int>(frac * width);
    std::string bar(static_cast<size_t>(filled), '#');
    bar += std::string(static_cast<size_t>(width - filled), '.');
    std::snprintf(line, sizeof line, "\r[%s] %lld/%lld points, %lld met this run, %.2f points/s, %s left   ", bar.c_str(),
                  done_, total_, feasible_, rate, duration_text(left).c_str());
    std::fputs(line, stderr);
    if (final_line) std::fputs("\n", stderr);
  } else {
    std::snprintf(line, sizeof line, "sweep: %lld/%lld points (%.0f %%), %lld met this run, %.2f points/s, %s left\n",
                  done_, total_, 100.0 * frac, feasible_, rate, duration_text(left).c_str());
    std::fputs(line, stderr);
  }
  std::fflush(stderr);
}

}  // namespace pw::cli
