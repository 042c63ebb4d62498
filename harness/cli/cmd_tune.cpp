// plateau tune CASE -c NAME: fits the closure's tunable parameters to the case's truth
// (harness/study/tune.hpp). The log goes to --out DIR (default results/CASE-NAME/) as
// tune-log.jsonl, one line per evaluation as it finishes; the same command again resumes an
// interrupted tune by replaying the log. Under mpirun the evaluations of each round are spread
// over the ranks; rank 0 alone writes and prints.

#include <algorithm>
#include <chrono>
#include <cmath>
#include <iomanip>
#include <iostream>
#include <memory>
#include <mutex>
#include <sstream>
#include <string>
#include <vector>

#include <CLI/CLI.hpp>
#include <nlohmann/json.hpp>

#include "harness/cli/truth_options.hpp"
#include "harness/closure_host/parameters.hpp"
#include "harness/closure_host/plugin.hpp"
#include "harness/io/atomic_file.hpp"
#include "harness/report/report.hpp"
#include "harness/study/dispatch.hpp"
#include "harness/study/tune.hpp"

namespace plateau::cli {
namespace {

namespace fs = std::filesystem;

struct TuneCommandOptions {
  fs::path case_path;
  std::string closure;
  std::vector<std::string> ranges;
  std::vector<std::string> sets;
  std::vector<fs::path> plugins;
  std::string objective = "overall";
  std::string method = "bobyqa";
  int budget = 40;
  int starts = 1;
  int points = 0;
  double xtol = 1e-4;
  fs::path out;
  fs::path json;
  bool fresh = false;
  bool report = false;  // --report: plateau report OUT afterwards
  CacheChoice cache;
};

std::string fmt(double v, int precision = 4) {
  if (!std::isfinite(v)) return "-";
  std::ostringstream s;
  s << std::setprecision(precision) << v;
  return s.str();
}

std::string fixed(std::optional<double> v) {
  if (!v || !std::isfinite(*v)) return "-";
  std::ostringstream s;
  s << std::fixed << std::setprecision(3) << *v;
  return s.str();
}

std::string point_text(const TuneResult& r, const TuneEvaluation& e) {
  std::string s;
  for (std::size_t k = 0; k < r.params.size(); ++k) {
    s += (k ? " " : "") + r.params[k].name + "=" + fmt(e.values[k], 6);
  }
  return s;
}

void print_table(std::ostream& out, const TuneResult& r) {
  std::vector<std::size_t> w;
  for (const TuneParam& p : r.params) w.push_back(std::max<std::size_t>(12, p.name.size()));
  out << "  " << std::setw(4) << "n" << std::setw(6) << "start";
  for (std::size_t k = 0; k < r.params.size(); ++k) {
    out << "  " << std::setw(static_cast<int>(w[k])) << r.params[k].name;
  }
  out << "  objective   skill  overall  plateau  transport  energy  a_priori\n";
  for (const TuneEvaluation& e : r.evaluations) {
    out << (e.index == r.best ? "* " : "  ") << std::setw(4) << e.index << std::setw(6) << e.start;
    for (std::size_t k = 0; k < r.params.size(); ++k) {
      out << "  " << std::setw(static_cast<int>(w[k])) << fmt(e.values[k], 6);
    }
    if (!e.failure.empty()) {
      out << "  failed: " << e.failure << '\n';
      continue;
    }
    out << std::setw(11) << fmt(e.objective) << std::setw(8) << fixed(e.skill) << std::setw(9)
        << fixed(e.overall);
    const int widths[] = {9, 11, 8, 10};
    for (std::size_t k = 0; k < e.categories.size() && k < 4; ++k) {
      out << std::setw(widths[k]) << fixed(e.categories[k]);
    }
    out << '\n';
  }
}

nlohmann::json result_json(const Case& c, const std::string& closure, const TuneOptions& to,
                           const TuneResult& r) {
  nlohmann::json j;
  j["case"] = c.name;
  j["closure"] = closure;
  j["method"] = method_name(to.method);
  j["objective"] = to.objective.text;
  j["evaluations"] = r.evaluations.size();
  j["replayed"] = r.replayed;
  j["interrupted"] = r.interrupted;
  j["log"] = r.log.string();
  j["stops"] = r.stops;
  if (r.best >= 0) {
    const TuneEvaluation& b = r.evaluations[static_cast<std::size_t>(r.best)];
    nlohmann::json best;
    best["n"] = b.index;
    for (std::size_t k = 0; k < r.params.size(); ++k) {
      best["params"][r.params[k].name] = b.values[k];
    }
    best["objective"] = b.objective;
    best["skill"] = b.skill;
    best["overall"] = b.overall;
    j["best"] = std::move(best);
  }
  return j;
}

int run_tune_command(const TuneCommandOptions& o, const GlobalOptions& global) {
  for (const auto& p : o.plugins) (void)load_closure_plugin(p);
  const Case c = load_case(o.case_path);
  TuneOptions to;
  to.method = parse_method(o.method);
  to.objective = parse_objective(o.objective);
  to.budget = o.budget;
  to.starts = o.starts;
  to.grid_points = o.points;
  to.xtol = o.xtol;
  to.ranges = o.ranges;
  to.sets = o.sets;
  to.fresh = o.fresh;
  to.out_dir = o.out.empty() ? fs::path("results") / (c.name + "-" + o.closure) : o.out;
  if (to.method == TuneMethod::grid && o.starts != 1) {
    throw CaseError("--starts applies to the optimisers, not to --method grid");
  }
  // Checked before the truth is computed: parameters, fixed values.
  (void)make_candidate(c, o.closure, o.sets);

  install_stop_handlers();
  const Ranks& ranks = Ranks::world();
  GlobalOptions rank_global = global;
  rank_global.quiet = global.quiet || !ranks.is_root();
  const bool quiet = rank_global.quiet;
  TruthResult truth;
  if (const int rc =
          obtain_truths([&] { truth = shared_case_truth(ranks, c, o.cache, rank_global); }, "");
      rc != 0) {
    return rc;
  }
  if (!quiet) std::cerr << "plateau: truth " << truth_summary(truth) << '\n';

  to.ranks = &ranks;
  to.threads = threads_per_rank(ranks, global.threads);
  to.stop_flag = &stop_flag();
  const auto t0 = std::chrono::steady_clock::now();
  std::mutex print_mutex;
  if (!quiet) {
    to.on_evaluation = [&](const TuneEvaluation& e, bool replayed) {
      const std::lock_guard<std::mutex> lock(print_mutex);
      const double wall =
          std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
      std::cerr << "plateau: tune " << (e.index + 1) << "/" << o.budget << " start " << e.start;
      for (double v : e.values) std::cerr << " " << fmt(v, 6);
      std::cerr << (e.failure.empty() ? " objective " + fmt(e.objective) : " failed")
                << (replayed ? " (from the log)" : "") << " (" << fmt(wall, 3) << " s)\n";
    };
  }
  TuneResult r;
  r = run_tune(c, truth.data, o.closure, to);
  if (!ranks.is_root()) return r.interrupted ? kExitInterrupted : kExitOk;

  const std::string again = "plateau tune " + o.case_path.string() + " -c " + o.closure +
                            (o.out.empty() ? "" : " --out " + o.out.string()) + " (same options)";
  if (r.interrupted) {
    std::cerr << "\nplateau: interrupted after " << r.evaluations.size()
              << " evaluations; they are in " << r.log.string()
              << "\nplateau: continue with: " << again << '\n';
    return kExitInterrupted;
  }
  if (!o.json.empty()) {
    io::write_text_atomic(o.json, result_json(c, o.closure, to, r).dump(2) + "\n");
  }
  if (quiet) return r.best >= 0 ? kExitOk : kExitNumerical;

  std::cout << "tune " << c.name << ", closure " << o.closure << ": " << method_name(to.method)
            << ", objective " << to.objective.text << " (mean scaled error, minimised), "
            << r.evaluations.size() << " evaluations";
  if (r.replayed > 0) std::cout << " (" << r.replayed << " replayed from the log)";
  std::cout << "\n  parallel: " << r.parallelism << "\n";
  for (std::size_t s = 0; s < r.stops.size(); ++s) {
    std::cout << "  " << (to.method == TuneMethod::grid ? "" : "start " + std::to_string(s) + ": ")
              << r.stops[s] << '\n';
  }
  std::cout << '\n';
  print_table(std::cout, r);
  if (r.best < 0) {
    print_error(std::cerr, "every evaluation failed numerically");
    return kExitNumerical;
  }
  const TuneEvaluation& b = r.evaluations[static_cast<std::size_t>(r.best)];
  std::cout << "\n  best     evaluation " << b.index << ": " << point_text(r, b) << "\n"
            << "           skill " << fixed(b.skill) << " (" << to.objective.text << "), overall "
            << fixed(b.overall) << ", objective error " << fmt(b.objective) << "\n\n  paste into "
            << o.case_path.string() << ":\n";
  std::istringstream lines(case_file_lines(o.closure, r, o.sets));
  for (std::string line; std::getline(lines, line);) std::cout << "    " << line << '\n';
  std::cout << "\n  truth    " << truth_summary(truth) << "\n  wrote    " << r.log.string() << '\n';
  if (!o.json.empty()) std::cout << "  wrote    " << o.json.string() << '\n';
  if (o.report) {
    std::cout << '\n';
    (void)print_report_summary(report::write_report(to.out_dir), global, std::cout, std::cerr);
  }
  return kExitOk;
}

}  // namespace

void add_tune_command(CLI::App& app, Invocation& invocation) {
  auto opts = std::make_shared<TuneCommandOptions>();
  CLI::App* cmd = app.add_subcommand(
      "tune", "fit a closure's tunable parameters to the truth (grid sweep or NLopt)");
  cmd->add_option("case", opts->case_path, "case file (TOML)")
      ->required()
      ->check(CLI::ExistingFile);
  cmd->add_option("-c,--closure", opts->closure, "the closure to tune")->required();
  cmd->add_option("--param", opts->ranges,
                  "tune this parameter within LO:HI: KEY=LO:HI (repeatable; default: every "
                  "tunable parameter over its declared range)");
  cmd->add_option("--set", opts->sets, "fix a parameter: NAME.KEY=VALUE (repeatable)");
  cmd->add_option("--objective", opts->objective,
                  "what to maximise: overall, or categories (plateau,transport,energy,a_priori; "
                  "comma-separated)")
      ->capture_default_str();
  cmd->add_option("--method", opts->method, "grid, bobyqa, neldermead, sbplx or cobyla")
      ->capture_default_str();
  cmd->add_option("--budget", opts->budget, "evaluations in all")
      ->check(CLI::Range(1, 1000000))
      ->capture_default_str();
  cmd->add_option("--starts", opts->starts,
                  "independent optimiser starts, evaluated side by side (Latin hypercube)")
      ->check(CLI::Range(1, 4096))
      ->capture_default_str();
  cmd->add_option("--points", opts->points,
                  "grid points per parameter (default: as many as --budget allows)")
      ->check(CLI::Range(2, 100000));
  cmd->add_option("--xtol", opts->xtol, "optimisers stop below this step in unit coordinates")
      ->check(CLI::PositiveNumber)
      ->capture_default_str();
  cmd->add_option("--plugin", opts->plugins, "load an external closure (shared library)")
      ->check(CLI::ExistingFile);
  cmd->add_option("--out", opts->out, "results folder (default results/CASE-NAME/)");
  cmd->add_option("--json", opts->json, "also write the result as JSON to FILE");
  cmd->add_flag("--fresh", opts->fresh, "start over instead of resuming the folder's tune log");
  cmd->add_flag("--report", opts->report,
                "then write the HTML report and SVG figures of the output folder");
  add_cache_options(*cmd, opts->cache);
  cmd->callback([opts, &invocation]() {
    try {
      invocation.exit_code = run_tune_command(*opts, invocation.global);
    } catch (const TuneLogError& e) {
      print_error(std::cerr, e.what());
      invocation.exit_code = kExitBadInput;
    }
  });
}

}  // namespace plateau::cli
