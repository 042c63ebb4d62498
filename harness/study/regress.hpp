#pragma once
// regress: a suite of case-closure pairs scored against cached truths and compared, metric by
// metric, with a stored baseline (STUDIES.md, regress).
//
// A suite file (TOML):
//
//   [suite]
//   name = "nightly"                      # default: the file's stem
//   baseline = "nightly-baseline.json"    # relative to the suite file
//   tolerance = 0.02                      # a skill may fall by this much (default 0.01)
//   [suite.tolerances]                    # per metric id; "prefix.*" covers a family
//   "energy.total" = 0.05
//
//   [[pair]]
//   case = "nightly_2layer.toml"          # relative to the suite file
//   closure = "constant"
//   name = "constant-k800"                # default: the closure name; unique within its case
//   [pair.params]                         # as --set closure.KEY=VALUE
//   k_m2_per_s = 800
//
// The baseline (JSON) maps each pair ("CASE/NAME") to its metric skills by stable metric id, with
// "overall" for the overall skill, and records the solver version and the truth key of every
// case it was made with. A metric regresses when its skill falls by more than its tolerance; a
// metric missing from the new run, or a run that fails, is a failure too; a new metric or pair
// is reported, never failed. A truth key that changed is reported plainly and the comparison is
// still made.

#include <filesystem>
#include <map>
#include <optional>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

namespace plateau {

struct SuitePair {
  std::filesystem::path case_path;  // resolved against the suite file's folder
  std::string closure;
  std::string name;               // unique within its case
  std::vector<std::string> sets;  // CLOSURE.KEY=VALUE, from [pair.params]
  std::string where;              // FILE:LINE:COLUMN of the pair, for messages
};

struct Suite {
  std::string name;
  std::filesystem::path source;
  std::filesystem::path baseline;  // resolved
  double tolerance = 0.01;
  std::map<std::string, double> tolerances;  // id or "prefix.*"
  std::vector<SuitePair> pairs;

  // The tolerance of a metric id: its own, else the longest matching "prefix.*", else the
  // suite's.
  [[nodiscard]] double tolerance_of(const std::string& id) const;
};

// Reads and checks a suite file; CaseError naming FILE:LINE:COLUMN on any fault.
Suite load_suite(const std::filesystem::path& path);

// The skills of one pair's run: metric id -> skill ("overall" included), or why it failed.
struct PairRun {
  std::string case_name;
  std::string name;
  std::optional<std::map<std::string, double>> skills;
  std::string failure;
  double wall_s = 0.0;  // for the JUnit time attribute only
};

// "CASE/NAME".
std::string pair_id(const std::string& case_name, const std::string& name);

struct Baseline {
  std::string solver;                                           // "VERSION MODELHASH"
  std::map<std::string, std::string> truths;                    // case name -> truth key
  std::map<std::string, std::map<std::string, double>> skills;  // pair id -> id -> skill
};

nlohmann::json baseline_to_json(const Baseline& b, const std::string& suite_name);
// Throws io::IoError when unreadable and CaseError when it is not a baseline.
Baseline load_baseline(const std::filesystem::path& path);
Baseline make_baseline(const std::vector<PairRun>& runs,
                       const std::map<std::string, std::string>& truths, const std::string& solver);

struct MetricChange {
  enum class Kind { regressed, improved, changed, missing, added };
  std::string id;
  Kind kind = Kind::changed;
  std::optional<double> old_skill;
  std::optional<double> new_skill;
  double tolerance = 0.0;
};
std::string kind_name(MetricChange::Kind k);

struct PairComparison {
  std::string case_name;
  std::string name;
  bool in_baseline = true;
  std::string failure;                // the run failed numerically
  std::vector<MetricChange> changes;  // only metrics whose skill moved, or that came or went
  double wall_s = 0.0;
  [[nodiscard]] bool failed() const;  // a failure, or any regressed or missing metric
};

struct RegressReport {
  std::string suite;
  std::vector<PairComparison> pairs;       // in suite order
  std::vector<std::string> truth_changes;  // one sentence per case whose truth key changed
  std::vector<std::string> dropped;        // pairs in the baseline that the suite no longer has
  bool solver_changed = false;
  std::string baseline_solver;
  std::string solver;
  [[nodiscard]] bool regressed() const;
  [[nodiscard]] int failures() const;
};

RegressReport compare_to_baseline(const Suite& suite, const Baseline& baseline, const Baseline& now,
                                  const std::vector<PairRun>& runs);

// regress.json: the summary, every pair with its changes, and the new skills.
nlohmann::json report_to_json(const RegressReport& r, const Baseline& now);

// JUnit XML: testsuites > testsuite per case > testcase per pair > failure per failed pair
// naming each metric that fell (old and new skill) or went missing.
std::string junit_xml(const RegressReport& r);

}  // namespace plateau
