// polewright command line: a thin shell over the library.
#include <CLI/CLI.hpp>

#include <cstdio>
#include <iostream>

#include "commands.hpp"

int main(int argc, char** argv) {
  CLI::App app{"polewright: requirements in, verified compensators out"};
  app.require_subcommand(1);
  app.set_version_flag("--version", pw::kToolVersion);
  pw::cli::register_validate(app);
  pw::cli::register_check(app);
  pw::cli::register_design(app);
  pw::cli::register_retune(app);
  pw::cli::register_sweep(app);
  pw::cli::register_report(app);
  pw::cli::register_export(app);
  try {
    app.parse(argc, argv);
  } catch (const CLI::CallForHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForAllHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForVersion& e) {
    return app.exit(e);
  } catch (const CLI::ParseError& e) {
    std::fprintf(stderr, "polewright: usage error: %s (see polewright --help)\n", e.what());
    return pw::cli::kExitBadInput;
  }
  return pw::cli::run_selected();
}
