// plateau regress SUITE: scores every case-closure pair of a suite against its cached truth and
// compares each metric's skill with the suite's baseline (harness/study/regress.hpp). Writes
// regress.json and regress-junit.xml into --out DIR (default results/SUITE-regress/), the pairs'
// runs into DIR/CASE/, and exits 1 when any pair regressed. --update-baseline writes the new
// baseline atomically instead of judging, and prints what changed. Under mpirun the pairs are
// spread over the ranks; rank 0 alone writes the summary files and prints.

#include <chrono>
#include <cmath>
#include <iomanip>
#include <iostream>
#include <map>
#include <memory>
#include <mutex>
#include <sstream>
#include <string>
#include <vector>

#include <CLI/CLI.hpp>
#include <nlohmann/json.hpp>

#include "harness/cli/truth_options.hpp"
#include "harness/closure_host/plugin.hpp"
#include "harness/io/atomic_file.hpp"
#include "harness/report/report.hpp"
#include "harness/study/dispatch.hpp"
#include "harness/study/evaluate.hpp"
#include "harness/study/regress.hpp"
#include "plateau/version.hpp"

namespace plateau::cli {
namespace {

namespace fs = std::filesystem;

struct RegressCommandOptions {
  fs::path suite_path;
  bool update_baseline = false;
  std::vector<fs::path> plugins;
  fs::path out;
  fs::path json;
  bool report = false;  // --report: plateau report OUT afterwards
  CacheChoice cache;
};

std::string skill(const std::optional<double>& v) {
  if (!v || !std::isfinite(*v)) return "-";
  std::ostringstream s;
  s << std::fixed << std::setprecision(4) << *v;
  return s.str();
}

void print_changes(std::ostream& out, const RegressReport& r, const Suite& suite) {
  std::size_t w = 4;
  for (const PairComparison& p : r.pairs) w = std::max(w, pair_id(p.case_name, p.name).size());
  out << "  " << std::left << std::setw(static_cast<int>(w)) << "pair" << std::right
      << "  status    overall (baseline -> now)\n";
  for (const PairComparison& p : r.pairs) {
    std::optional<double> was;
    std::optional<double> now;
    for (const MetricChange& m : p.changes) {
      if (m.id == "overall") {
        was = m.old_skill;
        now = m.new_skill;
      }
    }
    const std::string status =
        p.failed() ? (p.failure.empty() ? "REGRESSED" : "FAILED") : (p.in_baseline ? "ok" : "new");
    out << "  " << std::left << std::setw(static_cast<int>(w)) << pair_id(p.case_name, p.name)
        << std::right << "  " << std::left << std::setw(10) << status << std::right;
    if (!p.failure.empty()) {
      out << p.failure;
    } else if (was || now) {
      out << skill(was) << " -> " << skill(now);
    } else if (p.in_baseline) {
      out << "unchanged";
    }
    out << '\n';
  }
  bool any = false;
  for (const PairComparison& p : r.pairs) any = any || !p.changes.empty();
  if (any) {
    out << "\n  metrics that moved (skill; tolerance " << std::setprecision(3) << suite.tolerance
        << " unless the suite says otherwise)\n";
    for (const PairComparison& p : r.pairs) {
      for (const MetricChange& m : p.changes) {
        std::ostringstream d;
        if (m.old_skill && m.new_skill) {
          d << std::showpos << std::fixed << std::setprecision(4) << (*m.new_skill - *m.old_skill);
        }
        out << "  " << std::left << std::setw(static_cast<int>(w)) << pair_id(p.case_name, p.name)
            << "  " << std::setw(44) << m.id << std::right << std::setw(8) << skill(m.old_skill)
            << " -> " << std::setw(6) << skill(m.new_skill) << std::setw(10) << d.str() << "  "
            << kind_name(m.kind)
            << (m.kind == MetricChange::Kind::regressed ? " (tolerance " + skill(m.tolerance) + ")"
                                                        : "")
            << '\n';
      }
    }
  }
  for (const std::string& s : r.truth_changes) out << "\n  truth: " << s;
  if (!r.truth_changes.empty()) out << '\n';
  if (r.solver_changed && !r.baseline_solver.empty()) {
    out << "\n  solver: the baseline was made with " << r.baseline_solver << ", this is "
        << r.solver << '\n';
  }
  for (const std::string& d : r.dropped) {
    out << "  baseline pair " << d << " is no longer in the suite\n";
  }
}

int run_regress(const RegressCommandOptions& o, const GlobalOptions& global) {
  for (const auto& p : o.plugins) (void)load_closure_plugin(p);
  const Suite suite = load_suite(o.suite_path);
  // Every case once, by file; the pair ids use case names, so two files may not share one.
  std::vector<Case> cases;
  std::map<std::string, std::size_t> by_file;
  std::vector<std::size_t> case_of;
  std::vector<Candidate> candidates;
  for (const SuitePair& p : suite.pairs) {
    const std::string file = fs::weakly_canonical(p.case_path).string();
    auto it = by_file.find(file);
    if (it == by_file.end()) {
      Case c = load_case(p.case_path);
      for (const Case& other : cases) {
        if (other.name == c.name) {
          throw CaseError(p.where + ": cases " + other.source.string() + " and " +
                          c.source.string() + " share the name '" + c.name +
                          "'; pairs are named CASE/NAME, so case names must differ");
        }
      }
      cases.push_back(std::move(c));
      it = by_file.emplace(file, cases.size() - 1).first;
    }
    case_of.push_back(it->second);
    try {
      Candidate k = make_candidate(cases[it->second], p.closure, p.sets);
      k.label = p.name;
      candidates.push_back(std::move(k));
    } catch (const CaseError& e) {
      throw CaseError(p.where + ": " + e.what());
    }
  }

  // The baseline is read before anything runs: a missing or broken one is bad input.
  Baseline baseline;
  const bool have_baseline = fs::exists(suite.baseline);
  if (have_baseline) {
    baseline = load_baseline(suite.baseline);
  } else if (!o.update_baseline) {
    throw CaseError("no baseline at " + suite.baseline.string() +
                    "; make one with plateau regress " + o.suite_path.string() +
                    " --update-baseline");
  }

  install_stop_handlers();
  const Ranks& ranks = Ranks::world();
  GlobalOptions rank_global = global;
  rank_global.quiet = global.quiet || !ranks.is_root();
  const bool quiet = rank_global.quiet;
  const auto t0 = std::chrono::steady_clock::now();
  std::vector<TruthResult> truths;
  std::map<std::string, std::string> truth_keys;
  const int truths_rc = obtain_truths(
      [&] {
        for (const Case& c : cases) {
          truths.push_back(shared_case_truth(ranks, c, o.cache, rank_global));
          truth_keys[c.name] = truths.back().data.key;
          if (!quiet) {
            std::cerr << "plateau: truth " << c.name << " " << truth_summary(truths.back()) << '\n';
          }
        }
      },
      "plateau regress " + o.suite_path.string());
  if (truths_rc != 0) return truths_rc;

  const fs::path out = o.out.empty() ? fs::path("results") / (suite.name + "-regress") : o.out;
  const std::string history = "plateau regress " + o.suite_path.string();
  std::mutex print_mutex;
  std::size_t done = 0;
  auto work = [&](std::size_t i) -> std::string {
    const Case& c = cases[case_of[i]];
    EvaluationOptions eo;
    eo.out_dir = out / c.name;
    eo.history = history;
    eo.stop_flag = &stop_flag();
    return worker_result([&] {
      const Evaluation ev = evaluate(c, truths[case_of[i]].data, candidates[i], eo);
      nlohmann::json skills = nlohmann::json::object();
      for (const Metric& m : ev.card.metrics) {
        if (m.scored) skills[m.id] = m.skill;
      }
      skills["overall"] = ev.card.overall();
      return nlohmann::json{{"skills", std::move(skills)}, {"wall_s", ev.wall_s}};
    });
  };
  auto finished = [&](std::size_t i, const std::string& text) {
    const std::lock_guard<std::mutex> lock(print_mutex);
    ++done;
    if (quiet) return;
    const nlohmann::json r = nlohmann::json::parse(text);
    const double wall =
        std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
    std::cerr << "plateau: regress " << done << "/" << candidates.size() << " "
              << pair_id(cases[case_of[i]].name, suite.pairs[i].name)
              << (r.contains("skills") ? " overall " + skill(r["skills"]["overall"].get<double>())
                                       : " failed")
              << " (" << std::fixed << std::setprecision(1) << wall << " s)\n"
              << std::defaultfloat;
  };
  const std::vector<std::string> results =
      spread(ranks, candidates.size(), threads_per_rank(ranks, global.threads), work, finished);

  std::vector<PairRun> runs;
  bool interrupted = false;
  for (std::size_t i = 0; i < results.size(); ++i) {
    const nlohmann::json r = nlohmann::json::parse(results[i]);
    PairRun run;
    run.case_name = cases[case_of[i]].name;
    run.name = suite.pairs[i].name;
    if (r.contains("skills")) {
      run.skills = r["skills"].get<std::map<std::string, double>>();
      run.wall_s = r["wall_s"].get<double>();
    }
    if (r.contains("failure")) run.failure = r["failure"].get<std::string>();
    interrupted = interrupted || r.contains("interrupted");
    runs.push_back(std::move(run));
  }
  if (interrupted) {
    if (ranks.is_root()) {
      std::cerr << "\nplateau: interrupted; continue with: plateau regress "
                << o.suite_path.string() << '\n';
    }
    return kExitInterrupted;
  }

  const std::string solver = std::string(kProjectVersion) + " " + kModelHash;
  const Baseline now = make_baseline(runs, truth_keys, solver);
  const RegressReport report = compare_to_baseline(suite, baseline, now, runs);
  const double wall = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
  if (!ranks.is_root()) {
    return o.update_baseline ? kExitOk : (report.regressed() ? kExitFailedCheck : kExitOk);
  }

  nlohmann::json j = report_to_json(report, now);
  j["baseline"] = suite.baseline.string();
  j["wall_s"] = wall;
  io::write_text_atomic(out / "regress.json", j.dump(2) + "\n");
  io::write_text_atomic(out / "regress-junit.xml", junit_xml(report));
  if (!o.json.empty()) io::write_text_atomic(o.json, j.dump(2) + "\n");
  bool failed_run = false;
  for (const PairRun& r : runs) failed_run = failed_run || !r.failure.empty();
  if (o.update_baseline) {
    if (failed_run) {
      print_error(std::cerr, "a pair failed numerically; the baseline is left as it was");
      if (!quiet) print_changes(std::cout, report, suite);
      return kExitNumerical;
    }
    io::write_text_atomic(suite.baseline, baseline_to_json(now, suite.name).dump(2) + "\n");
  }

  if (!quiet) {
    std::cout << "regress " << suite.name << ": " << suite.pairs.size() << " pairs on "
              << cases.size() << " case" << (cases.size() == 1 ? "" : "s") << " against "
              << suite.baseline.string() << (have_baseline ? "" : " (none yet)") << "\n";
    print_changes(std::cout, report, suite);
    std::cout << "\n  wall     " << std::fixed << std::setprecision(1) << wall << " s ("
              << threads_per_rank(ranks, global.threads) << " threads x " << ranks.size() << " rank"
              << (ranks.size() == 1 ? "" : "s") << ")\n"
              << std::defaultfloat;
    std::cout << "  wrote    " << (out / "regress.json").string() << ", "
              << (out / "regress-junit.xml").string() << '\n';
    if (o.update_baseline) {
      std::cout << "  wrote    " << suite.baseline.string() << " (new baseline)\n";
    } else {
      std::cout << "  result   "
                << (report.regressed()
                        ? std::to_string(report.failures()) + " of " +
                              std::to_string(report.pairs.size()) + " pairs regressed"
                        : "no regression")
                << '\n';
    }
  }
  if (o.report) {
    if (!quiet) std::cout << '\n';
    (void)print_report_summary(plateau::report::write_report(out), rank_global, std::cout,
                               std::cerr);
  }
  if (o.update_baseline) return kExitOk;
  return report.regressed() ? kExitFailedCheck : kExitOk;
}

}  // namespace

void add_regress_command(CLI::App& app, Invocation& invocation) {
  auto opts = std::make_shared<RegressCommandOptions>();
  CLI::App* cmd = app.add_subcommand(
      "regress", "score a suite of case-closure pairs and compare them with its baseline");
  cmd->add_option("suite", opts->suite_path, "suite file (TOML)")
      ->required()
      ->check(CLI::ExistingFile);
  cmd->add_flag("--update-baseline", opts->update_baseline,
                "write the new skills as the suite's baseline (atomically) instead of judging");
  cmd->add_option("--plugin", opts->plugins, "load an external closure (shared library)")
      ->check(CLI::ExistingFile);
  cmd->add_option("--out", opts->out, "results folder (default results/SUITE-regress/)");
  cmd->add_option("--json", opts->json, "also write regress.json to FILE");
  cmd->add_flag("--report", opts->report,
                "then write the HTML report and SVG figures of the results folder");
  add_cache_options(*cmd, opts->cache);
  cmd->callback(
      [opts, &invocation]() { invocation.exit_code = run_regress(*opts, invocation.global); });
}

}  // namespace plateau::cli
