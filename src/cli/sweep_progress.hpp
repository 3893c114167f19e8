// Progress of a sweep on stderr: a bar on a terminal, a line every few seconds in a log.
#pragma once

#include <chrono>
#include <string>

namespace pw::cli {

class SweepProgress {
 public:
  SweepProgress(long long total, long long already_done, bool quiet);
  void point_done(bool feasible);
  void finish();

 private:
  void print(bool final_line);
  long long total_, done_, feasible_ = 0, started_with_;
  bool quiet_, terminal_;
  std::chrono::steady_clock::time_point start_, last_;
};

}  // namespace pw::cli
