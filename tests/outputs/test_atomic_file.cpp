#include <catch2/catch.hpp>

#include <dirent.h>

#include <cstdio>
#include <fstream>
#include <sstream>

#include "outputs/atomic_file.hpp"

using namespace pw;

namespace {
std::string slurp(const std::string& p) {
  std::ifstream in(p);
  std::stringstream s;
  s << in.rdbuf();
  return s.str();
}
int leftovers(const std::string& dir, const std::string& prefix) {
  int n = 0;
  DIR* d = opendir(dir.c_str());
  while (dirent* e = readdir(d)) n += std::string(e->d_name).rfind(prefix + ".tmp-", 0) == 0;
  closedir(d);
  return n;
}
}  // namespace

TEST_CASE("atomic write replaces whole files and leaves no temporary behind", "[outputs][atomic_file]") {
  const std::string p = "/tmp/pw-atomic-test.json";
  write_file_atomically(p, "first");
  write_file_atomically(p, "second");
  CHECK(slurp(p) == "second");
  CHECK(leftovers("/tmp", "pw-atomic-test.json") == 0);
  std::remove(p.c_str());
}

TEST_CASE("a write into a missing folder throws and names the path", "[outputs][atomic_file]") {
  CHECK_THROWS_WITH(write_file_atomically("/nonexistent-dir/out.json", "x"), Catch::Contains("/nonexistent-dir/out.json"));
}
