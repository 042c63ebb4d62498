#pragma once
// One candidate against a truth: the coarse run with the closure, its NetCDF file, and its
// scorecard (SCORING.md). The building block of score, compare, tune and regress.
//
// The coarse run carries two hooks: the closure (its fractional step) and the eddy statistics
// of the coarse run itself (what it resolves of the transient flux, for the closed-contour
// budget, where the candidate's eddy flux is its closure flux plus that). The a priori skill
// applies the closure to the coarse-grained truth: to its time-mean state (transient plus
// subfilter target) or to each of its snapshots in the window (subfilter target), with the
// closure's prognostic fields at their values at the end of the candidate run.
//
// Every evaluation is single-threaded and deterministic, so evaluations may run side by side
// (compare, tune) and give the same bits as one at a time.

#include <atomic>
#include <filesystem>
#include <functional>
#include <string>
#include <vector>

#include "closures/closure.hpp"
#include "harness/case/case.hpp"
#include "harness/closure_host/host.hpp"
#include "harness/run/run.hpp"
#include "harness/run/run_output.hpp"
#include "harness/score/scorecard.hpp"
#include "harness/truth/truth.hpp"

namespace plateau {

struct Candidate {
  const closure::Info* info = nullptr;
  closure::Params params;
  std::string label;  // how it is named in tables (the closure name, or NAME[key=value])
};

struct EvaluationOptions {
  std::filesystem::path out_dir;  // run-LABEL.nc and checkpoints/ go here; empty: no files
  bool resume = true;             // continue from the folder's checkpoint if there is one
  std::string history;            // the command line, for the NetCDF history attribute
  std::function<void(const Progress&)> progress;
  const std::atomic<bool>* stop_flag = nullptr;
};

struct Evaluation {
  Scorecard card;
  std::filesystem::path netcdf;  // empty when no file was written
  double wall_s = 0.0;
  int max_substeps = 0;
};

// Resolves a closure by name with the case's table and --set overrides (CaseError when unknown).
Candidate make_candidate(const Case& c, const std::string& name,
                         const std::vector<std::string>& sets);

// The closure's time-mean fields as NetCDF extra fields (a column field apportioned to the
// layers by thickness).
std::vector<ExtraField> closure_output(const ClosureHost& host, const Model& model);

// The file-name-safe form of a label.
std::string file_label(const std::string& label);

Evaluation evaluate(const Case& c, const TruthData& truth, const Candidate& candidate,
                    const EvaluationOptions& options);

}  // namespace plateau
