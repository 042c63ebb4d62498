// plateau score CASE -c NAME and plateau compare CASE: the truth (cached), the coarse run of
// each closure, and its scorecard; compare ranks several side by side. Coarse runs go into
// --out DIR (default results/CASE-NAME/ or results/CASE-compare/) as run-NAME.nc with
// score-NAME.json beside them, and compare.json for a comparison.
//
// compare runs its closures on a pool of --threads workers, each run single-threaded, and under
// mpirun over the ranks too (harness/study/dispatch.hpp; rank 0 alone writes the JSON files,
// each rank its own runs' NetCDF files): every run is deterministic, so the scorecards are the
// same bits whatever the worker and rank count.

#include <algorithm>
#include <atomic>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <iomanip>
#include <iostream>
#include <memory>
#include <mutex>
#include <optional>
#include <sstream>
#include <string>
#include <vector>

#include <CLI/CLI.hpp>
#include <nlohmann/json.hpp>

#include "harness/cli/progress.hpp"
#include "harness/cli/truth_options.hpp"
#include "harness/closure_host/plugin.hpp"
#include "harness/io/atomic_file.hpp"
#include "harness/report/report.hpp"
#include "harness/study/dispatch.hpp"
#include "harness/study/evaluate.hpp"
#include "plateau/version.hpp"

namespace plateau::cli {
namespace {

namespace fs = std::filesystem;

struct ScoreCommandOptions {
  fs::path case_path;
  std::vector<std::string> closures;  // -c (score: exactly one; compare: a list, or the case's)
  std::vector<std::string> sets;
  std::vector<fs::path> plugins;
  fs::path out;
  fs::path json;
  CacheChoice cache;
  bool fresh = false;   // --fresh: ignore coarse-run checkpoints
  bool report = false;  // --report: plateau report OUT afterwards
};

std::string history_of(const char* command, const ScoreCommandOptions& o) {
  std::ostringstream h;
  h << "plateau " << command << " " << o.case_path.string();
  if (!o.closures.empty()) {
    h << " -c ";
    for (std::size_t i = 0; i < o.closures.size(); ++i) h << (i ? "," : "") << o.closures[i];
  }
  for (const auto& p : o.plugins) h << " --plugin " << p.string();
  for (const auto& s : o.sets) h << " --set " << s;
  return h.str();
}

std::string fmt(std::optional<double> v, int precision = 3) {
  if (!v || !std::isfinite(*v)) return "-";
  std::ostringstream s;
  s << std::fixed << std::setprecision(precision) << *v;
  return s.str();
}

struct Outcome {
  std::string label;
  std::optional<Evaluation> eval;
  std::string failure;  // a run that failed numerically
};

void write_json(const fs::path& path, const nlohmann::json& j) {
  io::write_text_atomic(path, j.dump(2) + "\n");
}

nlohmann::json ranking_json(const std::vector<const Outcome*>& ranked) {
  nlohmann::json r = nlohmann::json::array();
  int rank = 0;
  for (const Outcome* o : ranked) {
    nlohmann::json e;
    e["closure"] = o->label;
    if (o->eval) {
      e["rank"] = ++rank;
      e["overall"] = o->eval->card.overall();
      for (Category cat : kCategories) {
        const auto s = o->eval->card.category_skill(cat);
        e["categories"][category_name(cat)] = s ? nlohmann::json(*s) : nlohmann::json(nullptr);
      }
      e["coarse_wall_s"] = o->eval->wall_s;
    } else {
      e["failed"] = o->failure;
    }
    r.push_back(std::move(e));
  }
  return r;
}

void print_ranking(std::ostream& out, const std::vector<const Outcome*>& ranked,
                   double truth_wall_s) {
  std::size_t w = 7;
  for (const Outcome* o : ranked) w = std::max(w, o->label.size());
  out << "  rank  " << std::left << std::setw(static_cast<int>(w)) << "closure" << std::right
      << "  overall  plateau  transport  energy  a_priori  run_s   cost\n";
  int rank = 0;
  for (const Outcome* o : ranked) {
    out << "  " << std::setw(4);
    if (!o->eval) {
      out << "-"
          << "  " << std::left << std::setw(static_cast<int>(w)) << o->label << std::right
          << "  failed: " << o->failure << '\n';
      continue;
    }
    const Scorecard& c = o->eval->card;
    out << ++rank << "  " << std::left << std::setw(static_cast<int>(w)) << o->label << std::right
        << std::setw(9) << fmt(c.overall()) << std::setw(9)
        << fmt(c.category_skill(Category::plateau)) << std::setw(11)
        << fmt(c.category_skill(Category::transport)) << std::setw(8)
        << fmt(c.category_skill(Category::energy)) << std::setw(10)
        << fmt(c.category_skill(Category::a_priori)) << std::setw(7) << fmt(o->eval->wall_s, 1)
        << std::setw(7)
        << (truth_wall_s > 0 ? fmt(o->eval->wall_s / truth_wall_s, 3) : std::string("-")) << '\n';
  }
}

// Metrics a modeller reads first, per closure, beside the truth.
void print_headline(std::ostream& out, const std::vector<const Outcome*>& ranked) {
  const Outcome* first = nullptr;
  for (const Outcome* o : ranked) {
    if (o->eval) {
      first = o;
      break;
    }
  }
  if (first == nullptr) return;
  std::vector<std::string> ids;
  for (const Metric& m : first->eval->card.metrics) {
    const bool headline =
        (m.id.find(".homogeneity") != std::string::npos && m.id.rfind("plateau.", 0) == 0) ||
        m.id == "transport.barotropic.max_sv" || m.id == "transport.barotropic.min_sv" ||
        m.id == "energy.total";
    if (headline) ids.push_back(m.id);
  }
  if (ids.empty()) return;
  // One column per closure in rank order after the truth's; 4 significant digits, whatever
  // the magnitude (energies are of order 1e14).
  const auto sig = [](std::optional<double> v) -> std::string {
    if (!v || !std::isfinite(*v)) return "-";
    std::ostringstream s;
    s << std::setprecision(4) << *v;
    return s.str();
  };
  std::vector<std::string> header = {"truth"};
  for (const Outcome* o : ranked) {
    if (o->eval) header.push_back(o->label);
  }
  std::vector<std::size_t> width;
  width.reserve(header.size());
  for (const std::string& h : header) width.push_back(std::max<std::size_t>(h.size(), 10));
  out << "\n  headline metrics\n  " << std::left << std::setw(40) << "metric" << std::right;
  for (std::size_t i = 0; i < header.size(); ++i) {
    out << "  " << std::setw(static_cast<int>(width[i])) << header[i];
  }
  out << "  unit\n";
  for (const std::string& id : ids) {
    const Metric* t = first->eval->card.find(id);
    out << "  " << std::left << std::setw(40) << id << std::right << "  "
        << std::setw(static_cast<int>(width[0])) << sig(t ? t->truth : std::nullopt);
    std::size_t col = 1;
    for (const Outcome* o : ranked) {
      if (!o->eval) continue;
      const Metric* m = o->eval->card.find(id);
      out << "  " << std::setw(static_cast<int>(width[col++]))
          << sig(m ? m->candidate : std::nullopt);
    }
    out << "  " << (t ? t->unit : "") << '\n';
  }
}

int run_scoring(const char* command, const ScoreCommandOptions& o, const GlobalOptions& global,
                bool compare) {
  for (const auto& p : o.plugins) (void)load_closure_plugin(p);
  const Case c = load_case(o.case_path);
  std::vector<std::string> names = o.closures;
  if (compare && names.empty()) {
    for (const ClosureChoice& k : c.closures) {
      if (k.compared) names.push_back(k.name);
    }
    if (names.empty()) {
      throw CaseError(o.case_path.string() +
                      ": [compare] closures lists no closure; list some there or pass -c a,b,c");
    }
  }
  std::vector<Candidate> candidates;
  candidates.reserve(names.size());
  for (const std::string& n : names) candidates.push_back(make_candidate(c, n, o.sets));

  const fs::path out =
      o.out.empty() ? fs::path("results") / (c.name + "-" + (compare ? "compare" : names.front()))
                    : o.out;
  install_stop_handlers();
  // MPI only for compare (STUDIES.md); ranks other than 0 stay quiet and write no summary.
  const Ranks& ranks = compare ? Ranks::world() : Ranks::single();
  GlobalOptions rank_global = global;
  rank_global.quiet = global.quiet || !ranks.is_root();
  const bool quiet = rank_global.quiet;
  TruthResult truth;
  if (const int rc =
          obtain_truths([&] { truth = shared_case_truth(ranks, c, o.cache, rank_global); },
                        std::string("plateau ") + command + " " + o.case_path.string());
      rc != 0) {
    return rc;
  }
  if (!quiet) std::cerr << "plateau: truth " << truth_summary(truth) << '\n';

  // Candidates on a pool of workers (and, for compare under mpirun, over the ranks: item i on
  // rank i mod size), results kept in the order given on every rank; rank 0 writes.
  std::vector<Outcome> outcomes(candidates.size());
  std::mutex print_mutex;
  std::size_t done = 0;
  const auto t0 = std::chrono::steady_clock::now();
  auto work = [&](std::size_t i) -> std::string {
    EvaluationOptions eo;
    eo.out_dir = out;
    eo.resume = !o.fresh;
    eo.history = history_of(command, o);
    eo.stop_flag = &stop_flag();
    if (!compare) eo.progress = progress_printer("run " + candidates[i].label, quiet);
    return worker_result([&] {
      return nlohmann::json{
          {"eval", evaluation_to_wire(evaluate(c, truth.data, candidates[i], eo))}};
    });
  };
  auto finished = [&](std::size_t i, const std::string& text) {
    const std::lock_guard<std::mutex> lock(print_mutex);
    ++done;
    if (compare && !quiet) {
      const nlohmann::json r = nlohmann::json::parse(text);
      const double wall =
          std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
      std::cerr << "plateau: compare " << done << "/" << candidates.size()
                << (ranks.size() > 1 ? " on rank " + std::to_string(ranks.rank()) : "") << " "
                << candidates[i].label
                << (r.contains("eval")
                        ? " overall " + fmt(evaluation_from_wire(r["eval"]).card.overall())
                        : " failed")
                << " (" << fmt(wall, 1) << " s)\n";
    }
  };
  const std::vector<std::string> results =
      spread(ranks, candidates.size(), threads_per_rank(ranks, global.threads), work, finished);
  bool interrupted = false;
  for (std::size_t i = 0; i < candidates.size(); ++i) {
    const nlohmann::json r = nlohmann::json::parse(results[i]);
    Outcome& oc = outcomes[i];
    oc.label = candidates[i].label;
    if (r.contains("eval")) oc.eval = evaluation_from_wire(r["eval"]);
    if (r.contains("failure")) oc.failure = r["failure"].get<std::string>();
    interrupted = interrupted || r.contains("interrupted");
  }
  if (ranks.is_root()) {
    for (const Outcome& oc : outcomes) {
      if (oc.eval) {
        nlohmann::json card = scorecard_to_json(oc.eval->card);
        card["truth"] = (truth.entry / "truth.nc").string();  // where `plateau report` finds it
        write_json(out / ("score-" + file_label(oc.label) + ".json"), card);
      }
    }
  }
  if (interrupted) {
    if (!ranks.is_root()) return kExitInterrupted;
    std::cerr << "\nplateau: interrupted; the coarse runs' checkpoints are in "
              << (out / "checkpoints").string() << "\nplateau: continue with: plateau " << command
              << " " << o.case_path.string() << (o.out.empty() ? "" : " --out " + o.out.string())
              << '\n';
    return kExitInterrupted;
  }

  std::vector<const Outcome*> ranked;
  ranked.reserve(outcomes.size());
  for (const Outcome& r : outcomes) ranked.push_back(&r);
  std::stable_sort(ranked.begin(), ranked.end(), [](const Outcome* a, const Outcome* b) {
    if (a->eval.has_value() != b->eval.has_value()) return a->eval.has_value();
    if (!a->eval) return false;
    return a->eval->card.overall() > b->eval->card.overall();
  });
  bool failed = false;
  for (const Outcome& r : outcomes) failed = failed || !r.eval;

  nlohmann::json j;
  if (compare) {
    j["case"] = c.name;
    j["truth"] = {{"key", truth.data.key},
                  {"entry", truth.entry.string()},
                  {"reused", truth.reused},
                  {"wall_s", truth.data.wall_s}};
    j["ranking"] = ranking_json(ranked);
    for (const Outcome& r : outcomes) {
      if (r.eval) j["scorecards"][r.label] = scorecard_to_json(r.eval->card);
    }
    if (ranks.is_root()) write_json(out / "compare.json", j);
  } else if (outcomes.front().eval) {
    j = scorecard_to_json(outcomes.front().eval->card);
  }
  if (!ranks.is_root()) return failed ? kExitNumerical : kExitOk;
  if (!o.json.empty() && !j.is_null()) write_json(o.json, j);

  if (!global.quiet) {
    if (!compare && outcomes.front().eval) {
      print_scorecard(std::cout, outcomes.front().eval->card);
    } else if (compare) {
      std::cout << "compare " << c.name << ": " << outcomes.size()
                << " closures against the truth, ranked by overall skill\n";
      print_ranking(std::cout, ranked, truth.data.wall_s);
      print_headline(std::cout, ranked);
    }
    std::cout << "\n  truth   " << truth_summary(truth) << "\n          " << truth.entry.string()
              << '\n';
    for (const Outcome& r : outcomes) {
      if (r.eval) {
        std::cout << "  wrote   " << r.eval->netcdf.string() << ", "
                  << (out / ("score-" + file_label(r.label) + ".json")).string() << '\n';
      } else {
        std::cout << "  failed  " << r.label << ": " << r.failure << '\n';
      }
    }
    if (compare) std::cout << "  wrote   " << (out / "compare.json").string() << '\n';
    if (!o.json.empty()) std::cout << "  wrote   " << o.json.string() << '\n';
  }
  if (o.report && !j.is_null()) {
    if (!global.quiet) std::cout << '\n';
    (void)print_report_summary(report::write_report(out), global, std::cout, std::cerr);
  }
  if (!compare && !outcomes.front().eval) {
    print_error(std::cerr, outcomes.front().failure);
    return kExitNumerical;
  }
  return failed ? kExitNumerical : kExitOk;
}

void add_common(CLI::App* cmd, ScoreCommandOptions& o) {
  cmd->add_option("case", o.case_path, "case file (TOML)")->required()->check(CLI::ExistingFile);
  cmd->add_option("--set", o.sets,
                  "override a closure parameter: NAME.KEY=VALUE (closure.KEY=VALUE: every "
                  "closure run; repeatable)");
  cmd->add_option("--plugin", o.plugins, "load an external closure (shared library)")
      ->check(CLI::ExistingFile);
  cmd->add_option("--out", o.out, "results folder");
  cmd->add_option("--json", o.json, "also write the result as JSON to FILE");
  cmd->add_flag("--fresh", o.fresh, "start the coarse runs afresh instead of from checkpoints");
  cmd->add_flag("--report", o.report,
                "then write the HTML report and SVG figures of the results folder (plateau "
                "report OUT)");
  add_cache_options(*cmd, o.cache);
}

}  // namespace

void add_score_command(CLI::App& app, Invocation& invocation) {
  auto opts = std::make_shared<ScoreCommandOptions>();
  CLI::App* cmd =
      app.add_subcommand("score", "truth (cached) + coarse run with a closure + its scorecard");
  add_common(cmd, *opts);
  cmd->add_option("-c,--closure", opts->closures, "the closure to score")->required();
  cmd->callback([opts, &invocation]() {
    if (opts->closures.size() != 1) {
      throw CaseError("score takes one closure (-c NAME); use compare for several");
    }
    invocation.exit_code = run_scoring("score", *opts, invocation.global, false);
  });
}

void add_compare_command(CLI::App& app, Invocation& invocation) {
  auto opts = std::make_shared<ScoreCommandOptions>();
  CLI::App* cmd = app.add_subcommand(
      "compare", "score every closure the case lists (or -c a,b,c), ranked side by side");
  add_common(cmd, *opts);
  cmd->add_option("-c,--closures", opts->closures, "closures to compare (comma-separated)")
      ->delimiter(',');
  cmd->callback([opts, &invocation]() {
    invocation.exit_code = run_scoring("compare", *opts, invocation.global, true);
  });
}

}  // namespace plateau::cli
