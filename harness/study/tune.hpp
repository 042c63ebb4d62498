#pragma once
// tune: fits a closure's tunable parameters to a case's truth (STUDIES.md, tune).
//
// The search runs in the unit cube: each parameter maps [0, 1] onto its range, linearly or, for
// parameters declared log-scale, in log space. Methods: a grid sweep (every point known up front,
// evaluated side by side) and NLopt's local derivative-free optimisers (BOBYQA, Nelder-Mead,
// Sbplx, COBYLA), which ask for one point at a time; with --starts M they run M independent
// optimisers (start 0 at the centre of the cube, the others on a Latin hypercube of a fixed
// seed), whose points are evaluated side by side in rounds: every active optimiser posts its next
// point, the round is evaluated, and the answers go back. The objective is minimised: the
// weighted mean over the chosen categories of the mean scaled error e_i of their scored metrics
// (before clipping, so that it stays informative far from the optimum); the reported skill is
// the weighted mean of the same categories' skills.
//
// The log (tune-log.jsonl) is JSON lines: a header with everything that defines the tune, then
// one line per evaluation in evaluation order (round by round, starts in order), numbers in
// shortest round-trip form. Resume is replay: the optimisers are run again from the start and
// answered from the log while it lasts (each answer checked against the point the log holds),
// then with real runs; so an interrupted tune finishes with the same log and result as one that
// ran through. No wall time enters the log.

#include <atomic>
#include <cstdint>
#include <filesystem>
#include <functional>
#include <optional>
#include <stdexcept>
#include <string>
#include <vector>

#include "closures/closure.hpp"
#include "harness/case/case.hpp"
#include "harness/score/scorecard.hpp"
#include "harness/study/dispatch.hpp"
#include "harness/truth/truth.hpp"

namespace plateau {

// A tune log that does not belong to this tune, or is damaged (exit code 2).
class TuneLogError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

enum class TuneMethod { grid, bobyqa, neldermead, sbplx, cobyla };
std::string method_name(TuneMethod m);
// "grid", "bobyqa", "neldermead" (or "nelder-mead"), "sbplx", "cobyla"; CaseError otherwise.
TuneMethod parse_method(const std::string& text);
// Whether a method asks for one point at a time (the NLopt ones).
bool is_sequential(TuneMethod m);

struct TuneParam {
  std::string name;
  std::string unit;
  double lo = 0.0;
  double hi = 0.0;
  bool log_scale = false;
  bool integer = false;

  // The value at unit coordinate u in [0, 1] (integers rounded to the nearest).
  [[nodiscard]] double value(double u) const;
};

// The parameters to tune: every tunable real or integer parameter of the declaration that
// `sets` does not fix, or only those named in `ranges` ("KEY=LO:HI", narrowing the declared
// bounds; a non-tunable real parameter may be named too). Open declared bounds are moved inward
// by 1e-9 of the range. CaseError for an unknown key, a range outside the declaration, LO >= HI,
// or a log-scale range that does not stay positive.
std::vector<TuneParam> tune_parameters(const closure::Info& info,
                                       const std::vector<std::string>& ranges,
                                       const std::vector<std::string>& sets);

// What is minimised: the case's overall weights over all categories, or a chosen list.
struct Objective {
  std::string text;                  // as given: "overall", "plateau", "plateau,transport,energy"
  std::vector<Category> categories;  // empty: every category (overall)
};
// "overall", one category name or a comma-separated list of them; CaseError otherwise.
Objective parse_objective(const std::string& text);

// A failed run, or a non-finite error, counts as this error: ten times the error at which a
// metric's skill reaches zero, finite so that the optimisers can move away from it.
inline constexpr double kFailedError = 10.0;

// The weighted mean of the chosen categories' mean errors (minimised) and of their skills
// (reported). Categories without scored metrics are left out; none at all gives kFailedError
// and skill 0.
double objective_error(const Scorecard& card, const Objective& objective);
double objective_skill(const Scorecard& card, const Objective& objective);

struct TuneOptions {
  TuneMethod method = TuneMethod::bobyqa;
  int budget = 40;      // evaluations in all (every start shares it)
  int starts = 1;       // NLopt methods: independent optimisers
  int grid_points = 0;  // grid: points per parameter; 0: the most with points^dims <= budget
  double xtol = 1e-4;   // NLopt: stop when a step moves less than this in unit coordinates
  Objective objective = parse_objective("overall");
  std::vector<std::string> ranges;  // --param KEY=LO:HI
  std::vector<std::string> sets;    // --set NAME.KEY=VALUE: fixed values
  std::filesystem::path out_dir;    // the log goes here (tune-log.jsonl)
  bool fresh = false;               // ignore (replace) an existing log
  int threads = 1;                  // worker threads on this rank
  const Ranks* ranks = nullptr;     // nullptr: one process
  const std::atomic<bool>* stop_flag = nullptr;
  // Tests: stop (as if killed) once this many evaluations are in the log; -1: never.
  std::int64_t stop_after_evaluations = -1;
  // Called on rank 0 for every evaluation as it enters the log (replayed ones too).
  std::function<void(const struct TuneEvaluation&, bool replayed)> on_evaluation;
};

struct TuneEvaluation {
  int index = 0;               // position in the log
  int start = 0;               // which optimiser asked (0 for the grid)
  std::vector<double> u;       // unit coordinates
  std::vector<double> values;  // parameter values, in TuneResult::params order
  double objective = kFailedError;
  double skill = 0.0;                             // over the objective's categories
  double overall = 0.0;                           // the scorecard's overall skill
  std::vector<std::optional<double>> categories;  // per kCategories
  std::string failure;                            // a run that failed numerically
};

struct TuneResult {
  std::vector<TuneParam> params;
  std::vector<TuneEvaluation> evaluations;  // the whole log, in order
  int best = -1;                            // index of the lowest objective (first on ties)
  int replayed = 0;                         // evaluations answered from an existing log
  bool interrupted = false;
  std::vector<std::string> stops;  // per start: why its optimiser stopped
  std::filesystem::path log;
  std::string parallelism;  // one sentence: what ran side by side
};

inline constexpr const char* kTuneLogName = "tune-log.jsonl";

// Runs (or resumes) the tune. Throws CaseError for bad parameters or options and TuneLogError
// for a log that does not match; RunInterrupted is turned into `interrupted`.
TuneResult run_tune(const Case& c, const TruthData& truth, const std::string& closure_name,
                    const TuneOptions& options);

// The [closure.NAME] lines with the best values (and those fixed with `sets`), ready to paste
// into a case file.
std::string case_file_lines(const std::string& closure_name, const TuneResult& result,
                            const std::vector<std::string>& sets);

}  // namespace plateau
