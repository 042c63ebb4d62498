#include "harness/score/from_run.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>
#include <string>

#include "harness/coarse/coarse_grain.hpp"
#include "harness/score/transport.hpp"

namespace plateau {
namespace {

bool on_grid(const Grid& g, const Field& f) { return f.rows() == g.nx + 1 && f.cols() == g.ny + 1; }

void check_means(const RunRecord& r, const Model& m, const char* who) {
  if (r.mean_count <= 0 || r.mean_psi.empty()) {
    throw std::invalid_argument(std::string(who) +
                                " run has no time means (the run ended before its spin-up)");
  }
  if (r.layers != m.n_layers()) {
    throw std::invalid_argument(std::string(who) + " run has " + std::to_string(r.layers) +
                                " layers, the coarse model " + std::to_string(m.n_layers()));
  }
}

// Series, window and budget integrals of a record; energies filled by the caller.
ScoreRun common(const RunRecord& r) {
  ScoreRun s;
  s.window_start_s = r.mean_start_s;
  for (const SeriesSample& x : r.series) {
    s.series_t_s.push_back(x.t);
    s.series_total.push_back(x.total);
  }
  s.budget.terms = r.budget_integral;
  s.budget.closure = r.closure_integral;
  s.budget.energy_start = r.energy_window_start;
  s.budget.energy_end = r.energy_window_end;
  s.budget.window_s = r.t_end - r.mean_start_s;
  return s;
}

EnergySeries series_of(const RunRecord& r) {
  EnergySeries e;
  for (const SeriesSample& x : r.series) {
    e.t_s.push_back(x.t);
    Energy y;
    y.kinetic = x.kinetic;
    y.potential = x.potential;
    e.energy.push_back(std::move(y));
  }
  return e;
}

void set_means(ScoreRun& s, const CoarseFields& f) {
  s.mean_psi = f.state.psi;
  s.mean_q = f.state.q;
  s.wall_psi = f.state.wall_psi;
  s.mean_state_energy = f.energy;
}

}  // namespace

ScoreRun candidate_score_run(const RunRecord& run, const Model& coarse) {
  check_means(run, coarse, "the candidate");
  for (const Field& f : run.mean_psi) {
    if (!on_grid(coarse.grid(), f)) {
      throw std::invalid_argument("the candidate run is not on the coarse grid");
    }
  }
  ScoreRun s = common(run);
  set_means(s, coarse_fields(coarse, run.mean_psi));
  s.mean_energy = time_mean_energy(series_of(run), run.mean_start_s);
  s.energy_note = "its own series on the coarse grid";
  return s;
}

ScoreRun truth_score_run(const RunRecord& truth, const Model& coarse) {
  check_means(truth, coarse, "the truth");
  const Grid& cg = coarse.grid();
  ScoreRun s = common(truth);
  set_means(s, coarse_grain_truth(coarse, truth.grid, truth.mean_psi));
  // Time-mean energy from the snapshots in the window, coarse-grained when they are on the truth
  // grid: the same ruler as the candidate's.
  EnergySeries snaps;
  for (std::size_t n = 0; n < truth.snapshot_psi.size() && n < truth.snapshot_t.size(); ++n) {
    if (truth.snapshot_t[n] <= truth.mean_start_s) continue;
    const std::vector<Field>& psi = truth.snapshot_psi[n];
    if (psi.empty()) continue;
    const CoarseFields f = on_grid(cg, psi.front()) ? coarse_fields(coarse, psi)
                                                    : coarse_grain_truth(coarse, truth.grid, psi);
    snaps.t_s.push_back(truth.snapshot_t[n]);
    snaps.energy.push_back(f.energy);
  }
  if (!snaps.t_s.empty()) {
    s.mean_energy = time_mean_energy(snaps, truth.mean_start_s);
    s.energy_note = std::to_string(snaps.t_s.size()) + " coarse-grained snapshots";
  } else {
    // Both parts of the split then on the truth grid, with the same operators.
    const Model truth_model(truth.grid, coarse.params());
    s.mean_energy = time_mean_energy(series_of(truth), truth.mean_start_s);
    s.mean_state_energy = truth_model.energy(truth_model.state_from_psi(truth.mean_psi));
    s.energy_note = "its own series on the truth grid (no snapshots in the window)";
  }
  return s;
}

ScoreBasin score_basin(const Model& coarse, const ScoreRun& truth,
                       const std::vector<int>& sheltered_layers) {
  ScoreBasin b;
  b.grid = coarse.grid();
  b.thickness_m = coarse.params().thickness_m;
  b.beta = coarse.params().beta;
  const std::vector<double> ld = coarse.layers().deformation_radii();
  b.ld1_m = ld.empty() ? 0.0 : ld.front();
  b.sheltered_layers = sheltered_layers;
  switch (coarse.params().wind.profile) {
    case WindProfile::single_gyre:
      b.gyres = {Gyre::anticyclonic};
      break;
    case WindProfile::double_gyre:
      b.gyres = {Gyre::anticyclonic, Gyre::cyclonic};
      break;
    case WindProfile::table: {
      const Field t = barotropic_transport(truth.mean_psi, truth.wall_psi, b.thickness_m);
      const double a = std::abs(gyre_extremum(b.grid, t, 0.0, Gyre::anticyclonic).value);
      const double c = std::abs(gyre_extremum(b.grid, t, 0.0, Gyre::cyclonic).value);
      const double strong = std::max(a, c);
      if (a > 0.0 && a >= 0.1 * strong) b.gyres.push_back(Gyre::anticyclonic);
      if (c > 0.0 && c >= 0.1 * strong) b.gyres.push_back(Gyre::cyclonic);
      break;
    }
  }
  return b;
}

ScoreOptions score_options(const Case& c) {
  ScoreOptions o;
  o.spec = c.scoring;
  return o;
}

}  // namespace plateau
