#pragma once
// The numbers a modeller looks at first, derived from a Case alone (no run needed): vertical
// modes, boundary-layer widths, time-step limits, spin-up and cost. Pure functions; `plateau
// check` prints them, and any command may use assess() to refuse a case before running it.
//
// Formulas (PHYSICS.md sections 1-3 and 5; SI units throughout):
//   stretching     (S psi)_k = f0^2/(H_k g'_{k-1}) (psi_{k-1}-psi_k) + f0^2/(H_k g'_k)
//   (psi_{k+1}-psi_k) modes          S = P diag(-lambda_m) P^-1, lambda_0 = 0, Ld_m =
//   1/sqrt(lambda_m) Munk width     d_M = (A2/beta)^(1/3);  biharmonic analogue d_4 =
//   (A4/beta)^(1/5) Stommel width  d_S = r/beta Sverdrup       T = Lx max_y|curl tau| / (rho0 beta)
//   (curl_z tau = -d tau_x/dy) velocities     interior   U_i = T/(H1 Lx) = max|curl tau| / (rho0
//   beta H1)
//                  boundary   U_b = c T/(H1 d), d the widest of d_M, d_4, d_S (dx if all are 0),
//                             c = exp(-pi/(3 sqrt 3)) ~ 0.546 when d = d_M: the peak of Munk's
//                             (1950) profile v = (T/d) (2/sqrt3) e^(-s/2) sin(sqrt3 s/2), s = x/d;
//                             c = 1 otherwise (the peak of Stommel's exponential layer, and a
//                             conservative choice for the biharmonic layer).
//                  Both assume the wind-driven transport sits in the top layer, and use the peak
//                  of a seasonal cycle, (1 + seasonal_amplitude) times the mean stress.
//   CFL            ARCHITECTURE.md: max(|u|/dx + |v|/dy) dt <= cfl_limit; with |u| = |v| = U
//                  (conservative): dt_cfl = cfl_limit / (U (1/dx + 1/dy))
//   friction       AB3 is stable for a real negative rate lambda when lambda dt >= -6/11. The
//                  5-point Laplacian's eigenvalues reach -4 s, s = 1/dx^2 + 1/dy^2, so
//                  Laplacian    A2 dt s   <= 3/22
//                  biharmonic   A4 dt s^2 <= 3/88   (the rate is A4 (4 s)^2)
//                  together     dt (A2 s / (3/22) + A4 s^2 / (3/88)) <= 1
//                  Bottom drag adds a rate r, negligible at these r and dt, and is left out.
//   Rossby         first baroclinic long-wave basin crossing Lx / (beta Ld1^2)
//   cost           (nx+1)(ny+1) nodes x layers x steps, times kCostPerNodeLayerStep_s.

#include <string>
#include <vector>

#include <Eigen/Core>

#include "harness/case/case.hpp"

namespace plateau {

// Estimated wall time per grid node, per layer, per time step of one thread (an estimate for
// planning, of the order of a few hundred floating-point operations: 2 sine transforms per mode,
// the Arakawa Jacobian, friction). Measured numbers belong to the benchmarks, not here.
inline constexpr double kCostPerNodeLayerStep_s = 60e-9;

// AB3 stability bounds (see the header comment).
inline constexpr double kAb3LaplacianBound = 3.0 / 22.0;
inline constexpr double kAb3BiharmonicBound = 3.0 / 88.0;
// Munk (1950): peak of the western boundary velocity in units of T/(H1 d_M).
double munk_peak_factor();

// The stretching matrix S of PHYSICS.md section 1 (m^-2), layers from the top.
Eigen::MatrixXd stretching_matrix(double f0_per_s, const std::vector<double>& thickness_m,
                                  const std::vector<double>& reduced_gravity_m_per_s2);
// lambda_m > 0 of the baroclinic modes (m^-2), ascending; the barotropic lambda_0 = 0 is left
// out, so one layer gives an empty vector.
std::vector<double> baroclinic_eigenvalues_per_m2(
    double f0_per_s, const std::vector<double>& thickness_m,
    const std::vector<double>& reduced_gravity_m_per_s2);
// Ld_m = 1/sqrt(lambda_m), m = 1..N-1, descending (Ld1 first), in m.
std::vector<double> deformation_radii_m(double f0_per_s, const std::vector<double>& thickness_m,
                                        const std::vector<double>& reduced_gravity_m_per_s2);

double munk_width_m(double viscosity_m2_per_s, double beta_per_m_s);              // 0 if A2 = 0
double biharmonic_munk_width_m(double biharmonic_m4_per_s, double beta_per_m_s);  // 0 if A4 = 0
double stommel_width_m(double bottom_drag_per_s, double beta_per_m_s);            // 0 if r = 0

// Steady zonal stress tau_x(y) of the case's wind (N m^-2), y from the southern wall in m; the
// formula of each shape is in case.hpp beside WindSpec.
double wind_stress_x(const WindSpec& wind, double ly_m, double y_m);
// max over y of |curl_z tau| = |d tau_x / dy| (N m^-3).
double max_wind_curl(const WindSpec& wind, double ly_m);

// Friction limit of AB3 (s); infinite without lateral friction.
double friction_dt_limit_s(double viscosity_m2_per_s, double biharmonic_m4_per_s, double dx_m,
                           double dy_m);
// CFL-limited dt for a speed U taken for both |u| and |v| (s).
double cfl_dt_limit_s(double speed_m_per_s, double dx_m, double dy_m, double cfl_limit);

struct GridNumbers {
  int nx = 0;
  int ny = 0;
  double dx_m = 0.0;
  double dy_m = 0.0;
  double dt_s = 0.0;
  std::vector<double> intervals_per_radius;  // Ld_m / max(dx, dy), per baroclinic mode

  double munk_width_m = 0.0;
  double munk_intervals = 0.0;  // d_M / dx
  double biharmonic_width_m = 0.0;
  double biharmonic_intervals = 0.0;
  double stommel_width_m = 0.0;
  double stommel_intervals = 0.0;

  // The boundary layer used for the boundary-current speed: "Munk", "biharmonic Munk",
  // "Stommel", or "grid" (no friction width: one dx).
  std::string boundary_layer;
  double boundary_width_m = 0.0;
  double boundary_speed_m_per_s = 0.0;
  double interior_speed_m_per_s = 0.0;

  double cfl_dt_interior_s = 0.0;
  double cfl_dt_boundary_s = 0.0;
  double cfl_interior = 0.0;  // (1/dx + 1/dy) U dt at the case's dt
  double cfl_boundary = 0.0;

  double friction_dt_laplacian_s = 0.0;   // infinite when A2 = 0
  double friction_dt_biharmonic_s = 0.0;  // infinite when A4 = 0
  double friction_dt_s = 0.0;             // both terms together
  double friction_number = 0.0;           // dt / friction_dt_s (<= 1 is stable)

  long long steps = 0;          // ceil(run length / dt)
  double node_layer_steps = 0;  // (nx+1)(ny+1) x layers x steps
  double estimated_wall_s = 0;  // node_layer_steps x kCostPerNodeLayerStep_s, one thread
};

struct DerivedNumbers {
  std::vector<double> eigenvalues_per_m2;   // baroclinic lambda_m, ascending
  std::vector<double> deformation_radii_m;  // Ld_m, descending

  double max_wind_curl_n_per_m3 = 0.0;
  double sverdrup_transport_m3_per_s = 0.0;  // mean stress
  double rossby_crossing_s = 0.0;            // Lx/(beta Ld1^2); infinite for one layer
  double spinup_crossings = 0.0;             // spin-up / crossing time; 0 for one layer

  GridNumbers truth;
  GridNumbers coarse;
};

GridNumbers derive_grid(const Case& c, const GridSpec& grid, double sverdrup_transport_m3_per_s,
                        const std::vector<double>& radii_m);
DerivedNumbers derive(const Case& c);

// What `check` says about the numbers. A warning is advice; a failure means the run would break.
struct Finding {
  enum class Severity { warning, failure };
  Severity severity = Severity::warning;
  std::string grid;     // "truth", "coarse", or empty for the basin as a whole
  std::string message;  // one line, with the numbers and the limit it compares against
};

// Warnings: dt above a CFL estimate's limit; the truth resolving Ld1 by fewer than
// kMinTruthIntervalsPerLd1 intervals; a lateral boundary layer resolved by fewer than
// kMinBoundaryLayerIntervals; no lateral friction at all; a spin-up shorter than
// kMinSpinupCrossings Rossby crossing times.
// Failures ("badly"): the boundary-current CFL estimate above kBadCflFactor x cfl_limit, the
// interior (slowest) estimate above cfl_limit, or dt above the AB3 friction bound, which is a
// stability bound and not an estimate, so any excess fails.
inline constexpr double kMinTruthIntervalsPerLd1 = 3.0;    // eddy-permitting (PHYSICS.md 5)
inline constexpr double kMinBoundaryLayerIntervals = 1.5;  // PHYSICS.md 3, coarse friction
inline constexpr double kMinSpinupCrossings = 3.0;         // "several times" (PHYSICS.md 5)
inline constexpr double kBadCflFactor = 2.0;
std::vector<Finding> assess(const Case& c, const DerivedNumbers& d);

}  // namespace plateau
