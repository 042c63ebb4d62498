// plateau: runs eddy closures in a coarse layered QG basin and scores them against an
// eddy-resolving truth. This file only assembles the commands (cli.hpp) and maps what they
// report to exit codes: 0 ok, 1 failed check, 2 bad input, 3 numerical failure.

// GCC 12 at -O2 reports a "potential null pointer dereference" inside CLI11's own split() once
// it is inlined here (a false positive in a third-party header); it is silenced before any
// include, since the diagnostic is located in the standard library's string header.
#pragma GCC diagnostic ignored "-Wnull-dereference"

#include <unistd.h>

#include <cstdlib>
#include <exception>
#include <iostream>
#include <string>

#include <CLI/CLI.hpp>

#include "harness/case/case.hpp"
#include "harness/cli/cli.hpp"
#include "harness/io/error.hpp"
#include "plateau/version.hpp"

namespace {

int run_cli(int argc, char** argv) {
  using namespace plateau::cli;
  Invocation invocation;

  CLI::App app{
      "plateau: eddy closures in a coarse layered QG basin, scored against an "
      "eddy-resolving truth",
      "plateau"};
  app.set_version_flag("--version", std::string("plateau ") + plateau::kProjectVersion +
                                        " (model " + plateau::kModelHash + ")");
  app.add_option("--threads", invocation.global.threads,
                 "worker threads (default: one per hardware thread)")
      ->check(CLI::Range(1, 4096));
  app.add_flag("-q,--quiet", invocation.global.quiet,
               "no report, progress or summary: warnings and errors only");
  app.require_subcommand(1);
  app.fallthrough();  // global options may also follow the command

  // One line per command.
  add_check_command(app, invocation);
  add_run_command(app, invocation);
  add_closures_command(app, invocation);
  add_truth_command(app, invocation);
  add_score_command(app, invocation);
  add_compare_command(app, invocation);
  add_report_command(app, invocation);
  add_tune_command(app, invocation);
  add_regress_command(app, invocation);

  try {
    app.parse(argc, argv);
  } catch (const CLI::ParseError& e) {
    if (e.get_exit_code() == static_cast<int>(CLI::ExitCodes::Success)) {
      return app.exit(e);  // --help, --version
    }
    print_error(std::cerr, e.what());
    std::cerr << "Run 'plateau --help' for the commands and options.\n";
    return kExitBadInput;
  } catch (const plateau::CaseError& e) {
    print_error(std::cerr, e.what());
    return kExitBadInput;
  } catch (const plateau::io::IoError& e) {
    print_error(std::cerr, e.what());
    return kExitBadInput;
  } catch (const std::exception& e) {
    print_error(std::cerr, e.what());
    return kExitBadInput;
  }
  return invocation.exit_code;
}

}  // namespace

// OpenMP threads that spin while they wait turn every barrier into a stall when the machine is
// busy (tune and compare run several models at once; CI shares two cores): measured 15x slower
// under load. libgomp reads OMP_WAIT_POLICY once, before main, so when the user has not chosen
// one we set it to passive and start the program again.
void ensure_passive_openmp_waits(char** argv) {
  if (std::getenv("OMP_WAIT_POLICY") != nullptr) return;
  if (::setenv("OMP_WAIT_POLICY", "passive", 1) != 0) return;
  ::execv("/proc/self/exe", argv);  // returns only on failure: then go on as we are
}

int main(int argc, char** argv) {
  ensure_passive_openmp_waits(argv);
  // Building the app can throw too (a command registering a clashing option name).
  try {
    return run_cli(argc, argv);
  } catch (const std::exception& e) {
    plateau::cli::print_error(std::cerr, e.what());
  } catch (...) {
    plateau::cli::print_error(std::cerr, "unknown failure");
  }
  return plateau::cli::kExitBadInput;
}
