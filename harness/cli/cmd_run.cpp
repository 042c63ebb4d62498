// plateau run CASE: one coarse run (or, with --grid truth, a run on the truth grid) written as
// a NetCDF-4 file. Checkpoints go to OUT/checkpoints/; --resume continues from there.
//
// -c NAME picks the closure (built-in, or from a --plugin FILE); its parameters are the
// declared defaults, then the case's [closure.NAME] table, then --set NAME.KEY=VALUE (or
// closure.KEY=VALUE), each checked against the declaration. The closure acts as its own
// fractional step after each dynamics step (harness/closure_host/); the time means of its
// K map, its other diagnostics, its prognostic fields and its PV tendency go into the NetCDF
// beside the flow fields.

#include <algorithm>
#include <atomic>
#include <chrono>
#include <cmath>
#include <csignal>
#include <cstdint>
#include <filesystem>
#include <iomanip>
#include <iostream>
#include <sstream>
#include <string>
#include <string_view>
#include <vector>
#include <omp.h>

#include <CLI/CLI.hpp>

#include "harness/case/case.hpp"
#include "harness/cli/cli.hpp"
#include "harness/cli/progress.hpp"
#include "harness/closure_host/host.hpp"
#include "harness/closure_host/parameters.hpp"
#include "harness/closure_host/plugin.hpp"
#include "harness/closure_host/registry.hpp"
#include "harness/io/atomic_file.hpp"
#include "harness/io/error.hpp"
#include "harness/io/hash.hpp"
#include "harness/run/run.hpp"
#include "harness/run/run_output.hpp"
#include "harness/run/setup.hpp"
#include "harness/study/evaluate.hpp"
#include "plateau/version.hpp"

namespace plateau::cli {
namespace {

std::atomic<bool> g_stop{false};
extern "C" void on_stop_signal(int /*signal*/) { g_stop.store(true); }

struct RunCommandOptions {
  std::filesystem::path case_path;
  std::string closure = "none";
  std::string grid = "coarse";
  std::filesystem::path out;
  bool resume = false;
  std::vector<std::string> sets;               // --set NAME.KEY=VALUE
  std::vector<std::filesystem::path> plugins;  // --plugin FILE
};

RunSchedule schedule_of(const Case& c) {
  RunSchedule s;
  s.length_s = c.run.length_s;
  s.spinup_s = c.run.spinup_s;
  s.snapshot_interval_s = c.run.snapshot_interval_s;
  s.series_interval_s = c.run.series_interval_s;
  s.checkpoint_interval_s = c.run.checkpoint_interval_s;
  s.cfl_limit = c.run.cfl_limit;
  return s;
}

int run_run(const RunCommandOptions& o, const GlobalOptions& global) {
  std::string plugin_bytes;
  for (const auto& p : o.plugins) {
    (void)load_closure_plugin(p);
    plugin_bytes += io::sha256_hex(io::read_file_bytes(p)) + "\n";
  }
  const Case c = load_case(o.case_path);
  const closure::Info* info = find_registered_closure(o.closure);
  if (info == nullptr) {
    throw CaseError("-c " + o.closure + ": closure '" + o.closure +
                    "' is not known; allowed: " + registered_closure_names() +
                    " (or an external closure loaded with --plugin FILE)");
  }
  std::vector<ParamOverride> overrides;
  for (const std::string& text : o.sets) overrides.push_back(parse_override(text));
  const closure::Params params =
      resolve_params(*info, c.find_closure(o.closure), o.case_path, overrides);
  const std::string param_text = canonical_text(*info, params);
  const GridRole role = o.grid == "truth" ? GridRole::truth : GridRole::coarse;
  const std::filesystem::path out =
      o.out.empty() ? std::filesystem::path("results") / (c.name + "-" + o.closure) : o.out;
  const std::string stem = std::string(role == GridRole::truth ? "truth-run-" : "run-") + o.closure;
  const std::filesystem::path nc = out / (stem + ".nc");
  const std::filesystem::path ckpt = out / "checkpoints" / (stem + ".ckpt");

  omp_set_num_threads(thread_count(global));
  Model model(make_grid(c, role), make_model_params(c, role));
  HostOptions host_options;
  host_options.means_after_step = std::llround(c.run.spinup_s / model.params().dt);
  host_options.means_every =
      std::max<std::int64_t>(1, std::llround(c.run.series_interval_s / model.params().dt));
  ClosureHost host(model, make_closure(*info, params, make_setup(model)), host_options);

  // The checkpoint belongs to this case file's exact text, grid, closure with its parameters
  // (and plug-in library), and solver version.
  const std::string key =
      io::sha256_hex(io::read_file_bytes(o.case_path) + "\n" + role_name(role) + "\n" + o.closure +
                     "\n" + param_text + "\n" + plugin_bytes + kProjectVersion + "\n" + kModelHash);
  RunOptions ro;
  ro.hook = &host;
  ro.checkpoint = ckpt;
  ro.checkpoint_key = key;
  ro.resume = o.resume;
  ro.stop_flag = &g_stop;
  ro.progress =
      progress_printer(std::string("run ") + c.name + " [" + role_name(role) + "]", global.quiet);
  if (o.resume && !std::filesystem::exists(ckpt) && !global.quiet) {
    print_warning(std::cerr, "no checkpoint at " + ckpt.string() + ": starting from rest");
  }
  std::signal(SIGINT, on_stop_signal);
  std::signal(SIGTERM, on_stop_signal);

  const auto t0 = std::chrono::steady_clock::now();
  RunRecord rec;
  try {
    rec = run_model(model, schedule_of(c), ro);
  } catch (const NumericalFailure& e) {
    print_error(std::cerr, e.what());
    std::cerr << "plateau: the last good checkpoint is kept at " << ckpt.string() << '\n';
    return kExitNumerical;
  } catch (const RunInterrupted& e) {
    std::cerr << "\nplateau: interrupted: " << e.what() << "\nplateau: continue with: plateau run "
              << o.case_path.string() << " --resume"
              << (o.out.empty() ? "" : " --out " + o.out.string()) << '\n';
    return 130;
  }
  const double wall = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();

  std::ostringstream hist;
  hist << "plateau run " << o.case_path.string() << " -c " << o.closure << " --grid " << o.grid;
  for (const auto& p : o.plugins) hist << " --plugin " << p.string();
  for (const auto& set : o.sets) hist << " --set " << set;
  hist << " (closure parameters: " << (param_text.empty() ? "none" : param_text) << ")";
  write_run_netcdf(
      rec, model, nc,
      {"plateau " + std::string(role_name(role)) + " run of case " + c.name + " with closure " +
           o.closure,
       hist.str(), std::string("plateau ") + kProjectVersion + ", model " + kModelHash},
      closure_output(host, model));
  std::filesystem::remove(ckpt);

  if (!global.quiet) {
    const double rho0 = c.rho0_kg_per_m3;
    const double window = rec.t_end - rec.mean_start_s;
    std::cout << std::setprecision(4);
    std::cout << "run " << c.name << " [" << role_name(role) << " grid " << model.grid().nx << "x"
              << model.grid().ny << ", closure " << o.closure << "]: " << rec.steps << " steps, "
              << rec.t_end / (365.0 * 86400.0) << " model years in " << wall << " s\n";
    const auto& last = rec.series.back();
    std::cout << "  final energy       " << rho0 * last.total << " J\n";
    if (window > 0) {
      std::cout << "  mean wind power    " << rho0 * rec.budget_integral.wind / window << " W\n"
                << "  mean closure power " << rho0 * rec.closure_integral / window << " W\n"
                << "  budget residual    " << rho0 * rec.budget_residual() / window
                << " W (energy change minus the sum of the budget terms, over the window)\n";
    }
    if (!param_text.empty()) std::cout << "  closure parameters " << param_text << '\n';
    std::cout << "  closure sub-steps  at most " << host.max_substeps() << " per step\n";
    std::cout << "  wrote " << nc.string() << '\n';
  }
  return kExitOk;
}

}  // namespace

void add_run_command(CLI::App& app, Invocation& invocation) {
  auto opts = std::make_shared<RunCommandOptions>();
  CLI::App* cmd = app.add_subcommand("run", "one model run of a case, written as NetCDF");
  cmd->add_option("case", opts->case_path, "case file (TOML)")
      ->required()
      ->check(CLI::ExistingFile);
  cmd->add_option("-c,--closure", opts->closure, "closure to run with (default: none)");
  cmd->add_option("--grid", opts->grid, "which of the case's grids: coarse (default) or truth")
      ->check(CLI::IsMember({"coarse", "truth"}));
  cmd->add_option("--out", opts->out, "results folder (default: results/CASE-CLOSURE/)");
  cmd->add_flag("--resume", opts->resume, "continue from the folder's checkpoint");
  cmd->add_option("--set", opts->sets,
                  "override a closure parameter: NAME.KEY=VALUE, or closure.KEY=VALUE for the "
                  "closure chosen with -c (repeatable)");
  cmd->add_option("--plugin", opts->plugins, "load an external closure (shared library)")
      ->check(CLI::ExistingFile);
  cmd->callback(
      [opts, &invocation]() { invocation.exit_code = run_run(*opts, invocation.global); });
}

}  // namespace plateau::cli
