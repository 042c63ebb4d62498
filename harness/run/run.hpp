#pragma once
// The run loop: steps a model, lets a hook (a closure) act after each dynamics step,
// accumulates time means after spin-up, samples snapshots and the energy series with its
// budget terms, checkpoints at an interval, and stops with NumericalFailure on a non-finite
// field or a CFL breach (keeping the last good checkpoint).
//
// Everything a resumed run needs is in the checkpoint (the state with its Adams-Bashforth
// memory, the accumulators, the snapshots and series so far), stored as raw bits: a run
// stopped and resumed ends bit for bit identical to an uninterrupted one.

#include <atomic>
#include <cstdint>
#include <filesystem>
#include <functional>
#include <stdexcept>
#include <string>
#include <vector>

#include "harness/io/checkpoint.hpp"
#include "harness/model/model.hpp"

namespace plateau {

// A run that failed numerically (exit code 3 at the command line).
class NumericalFailure : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

// A run stopped on request (a signal, or a test's step limit) after writing its checkpoint.
class RunInterrupted : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

struct RunSchedule {
  double length_s = 0.0;
  double spinup_s = 0.0;
  double snapshot_interval_s = 0.0;    // 0: none
  double series_interval_s = 0.0;      // 0: every step
  double checkpoint_interval_s = 0.0;  // 0: none until the end
  double cfl_limit = 0.5;
  // The budget terms are evaluated every this many steps inside the averaging window (and at
  // every series sample) and integrated in time with the trapezoid rule between evaluations.
  // 1 is exact to the scheme's order; a truth run uses a few to save about a step's cost.
  int budget_every = 1;
};

struct Progress {
  std::int64_t step = 0;
  std::int64_t total_steps = 0;
  double model_time_s = 0.0;
  double wall_s = 0.0;  // since this process started the run
};

// A hook that acts after each dynamics step (a closure) or only watches (an accumulator of
// truth statistics). It reports the energy tendency it applied in its last call (m^5 s^-3, for
// the budget) and keeps whatever state it carries across steps in the run's checkpoint, so a
// resumed run is bit for bit identical to an uninterrupted one.
class BudgetHook : public StepHook {
 public:
  [[nodiscard]] virtual double last_energy_tendency() const = 0;
  // Called by run_model after every step's inversion, with the step's end state.
  virtual void after_step(const ModelState& /*state*/) {}
  // Blob names must start with `prefix`.
  virtual void save(io::CheckpointWriter& /*w*/, const std::string& /*prefix*/) const {}
  virtual void load(const io::CheckpointReader& /*r*/, const std::string& /*prefix*/) {}
};

// Several hooks in order (a closure, then an accumulator). The energy tendency is the sum;
// checkpoint blobs of hook i are prefixed "hook<i>_".
class HookChain final : public BudgetHook {
 public:
  explicit HookChain(std::vector<BudgetHook*> hooks) : hooks_(std::move(hooks)) {}
  void after_dynamics(ModelState& state) override;
  void after_step(const ModelState& state) override;
  [[nodiscard]] double last_energy_tendency() const override;
  void save(io::CheckpointWriter& w, const std::string& prefix) const override;
  void load(const io::CheckpointReader& r, const std::string& prefix) override;

 private:
  std::vector<BudgetHook*> hooks_;
};

struct RunOptions {
  std::filesystem::path checkpoint;  // empty: no checkpoints
  std::string checkpoint_key;        // identifies the run; another run's checkpoint is refused
  bool resume = false;               // start from the checkpoint if there is one
  BudgetHook* hook = nullptr;        // a closure acting after each dynamics step
  std::function<void(const Progress&)> progress;  // called about every 1% and at the end
  std::int64_t stop_after_step = -1;              // tests: stop as if killed once this step is done
  const std::atomic<bool>* stop_flag = nullptr;   // set by a signal handler: checkpoint and stop
};

// One sample of the energy series. Energies in m^5 s^-2, tendencies in m^5 s^-3.
struct SeriesSample {
  double t = 0.0;
  std::vector<double> kinetic;    // per layer
  std::vector<double> potential;  // per interface
  double total = 0.0;
  BudgetTerms terms;
  double closure = 0.0;
};

struct RunRecord {
  Grid grid;
  int layers = 0;
  double dt = 0.0;
  std::int64_t steps = 0;
  double t_end = 0.0;
  // Time means over the steps after spin-up (each step's end state weighs equally).
  std::int64_t mean_count = 0;
  double mean_start_s = 0.0;
  std::vector<Field> mean_psi;
  std::vector<Field> mean_q;
  std::vector<double> mean_wall_psi;
  // Snapshots at the snapshot interval.
  std::vector<double> snapshot_t;
  std::vector<std::vector<Field>> snapshot_psi;
  std::vector<std::vector<Field>> snapshot_q;
  std::vector<SeriesSample> series;
  // Time integrals over the averaging window of each budget term (every step, rectangle rule
  // at the step's start state), and the energy at the window's start and end: the residual is
  // (E_end - E_start) - sum of integrals.
  double energy_window_start = 0.0;
  double energy_window_end = 0.0;
  BudgetTerms budget_integral;
  double closure_integral = 0.0;
  [[nodiscard]] double budget_residual() const;
  ModelState final_state;
};

// Runs from rest (or from the checkpoint when resuming) to the end of the schedule.
RunRecord run_model(Model& model, const RunSchedule& schedule, const RunOptions& options);

}  // namespace plateau
