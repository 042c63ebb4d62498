#pragma once
// The command line. main.cpp builds one CLI11 app with the global options and asks each command
// to register itself; a command lives in its own cmd_NAME.cpp, declares its add_NAME_command()
// here, and is added to main.cpp by one line. This room alone parses arguments, prints and
// chooses exit codes.
//
// A command's callback runs after parsing and stores its exit code in Invocation::exit_code.
// Exceptions leave the callback for main(), which maps them: CaseError and io::IoError to 2;
// a command that failed numerically returns kExitNumerical itself.

#include <algorithm>
#include <filesystem>
#include <ostream>
#include <string>
#include <string_view>
#include <thread>

namespace CLI {
class App;
}
namespace plateau::report {
struct ReportResult;
}

namespace plateau::cli {

// Exit codes (ARCHITECTURE.md).
inline constexpr int kExitOk = 0;
inline constexpr int kExitFailedCheck = 1;  // a regression or a failed check
inline constexpr int kExitBadInput = 2;     // case, option or file
inline constexpr int kExitNumerical = 3;    // a run that failed numerically

struct GlobalOptions {
  int threads = 0;     // --threads N; 0: one per hardware thread
  bool quiet = false;  // --quiet: no report, progress or summary; warnings and errors only
};

// The worker count a command should use.
inline int thread_count(const GlobalOptions& g) {
  if (g.threads > 0) return g.threads;
  return std::max(1, static_cast<int>(std::thread::hardware_concurrency()));
}

// What main() and the commands share: the parsed global options, and the exit code that the
// command which ran sets.
struct Invocation {
  GlobalOptions global;
  int exit_code = kExitOk;
};

inline void print_error(std::ostream& err, std::string_view message) {
  err << "plateau: error: " << message << '\n';
}
inline void print_warning(std::ostream& err, std::string_view message) {
  err << "plateau: warning: " << message << '\n';
}

// ---- commands (one line each in main.cpp) ---------------------------------------------------

// plateau check CASE [--json FILE]          (cmd_check.cpp)
void add_check_command(CLI::App& app, Invocation& invocation);
// plateau run CASE -c NAME ...               (cmd_run.cpp)
void add_run_command(CLI::App& app, Invocation& invocation);
// plateau closures                          (cmd_closures.cpp)
void add_closures_command(CLI::App& app, Invocation& invocation);
// plateau truth CASE                        (cmd_truth.cpp)
void add_truth_command(CLI::App& app, Invocation& invocation);
// plateau score CASE -c NAME, plateau compare CASE   (cmd_score.cpp)
void add_score_command(CLI::App& app, Invocation& invocation);
void add_compare_command(CLI::App& app, Invocation& invocation);
// plateau report DIR [--out FILE]           (cmd_report.cpp)
void add_report_command(CLI::App& app, Invocation& invocation);
// What report::write_report() did, for `report` and the --report option of other commands:
// its warnings on err, and unless quiet the page and the figures' folder on out. Returns 0.
int print_report_summary(const report::ReportResult& result, const GlobalOptions& global,
                         std::ostream& out, std::ostream& err);
// plateau tune CASE -c NAME                 (cmd_tune.cpp)
void add_tune_command(CLI::App& app, Invocation& invocation);
// plateau regress SUITE                     (cmd_regress.cpp)
void add_regress_command(CLI::App& app, Invocation& invocation);

struct CheckOptions {
  std::filesystem::path case_path;
  std::filesystem::path json_path;  // empty: no JSON
};
// The body of `check`, callable without CLI11. Returns 0, or 1 when dt breaks a limit badly;
// throws CaseError for a bad case and io::IoError when the JSON cannot be written
// (atomically, io/atomic_file.hpp).
int run_check(const CheckOptions& options, const GlobalOptions& global, std::ostream& out,
              std::ostream& err);

}  // namespace plateau::cli
