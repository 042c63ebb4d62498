#pragma once
// Eddy statistics of a run on the coarse grid (SCORING.md, a priori skill and closed-contour
// budget): a watch-only hook that samples the run's state at a fixed step interval after the
// spin-up, coarse-grains it (harness/coarse/; r = 1 for a run already on the coarse grid) and
// accumulates what the scores need that time means of psi alone cannot give:
//
//   fJ_k      filter(J(psi_k, q_k)) with the run's own Jacobian on its own grid      s^-2
//   Jc_k      J_c(psi~_k, q~_k), psi~ = filter psi, q~ its q with the coarse operators  s^-2
//   fuq, fvq  filter(u q), filter(v q) (node-centred velocities)                       m s^-2
//   uq~, vq~  u~ q~, v~ q~ of the filtered state                                       m s^-2
//   psi~      filtered psi (its mean gives the coarse-grained mean state)
//   W         the coarse model's wind forcing at the sample time
//
// plus the first and last filtered q (storage) and filtered psi snapshots at their own interval.
// From the means (sample count n, every sample weighing equally) finish() forms, per layer:
//
//   transient plus subfilter eddy forcing  e_T = mean fJ - J_c(psi~_bar, q~_bar)
//   subfilter eddy forcing                 e_S = mean fJ - mean Jc
//   eddy PV flux (transient plus subfilter) F_T = mean(fuq, fvq) - (u~_bar q~_bar, v~_bar q~_bar)
//   eddy PV flux (subfilter)                F_S = mean(fuq, fvq) - mean(uq~, vq~)
//
// e is the divergence of the eddy flux in the form the model's Arakawa Jacobian takes it
// (div(u q) = J(psi, q) for a non-divergent u); the eddies' PV tendency is -e. F is the same
// flux at the nodes in plain centred form, for the diffusivity diagnostics (its divergence
// agrees with e to the truncation error, not to rounding).
//
// Every quantity is accumulated in a fixed order, so the statistics are bit for bit the same
// with any thread count, and they are saved in the run's checkpoint.

#include <cstdint>
#include <string>
#include <vector>

#include "harness/model/grid.hpp"
#include "harness/model/model.hpp"
#include "harness/run/run.hpp"

namespace plateau {

struct EddyStatisticsOptions {
  std::int64_t start_after_step = 0;  // samples at steps s > this (the spin-up) ...
  std::int64_t sample_every = 1;      // ... where (s - start_after_step) % sample_every == 0
  std::int64_t snapshot_every = 0;    // filtered psi at steps that are a multiple; 0: none
};

// What finish() returns: every field on the coarse grid, per layer.
struct EddyStatistics {
  std::int64_t samples = 0;
  double first_sample_t = 0.0;
  double last_sample_t = 0.0;
  std::vector<Field> mean_psi;           // mean of filtered psi, m^2 s^-1
  std::vector<double> mean_wall_psi;     // its wall values
  std::vector<Field> forcing_transient;  // e_T, s^-2
  std::vector<Field> forcing_subfilter;  // e_S, s^-2
  std::vector<Field> flux_x_transient;   // F_T, m s^-2
  std::vector<Field> flux_y_transient;
  std::vector<Field> flux_x_subfilter;  // F_S, m s^-2
  std::vector<Field> flux_y_subfilter;
  std::vector<Field> storage;                    // (q~_last - q~_first) / (t_last - t_first), s^-2
  std::vector<Field> wind_forcing;               // mean W (top layer; 0 below), s^-2
  std::vector<double> snapshot_t;                // s
  std::vector<std::vector<Field>> snapshot_psi;  // filtered psi
};

class EddyStatisticsHook final : public BudgetHook {
 public:
  // `run` is the model being stepped, `coarse` the coarse model whose grid and operators the
  // statistics use (the same object for a coarse run).
  EddyStatisticsHook(const Model& run, const Model& coarse, EddyStatisticsOptions options);

  void after_dynamics(ModelState& /*state*/) override {}
  void after_step(const ModelState& state) override;
  [[nodiscard]] double last_energy_tendency() const override { return 0.0; }
  void save(io::CheckpointWriter& w, const std::string& prefix) const override;
  void load(const io::CheckpointReader& r, const std::string& prefix) override;

  [[nodiscard]] std::int64_t samples() const { return samples_; }
  // The statistics so far (at least one sample: std::logic_error otherwise).
  [[nodiscard]] EddyStatistics finish() const;

 private:
  void sample(const ModelState& state);

  const Model& run_;
  const Model& coarse_;
  EddyStatisticsOptions options_;
  int layers_ = 0;
  std::int64_t samples_ = 0;
  double first_t_ = 0.0;
  double last_t_ = 0.0;
  std::vector<Field> sum_fj_, sum_jc_, sum_fuq_, sum_fvq_, sum_uq_, sum_vq_, sum_psi_;
  std::vector<double> sum_wall_;
  Field sum_w_;
  std::vector<Field> first_q_, last_q_;
  std::vector<double> snapshot_t_;
  std::vector<std::vector<Field>> snapshot_psi_;
  // Scratch
  Field work_, u_, v_;
};

// D_k, the friction part of the model's tendency (lateral friction and bottom drag) at the
// state with layer streamfunctions psi, s^-2 at the interior nodes: Model::tendency of a copy of
// the model with advection and wind switched off.
std::vector<Field> friction_tendency(const Model& model, const std::vector<Field>& psi);

}  // namespace plateau
