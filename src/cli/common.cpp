#include <cstdio>
#include <iostream>

#include "commands.hpp"
#include "outputs/atomic_file.hpp"
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
  try {
    write_file_atomically(path, content);
  } catch (const std::runtime_error& e) {
    // A missing folder, a read-only place, a full disk: the output named on the command line
    // cannot be written. That is the user's to fix (exit 2), not a fault of the program.
    throw SpecError(path, e.what());
  }
}

}  // namespace pw::cli
