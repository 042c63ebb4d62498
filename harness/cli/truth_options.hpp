#pragma once
// What truth, score and compare share: the cache options, the truth with its messages, and
// the interrupt flag that turns Ctrl-C into a checkpoint.

#include <atomic>
#include <filesystem>
#include <functional>
#include <string>

#include "harness/case/case.hpp"
#include "harness/cli/cli.hpp"
#include "harness/truth/truth.hpp"

namespace CLI {
class App;
}

namespace plateau {
class Ranks;
}

namespace plateau::cli {

struct CacheChoice {
  std::filesystem::path cache;  // --cache DIR
  bool force = false;           // --force
};

// Adds --cache and --force to a command.
void add_cache_options(CLI::App& cmd, CacheChoice& choice);

// Ctrl-C and SIGTERM set this; runs checkpoint and stop (exit code 130).
const std::atomic<bool>& stop_flag();
void install_stop_handlers();
inline constexpr int kExitInterrupted = 130;

// The truth of the case from the cache (or computed now), with progress and notices on stderr.
TruthResult case_truth(const Case& c, const CacheChoice& choice, const GlobalOptions& global);

// The same for a command whose ranks all need the truth (compare, tune, regress under
// mpirun): rank 0 obtains it first (computing it, or honouring --force), then the other ranks
// read the cache entry it wrote.
TruthResult shared_case_truth(const Ranks& ranks, const Case& c, const CacheChoice& choice,
                              const GlobalOptions& global);

// Runs `obtain`, which gets a command's truths. A truth run that fails numerically or is
// interrupted is reported on stderr (with `again`, the command that continues, when not
// empty) and its exit code returned (kExitNumerical, kExitInterrupted); 0 once they are there.
int obtain_truths(const std::function<void()>& obtain, const std::string& again);

// One line about where the truth came from.
std::string truth_summary(const TruthResult& t);

}  // namespace plateau::cli
