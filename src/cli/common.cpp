#include <cstdio>
#include <iostream>

#include "commands.hpp"
#include "polewright/outputs/atomic_file.hpp"
#include "polewright/requirements/spec.hpp"

namespace pw::cli {

namespace {
std::function<int()>& selected() {
  static std::function<int()> f;
  return f;
}
}  // namespace

void select(std::function<int()> action) { selected() = std::move(action); }

int run_selected() { return selected() ? selected()() : kExitBadInput; }

int guarded(const std::string& file, const std::function<int()>& body) {
  try {
    return body();
  } catch (const SpecError& e) {
    std::fprintf(stderr, "polewright: %s: %s\n", file.c_str(), e.what());
    return kExitBadInput;
  } catch (const std::exception& e) {
    std::fprintf(stderr, "polewright: internal error: %s\n", e.what());
    return kExitInternal;
  }
}

void emit(const std::string& path, const std::string& content) {
  if (path == "-") {
    std::cout << content;
    std::cout.flush();
    return;
  }
  write_file_atomically(path, content);
}

}  // namespace pw::cli
