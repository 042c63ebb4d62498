#pragma once
// The N-layer quasi-geostrophic model of a closed basin (PHYSICS.md sections 1-3).
//
//   q_k = lap(psi_k) + beta (y - y0) + (S psi)_k
//   dq_k/dt = -J(psi_k, q_k) + W_k + D_k            (closures: a separate fractional step)
//   W_1 = curl(tau) / (rho0 H_1);  D_k = A2 lap zeta_k - A4 lap^2 zeta_k - delta_kN r zeta_N
//
// Time stepping: third-order Adams-Bashforth (forward Euler, then AB2, to start). Wall nodes of
// q carry zeta_w from the wall condition plus beta (y - y0) + (S psi)_w; the biharmonic term's
// second wall condition is lap(zeta) = 0 on the walls.
//
// Energy (per unit area integrated, m^5 s^-2; times rho0 for joules):
//   E = 1/2 sum_k H_k |grad psi_k|^2 + 1/2 sum_j (f0^2/g'_j) (psi_j - psi_{j+1})^2
// with the kinetic part summed over grid edges (summation by parts with the 5-point Laplacian)
// and the potential part by the trapezoid rule (the mass constraint's integral), so that
// dE/dt = -sum_k H_k sum_interior (psi_k - c_k) dq_k/dt dx dy holds exactly in space, and every
// budget term below uses that weight.

#include <cstdint>
#include <vector>

#include "harness/model/grid.hpp"
#include "harness/model/inversion.hpp"
#include "harness/model/layers.hpp"
#include "harness/model/operators.hpp"
#include "harness/model/wind.hpp"

namespace plateau {

enum class Advection {
  arakawa,  // full nonlinear J(psi, q)
  linear,   // beta psi_x only (J(psi, beta y)), for the linear published solutions
  off,
};

struct ModelParams {
  double f0 = 0.0;       // s^-1
  double beta = 0.0;     // m^-1 s^-1
  double rho0 = 1025.0;  // kg m^-3
  std::vector<double> thickness_m;
  std::vector<double> reduced_gravity;  // m s^-2
  Wind wind;
  double a2 = 0.0;           // Laplacian viscosity, m^2 s^-1
  double a4 = 0.0;           // biharmonic viscosity, m^4 s^-1
  double bottom_drag = 0.0;  // s^-1
  WallKind wall = WallKind::free_slip;
  double slip_length_m = 0.0;
  Advection advection = Advection::arakawa;
  // psi held fixed: q is advected, forced, damped (and acted on by a closure) with no inversion.
  bool prescribed_flow = false;
  // Keep the wall values of q as given instead of diagnosing them (published steady states
  // whose wall q is part of the solution, such as Fofonoff's).
  bool fixed_wall_q = false;
  double dt = 0.0;  // s
};

struct ModelState {
  double t = 0.0;  // s since the run's start
  std::int64_t step = 0;
  std::vector<Field> q;           // s^-1, every node
  std::vector<Field> psi;         // m^2 s^-1, every node
  std::vector<Field> zeta;        // s^-1, every node (walls from the wall condition)
  std::vector<double> wall_psi;   // c_k
  std::vector<double> mode_mass;  // trapezoid integral of each mode of psi, kept fixed
  // Adams-Bashforth memory: tendencies of the previous two steps ([0] = n-1, [1] = n-2).
  std::vector<Field> tend_prev1;
  std::vector<Field> tend_prev2;
  int history = 0;  // how many previous tendencies are valid (0..2)
};

// Energy tendency of each term at one state, m^5 s^-3 (times rho0: watts).
struct BudgetTerms {
  double wind = 0.0;
  double bottom_drag = 0.0;
  double lateral_friction = 0.0;
  double advection = 0.0;  // zero to rounding with the Arakawa Jacobian
  [[nodiscard]] double sum() const { return wind + bottom_drag + lateral_friction + advection; }
};

struct Energy {
  std::vector<double> kinetic;    // per layer, m^5 s^-2
  std::vector<double> potential;  // per interface, m^5 s^-2
  [[nodiscard]] double total() const;
};

// Called by step() after the dynamics update and before the inversion: state.q holds the
// updated q, state.psi still the step's starting psi. Closures act here.
class StepHook {
 public:
  virtual ~StepHook() = default;
  virtual void after_dynamics(ModelState& state) = 0;
};

class Model {
 public:
  Model(const Grid& grid, ModelParams params);

  [[nodiscard]] const Grid& grid() const { return grid_; }
  [[nodiscard]] const LayerStack& layers() const { return layers_; }
  [[nodiscard]] const ModelParams& params() const { return params_; }
  [[nodiscard]] int n_layers() const { return layers_.n; }

  // The basin at rest: psi = 0, q = beta (y - y0).
  [[nodiscard]] ModelState rest_state() const;
  // A state from layer streamfunctions (constant on the walls): q from its definition, the
  // mode masses from psi.
  [[nodiscard]] ModelState state_from_psi(const std::vector<Field>& psi) const;
  // psi, zeta and the wall values of q from the interior q (one inversion).
  void diagnose(ModelState& s) const;

  // Tendency of q at the interior nodes (wall nodes 0), without closures.
  void tendency(const ModelState& s, std::vector<Field>& out) const;
  // The energy tendency of each term of tendency() at state s.
  [[nodiscard]] BudgetTerms budget(const ModelState& s) const;
  // Energy tendency of an arbitrary q tendency: -sum_k H_k sum (psi_k - c_k) dq_k dx dy.
  [[nodiscard]] double energy_tendency(const ModelState& s, const std::vector<Field>& dq) const;
  [[nodiscard]] Energy energy(const ModelState& s) const;

  // One step of length params().dt.
  void step(ModelState& s, StepHook* hook = nullptr);

  // Wind forcing of the top layer at model time t, s^-2 (row j of the grid).
  [[nodiscard]] double wind_forcing(int j, double t) const;

  // Barotropic transport streamfunction sum_k H_k (psi_k - c_k), m^3 s^-1 (zero on the walls).
  [[nodiscard]] Field barotropic_transport(const ModelState& s) const;

 private:
  Grid grid_;
  ModelParams params_;
  LayerStack layers_;
  Inversion inversion_;
  std::vector<double> wind_curl_;       // curl(tau)/(rho0 H1) per row at seasonal factor 1, s^-2
  mutable std::vector<Field> scratch_;  // per layer: lap(zeta) for the biharmonic term
  mutable std::vector<Field> tend_;     // the current tendency

  void wall_q(ModelState& s) const;
  // tendency() in parts: sizing of out (outside any parallel region), then the work-sharing
  // loops, which bind to the caller's parallel region (step() shares one with the update).
  void prepare_tendency(std::vector<Field>& out) const;
  void tendency_sweep(const ModelState& s, std::vector<Field>& out) const;
  void lateral_friction_into(const ModelState& s, int k, Field& out, double weight) const;
};

}  // namespace plateau
