#pragma once
// PV inversion: q_k -> psi_k through vertical modes and a fast Helmholtz solve per mode
// (PHYSICS.md section 2).
//
// Each mode solves (L - lambda_m) phi_m = rhs_m on the interior with phi_m = 0 on the walls by a
// 2-D type-I sine transform; L is the 5-point Laplacian, whose sine-mode eigenvalues are
// mu_ij = -(4/dx^2) sin^2(i pi / 2nx) - (4/dy^2) sin^2(j pi / 2ny), so the inverse is exact for
// the discrete operator. Baroclinic modes then get C_m h_m added, with h_m = 1 + g_m the
// homogeneous solution ((L - lambda_m) h_m = 0 inside, h_m = 1 on the walls) and C_m chosen so
// that the trapezoid integral of phi_m (the interface volume) stays at its prescribed value. The
// barotropic mode keeps phi_0 = 0 on the walls (no net through-flow).

#include <memory>
#include <vector>

#include "harness/model/grid.hpp"
#include "harness/model/layers.hpp"
#include "harness/model/sine_transform.hpp"

namespace plateau {

class Inversion {
 public:
  Inversion(const Grid& grid, const LayerStack& layers, double beta);

  // psi from q (interior values of q are used). mode_mass holds the prescribed trapezoid
  // integral of each mode (entry 0 unused). Writes psi on every node; wall_psi receives c_k.
  void invert(const std::vector<Field>& q, const std::vector<double>& mode_mass,
              std::vector<Field>& psi, std::vector<double>& wall_psi) const;

  // Trapezoid integral of each mode of psi (what invert keeps fixed).
  [[nodiscard]] std::vector<double> mode_masses(const std::vector<Field>& psi) const;

  [[nodiscard]] const Grid& grid() const { return grid_; }
  [[nodiscard]] const LayerStack& layers() const { return layers_; }

 private:
  Grid grid_;
  LayerStack layers_;
  double beta_;
  SineTransform2D dst_;
  std::vector<std::vector<double>> inv_eigen_;  // per mode: 1 / ((mu_ij - lambda_m) * norm)
  std::vector<Field> homogeneous_;              // h_m on every node (mode 0 unused)
  std::vector<double> homogeneous_mass_;        // trapezoid integral of h_m
  mutable std::vector<FftwBuffer> work_;        // one transform buffer per mode
  mutable std::vector<double> row_sums_;        // per mode and interior row: sum of phi^0

  void solve_mode(int m, double* buffer) const;  // in place: rhs in, phi^0 out (interior)
};

}  // namespace plateau
