#pragma once
// Adapters from run records to the score's plain inputs (score.hpp).
//
// Both runs are measured with the coarse model's operators: mean q, the energy of the mean state
// and (when snapshots allow) the time-mean energy come from psi through Model::state_from_psi and
// Model::energy on the coarse grid; the truth's psi is coarse-grained first (harness/coarse/).
// A truth record without snapshots in its averaging window falls back to its own energy series
// (measured on the truth grid), and its ScoreRun::energy_note says so.
//
// Not in a RunRecord yet, so left empty here: the time-mean PV budget fields of the closed-contour
// budget (ScoreRun::pv_budget) and the a priori fields (ScoreInput::apriori).

#include <vector>

#include "harness/case/case.hpp"
#include "harness/model/model.hpp"
#include "harness/run/run.hpp"
#include "harness/score/score.hpp"

namespace plateau {

// A coarse run (the candidate) on the coarse model's grid.
ScoreRun candidate_score_run(const RunRecord& run, const Model& coarse);

// The truth run coarse-grained onto the coarse model's grid.
ScoreRun truth_score_run(const RunRecord& truth, const Model& coarse);

// The basin as the score sees it: the coarse grid, layers, beta, Ld1, the gyres of the wind
// (single gyre: anticyclonic; double gyre: both; a table: each gyre whose barotropic extremum in
// the truth is at least a tenth of the stronger one) and the sheltered layers (empty: default).
ScoreBasin score_basin(const Model& coarse, const ScoreRun& truth,
                       const std::vector<int>& sheltered_layers);

// The case's scoring choices with the score's own defaults for the rest.
ScoreOptions score_options(const Case& c);

}  // namespace plateau
