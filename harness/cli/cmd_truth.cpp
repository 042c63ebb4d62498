// plateau truth CASE: run or reuse the cached eddy-resolving truth of a case
// (harness/truth/truth.hpp). Interrupted with Ctrl-C it checkpoints into the cache entry, and
// the next `plateau truth` (or score, compare) resumes it.

#include <cmath>
#include <csignal>
#include <iomanip>
#include <iostream>
#include <memory>
#include <sstream>
#include <omp.h>

#include <CLI/CLI.hpp>

#include "harness/cli/progress.hpp"
#include "harness/cli/truth_options.hpp"
#include "harness/run/run.hpp"
#include "harness/study/dispatch.hpp"

namespace plateau::cli {
namespace {

struct TruthCommandOptions {
  std::filesystem::path case_path;
  CacheChoice cache;
};

int run_truth(const TruthCommandOptions& o, const GlobalOptions& global) {
  const Case c = load_case(o.case_path);
  install_stop_handlers();
  TruthResult t;
  try {
    t = case_truth(c, o.cache, global);
  } catch (const NumericalFailure& e) {
    print_error(std::cerr, e.what());
    std::cerr << "plateau: the last good checkpoint is kept in the cache entry\n";
    return kExitNumerical;
  } catch (const RunInterrupted& e) {
    std::cerr << "\nplateau: interrupted: " << e.what()
              << "\nplateau: continue with: plateau truth " << o.case_path.string() << '\n';
    return kExitInterrupted;
  }
  if (!global.quiet) {
    const RunRecord& r = t.data.record;
    std::cout << std::setprecision(4);
    std::cout << "truth " << c.name << " [" << t.data.truth_nx << "x" << t.data.truth_ny
              << " grid]: " << truth_summary(t) << '\n';
    std::cout << "  " << r.steps << " steps, " << r.t_end / (365.0 * 86400.0)
              << " model years; time means over " << r.mean_count << " steps after "
              << r.mean_start_s / (365.0 * 86400.0) << " years of spin-up\n";
    std::cout << "  eddy statistics  " << t.data.eddy.samples << " daily samples, "
              << t.data.eddy.snapshot_t.size() << " coarse-grained snapshots\n";
    const double window = r.t_end - r.mean_start_s;
    if (window > 0) {
      const double rho0 = c.rho0_kg_per_m3;
      std::cout << "  mean wind power  " << rho0 * r.budget_integral.wind / window << " W\n"
                << "  budget residual  " << rho0 * r.budget_residual() / window
                << " W (energy change minus the budget terms, over the window)\n";
    }
    std::cout << "  entry            " << t.entry.string() << '\n'
              << "  wrote            " << (t.entry / "truth.nc").string() << " (coarse grid), "
              << (t.entry / "truth-grid.nc").string() << " (truth grid)\n";
  }
  return kExitOk;
}

}  // namespace

namespace {
std::atomic<bool> g_stop_shared{false};
extern "C" void on_shared_stop(int /*signal*/) { g_stop_shared.store(true); }
}  // namespace

const std::atomic<bool>& stop_flag() { return g_stop_shared; }
void install_stop_handlers() {
  std::signal(SIGINT, on_shared_stop);
  std::signal(SIGTERM, on_shared_stop);
}

void add_cache_options(CLI::App& cmd, CacheChoice& choice) {
  cmd.add_option("--cache", choice.cache,
                 "truth cache folder (default: $PLATEAU_CACHE_DIR, else "
                 "${XDG_CACHE_HOME:-~/.cache}/plateau)");
  cmd.add_flag("--force", choice.force, "recompute the truth even when the cache holds it");
}

TruthResult case_truth(const Case& c, const CacheChoice& choice, const GlobalOptions& global) {
  TruthOptions to;
  to.cache_dir = truth_cache_dir(choice.cache);
  to.force = choice.force;
  to.stop_flag = &stop_flag();
  to.progress = progress_printer("truth " + c.name, global.quiet);
  to.notice = [](const std::string& m) { std::cerr << "plateau: " << m << '\n'; };
  omp_set_num_threads(thread_count(global));
  return obtain_truth(c, to);
}

TruthResult shared_case_truth(const Ranks& ranks, const Case& c, const CacheChoice& choice,
                              const GlobalOptions& global) {
  return root_first(ranks, [&] {
    CacheChoice rank_choice = choice;
    rank_choice.force = choice.force && ranks.is_root();
    return case_truth(c, rank_choice, global);
  });
}

int obtain_truths(const std::function<void()>& obtain, const std::string& again) {
  try {
    obtain();
  } catch (const NumericalFailure& e) {
    print_error(std::cerr, std::string("the truth run failed: ") + e.what());
    return kExitNumerical;
  } catch (const RunInterrupted& e) {
    std::cerr << "\nplateau: interrupted: " << e.what() << '\n';
    if (!again.empty()) std::cerr << "plateau: continue with: " << again << '\n';
    return kExitInterrupted;
  }
  return 0;
}

std::string truth_summary(const TruthResult& t) {
  std::ostringstream s;
  s << std::setprecision(4);
  if (t.reused) {
    s << "reused from the cache (computed in " << t.data.wall_s << " s)";
  } else {
    s << (t.resumed ? "resumed and finished" : "computed") << " in " << t.data.wall_s << " s";
    if (!t.rejected.empty()) s << " (the cached entry was rejected: " << t.rejected << ")";
  }
  return s.str();
}

void add_truth_command(CLI::App& app, Invocation& invocation) {
  auto opts = std::make_shared<TruthCommandOptions>();
  CLI::App* cmd =
      app.add_subcommand("truth", "run or reuse the cached eddy-resolving truth of a case");
  cmd->add_option("case", opts->case_path, "case file (TOML)")
      ->required()
      ->check(CLI::ExistingFile);
  add_cache_options(*cmd, opts->cache);
  cmd->callback(
      [opts, &invocation]() { invocation.exit_code = run_truth(*opts, invocation.global); });
}

}  // namespace plateau::cli
