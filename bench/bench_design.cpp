// Design benchmark: per problem, the time to the first verified design, the time to the full ranked
// list, the evaluations spent and whether it met, on 1 and 2 threads.
#include <dirent.h>

#include <algorithm>
#include <chrono>
#include <cstdio>
#include <string>
#include <vector>

#include "polewright/jobs/design.hpp"
#include "polewright/requirements/spec_parse.hpp"

using namespace pw;

namespace {

std::vector<std::string> json_files(const std::string& dir) {
  std::vector<std::string> out;
  if (DIR* d = opendir(dir.c_str())) {
    while (dirent* e = readdir(d)) {
      const std::string n = e->d_name;
      if (n.size() > 5 && n.substr(n.size() - 5) == ".json" && n.find("schema") == std::string::npos) out.push_back(dir + "/" + n);
    }
    closedir(d);
  }
  std::sort(out.begin(), out.end());
  return out;
}

}  // namespace

int bench_design(int argc, char** argv) {
  std::vector<std::string> files;
  for (int i = 1; i < argc; ++i) files.push_back(argv[i]);
  if (files.empty()) {
    for (const char* dir : {"/specs", "/tests/reference/design_problems"})
      for (const std::string& f : json_files(std::string(POLEWRIGHT_SOURCE_DIR) + dir)) files.push_back(f);
  }
  std::printf("%-44s %5s %6s %8s %9s %9s %9s %8s %5s\n", "problem", "order", "plants", "stages", "first 1t", "list 1t",
              "list 2t", "speedup", "met");
  double total1 = 0.0, total2 = 0.0;
  int met = 0;
  for (const std::string& f : files) {
    const Spec spec = parse_spec(read_json_file(f));
    DesignOptions o = DesignOptions::FromSpec(spec);
    double list[2] = {0, 0};
    DesignReport rep;
    for (int t = 1; t <= 2; ++t) {
      o.threads = t;
      const auto t0 = std::chrono::steady_clock::now();
      rep = run_design(spec, o);
      list[t - 1] = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
      if (t == 1) {
        const double first = rep.summary.first_verified_s.value_or(-1.0);
        std::string name = f.substr(f.find_last_of('/') + 1);
        const int max_stages = spec.stages.lead + spec.stages.lag + spec.stages.notch + (spec.stages.integrator != IntegratorChoice::Off);
        std::printf("%-44s %5d %6zu %8d %8.3fs %8.3fs", name.c_str(), spec.plants.front().tf.order(), spec.plants.size(),
                    max_stages, first, list[0]);
      }
    }
    met += rep.met();
    total1 += list[0];
    total2 += list[1];
    std::printf(" %8.3fs %7.2fx %5s   (%lld evaluations)\n", list[1], list[0] / list[1], rep.met() ? "yes" : "no",
                rep.summary.evaluations);
  }
  std::printf("problems: %zu, met %d; total %.3f s on 1 thread, %.3f s on 2 threads (%.2fx)\n", files.size(), met, total1,
              total2, total1 / total2);
  return 0;
}
