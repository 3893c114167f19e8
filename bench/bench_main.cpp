// polewright-bench: speed figures printed, never asserted (targets belong in the closing notes).
#include <cstdio>
#include <cstring>
#include <string>

int bench_evaluate(int argc, char** argv);
int bench_design(int argc, char** argv);
int bench_sweep(int argc, char** argv);
int bench_planted(int argc, char** argv);
int bench_saturated(int argc, char** argv);

int main(int argc, char** argv) {
  if (argc < 2 || std::strcmp(argv[1], "--help") == 0) {
    std::printf("usage: polewright-bench evaluate [--seconds S | --count N] [--seed N] [--full] [--disturbance] [--actuator F [--actuator-load D]] [--sample-time T [--between]]\n       polewright-bench design [SPEC...]\n       polewright-bench sweep [--points N]\n       polewright-bench planted [--count N] [--seed S] [--slack F] [--threads T] [--budget-s B] [--write-specs DIR] [--verbose]\n       polewright-bench saturated [--seconds S] [--fraction F] [--rate R]\n");
    return argc < 2 ? 2 : 0;
  }
  const std::string what = argv[1];
  if (what == "evaluate") return bench_evaluate(argc - 1, argv + 1);
  if (what == "design") return bench_design(argc - 1, argv + 1);
  if (what == "sweep") return bench_sweep(argc - 1, argv + 1);
  if (what == "planted") return bench_planted(argc - 1, argv + 1);
  if (what == "saturated") return bench_saturated(argc - 1, argv + 1);
  std::fprintf(stderr, "polewright-bench: unknown benchmark '%s'\n", what.c_str());
  return 2;
}
