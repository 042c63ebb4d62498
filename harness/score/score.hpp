#pragma once
// Scoring a candidate run against the coarse-grained truth (SCORING.md): plain inputs in, a
// Scorecard out. Every field is on the coarse grid; the caller coarse-grains the truth first
// (harness/coarse/) and may build these structs from run records (from_run.hpp) or by hand.
//
// Metric ids (Lk: layer k counted from 1 at the top; Ik: the interface below layer k; g: the
// gyre, anticyclonic or cyclonic):
//   plateau.Lk.g.{homogeneity, plateau_fraction, plateau_overlap, plateau_level, q_psi_slope,
//                 contour_outflow}, plateau.Lk.rms_q                         (sheltered layers)
//   transport.barotropic.{max_sv, min_sv}, transport.Lk.g.sv, transport.wbc.g.sv,
//   transport.jet.penetration_km
//   energy.Lk.kinetic, energy.Ik.potential, energy.total, energy.mean_flow, energy.eddy,
//   energy.budget.{wind, bottom_drag, lateral_friction, closure, residual}, energy.trend
//   a_priori.Lk.{correlation, slope, k_eff_median}, a_priori.Lk.g.k_contour
// Each metric's scale is written beside it in the card. Reported only, outside the category
// means (each card says why): energy.eddy, energy.budget.{lateral_friction, closure, residual},
// energy.trend. The plateau, contour-budget and a priori metrics are left out when their inputs
// are (no sheltered layer, empty pv_budget, no apriori); a category without scored metrics has
// no skill and drops out of the overall mean.

#include <optional>
#include <string>
#include <vector>

#include "harness/case/case.hpp"
#include "harness/model/grid.hpp"
#include "harness/model/model.hpp"
#include "harness/score/contour_budget.hpp"
#include "harness/score/energy.hpp"
#include "harness/score/regions.hpp"
#include "harness/score/scorecard.hpp"

namespace plateau {

struct ScoreBasin {
  Grid grid;                          // the coarse grid
  std::vector<double> thickness_m;    // H_k
  double beta = 0.0;                  // m^-1 s^-1
  double ld1_m = 0.0;                 // first baroclinic deformation radius (0: one layer)
  std::vector<Gyre> gyres;            // the gyres to score (both for a double gyre)
  std::vector<int> sheltered_layers;  // 0-based; empty: default_sheltered_layers
};

// One run's time means and series on the coarse grid.
struct ScoreRun {
  std::vector<Field> mean_psi;       // m^2 s^-1, per layer, walls included
  std::vector<Field> mean_q;         // s^-1, per layer
  std::vector<double> wall_psi;      // c_k of the mean state
  Energy mean_energy;                // time mean of the energy over the window
  Energy mean_state_energy;          // energy of the time-mean state
  std::string energy_note;           // where the energies were measured (written in the card)
  std::vector<double> series_t_s;    // total energy series: times
  std::vector<double> series_total;  // m^5 s^-2
  double window_start_s = 0.0;       // the spin-up: time means start here
  BudgetIntegrals budget;
  std::vector<BudgetFields> pv_budget;  // per layer; empty: no closed-contour budget
};

// A priori inputs (truth only): per layer, on the coarse grid.
struct AprioriFields {
  // The target used: subfilter or transient_subfilter (resolve_apriori_target), never automatic.
  AprioriTarget target = AprioriTarget::transient_subfilter;
  std::vector<Field> truth_tendency;    // -div F_truth, s^-2
  std::vector<Field> closure_tendency;  // -div F_closure, s^-2
  std::vector<Field> truth_fx;          // node-centred eddy PV flux, m s^-2
  std::vector<Field> truth_fy;
  std::vector<Field> closure_fx;  // node-centred closure flux, m s^-2
  std::vector<Field> closure_fy;
};

struct ScoreOptions {
  ScoringSpec spec;  // theta, epsilon, jet fraction, trend limit, weights
  // Warn when a spin-up is shorter than this many crossing times Lx / (beta Ld1^2) ("several
  // times over").
  double spinup_crossings = 3.0;
  // Warn when the truth's homogeneity in a sheltered gyre is below this: no usable plateau.
  double no_plateau_homogeneity = 0.5;
  // Closed-contour levels: i / (n + 1) of the truth's |extremum|, i = 1..n.
  int contour_levels = 9;
};

struct ScoreInput {
  std::string case_name;
  std::string closure;
  ScoreBasin basin;
  ScoreOptions options;
  ScoreRun truth;
  ScoreRun candidate;
  std::optional<AprioriFields> apriori;
  Timing timing;
};

// The layers below the top, without the bottom layer when there are three or more (0-based).
std::vector<int> default_sheltered_layers(int layers);

// SCORING.md's rule for `automatic`: transient plus subfilter when the coarse spacing exceeds
// half the first deformation radius, subfilter otherwise; other targets pass through.
AprioriTarget resolve_apriori_target(AprioriTarget requested, double coarse_dx_m, double ld1_m);
std::string apriori_target_name(AprioriTarget t);

Scorecard score(const ScoreInput& in);

}  // namespace plateau
