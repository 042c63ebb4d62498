#pragma once
// The closure's fractional step (CLOSURES.md, "Time stepping of the closure"). After the
// dynamics step, with state.q updated and state.psi (and u, v, K) still the step's start:
//
//   F = closure fluxes of (psi frozen, q), wall faces set to zero,
//   q <- q - dt div F                                  (forward Euler, no inversion),
//
// sub-stepped for full-PV targets so that k_max dt_sub (1/dx^2 + 1/dy^2) <= 1/4 (the flux is
// re-evaluated on each sub-step's q; face fluxes are then monotone, they stay so up to 1/2).
// For the stretching target q~ = S psi is fixed by the frozen psi, so the flux is the same on
// every sub-step and one step is exact; its stiffness is K / Ld_min^2 (closure_step_numbers).
// The energy tendency is Model::energy_tendency of the applied dq/dt with the frozen psi as
// weight (the run's budget); the closure's prognostic fields are then stepped with the fluxes
// applied over the step (their time mean).
//
// The interior sum of q dx dy is unchanged: the divergence of face fluxes telescopes and the
// faces next to the walls carry nothing.

#include <cstdint>
#include <memory>
#include <span>
#include <string>
#include <vector>

#include "closures/closure.hpp"
#include "harness/model/model.hpp"
#include "harness/run/run.hpp"

namespace plateau {

// The closure's view of a model's grid and layers.
[[nodiscard]] closure::Setup make_setup(const Model& model);
// The same without building the model (no transforms planned): for `plateau check`, with
// make_grid() and make_model_params() of harness/run/setup.hpp.
[[nodiscard]] closure::Setup make_setup(const Grid& grid, const ModelParams& params);

// Builds the closure; an exception from its constructor (parameters that contradict each
// other, a plug-in that refuses) becomes a CaseError naming it.
[[nodiscard]] std::unique_ptr<closure::Closure> make_closure(const closure::Info& info,
                                                             const closure::Params& params,
                                                             const closure::Setup& setup);

// Sub-steps a full-PV closure needs for a largest diffusivity k_max: the least n with
// k_max (dt/n) (1/dx^2 + 1/dy^2) <= limit.
[[nodiscard]] int substeps_for(double k_max, const closure::Setup& s, double limit = 0.25);

// What `plateau check` reports for a closure on a grid, at the closure's diffusivity bound:
//   make_closure(info, resolve_params(...), make_setup(grid, params)) then
//   closure_step_numbers(*closure, setup).
struct ClosureStepNumbers {
  bool full_pv = true;
  double k_bound_m2_per_s = 0.0;
  double diffusion_number = 0.0;      // K dt (1/dx^2 + 1/dy^2)
  int substeps = 1;                   // full PV: substeps_for(K); stretching: 1
  double stretching_stiffness = 0.0;  // K dt / Ld_min^2 (stretching; 0 for one layer)
};
[[nodiscard]] ClosureStepNumbers closure_step_numbers(const closure::Closure& c,
                                                      const closure::Setup& s);

// Sets the fluxes on the faces that touch a wall (and the unused faces along the walls) to 0.
void zero_wall_faces(const closure::Setup& s, closure::Fluxes& f);
// dq/dt = -div F at the interior nodes (walls 0).
void flux_divergence(const closure::Setup& s, const closure::Fluxes& f, std::vector<Field>& out);

struct HostOptions {
  // Tests only: false applies a full-PV closure in one step whatever its K dt / dx^2.
  bool substepping = true;
  double substep_limit = 0.25;
  // Time means of the closure's fields over the steps that end after this step (as the run's
  // means); negative: no means.
  std::int64_t means_after_step = -1;
  // ... sampled at the steps whose end is a multiple of this (diagnostics cost about one more
  // flux evaluation, so a run samples them at its series interval rather than every step).
  std::int64_t means_every = 1;
};

// A field of the closure, time-averaged, for the output.
struct ClosureMeanField {
  closure::FieldInfo info;
  std::vector<Field> values;  // count_of(info.placement) Fields
};

class ClosureHost final : public BudgetHook {
 public:
  ClosureHost(const Model& model, std::unique_ptr<closure::Closure> closure,
              HostOptions options = {});

  void after_dynamics(ModelState& state) override { apply(state); }
  [[nodiscard]] double last_energy_tendency() const override { return energy_tendency_; }
  // Checkpoints: the prognostic fields, the time means and the sub-step counts, so that a
  // resumed run continues bit for bit. The closure object itself holds no state across steps
  // (CLOSURES.md: whatever it carries is a prognostic field, stepped and stored by the host).
  void save(io::CheckpointWriter& w, const std::string& prefix) const override;
  void load(const io::CheckpointReader& r, const std::string& prefix) override;

  // The fractional step on state.q (psi frozen); also steps the prognostic fields.
  void apply(ModelState& state);

  // The view a closure sees of `state`, with this host's prognostic fields.
  [[nodiscard]] closure::StateView view(const ModelState& state) const;

  [[nodiscard]] const closure::Closure& closure() const { return *closure_; }
  [[nodiscard]] const closure::Setup& setup() const { return setup_; }
  [[nodiscard]] int last_substeps() const { return last_substeps_; }
  [[nodiscard]] int max_substeps() const { return max_substeps_; }
  // The fluxes applied over the last step (time mean of its sub-steps, wall faces 0).
  [[nodiscard]] const closure::Fluxes& last_applied() const { return applied_; }
  // dq/dt of the last step at the interior nodes, s^-2 (its change of q over dt).
  [[nodiscard]] const std::vector<Field>& last_tendency() const { return tendency_; }
  [[nodiscard]] std::span<Field> prognostic() { return prognostic_; }
  [[nodiscard]] std::span<const Field> prognostic() const { return prognostic_; }

  // Time means: the closure's prognostic and diagnostic fields and its PV tendency
  // ("closure_pv_tendency"), over the steps counted by mean_count().
  [[nodiscard]] std::vector<ClosureMeanField> mean_fields() const;
  [[nodiscard]] std::int64_t mean_count() const { return mean_count_; }

 private:
  void accumulate_means(const ModelState& state, const closure::StateView& v);

  const Model& model_;
  std::unique_ptr<closure::Closure> closure_;
  HostOptions options_;
  closure::Setup setup_;
  closure::Scratch scratch_;
  closure::Fluxes work_;
  closure::Fluxes applied_;
  std::vector<Field> tendency_;
  std::vector<Field> divergence_;
  std::vector<closure::FieldInfo> prognostic_info_;
  std::vector<closure::FieldInfo> diagnostic_info_;
  std::vector<Field> prognostic_;
  std::vector<Field> diagnostics_;
  double energy_tendency_ = 0.0;
  int last_substeps_ = 0;
  int max_substeps_ = 0;
  // Means
  std::int64_t mean_count_ = 0;
  std::vector<Field> mean_prognostic_;
  std::vector<Field> mean_diagnostics_;
  std::vector<Field> mean_tendency_;
};

}  // namespace plateau
