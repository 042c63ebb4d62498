#pragma once
// The layer stack and its vertical modes (PHYSICS.md section 2).
//
// (S psi)_k = f0^2/(H_k g'_{k-1}) (psi_{k-1} - psi_k) + f0^2/(H_k g'_k) (psi_{k+1} - psi_k);
// S = P diag(-lambda_m) P^-1 with lambda_0 = 0 (barotropic) and lambda_m > 0 the inverse squared
// deformation radii of the baroclinic modes, sorted ascending.

#include <vector>
#include <Eigen/Core>

namespace plateau {

struct LayerStack {
  int n = 0;
  double f0 = 0.0;             // s^-1
  std::vector<double> h;       // thickness, m
  std::vector<double> gprime;  // reduced gravity below layer k, m s^-2 (n - 1 values)
  Eigen::MatrixXd s;           // stretching operator, m^-2
  Eigen::MatrixXd p;           // columns: modal structures, layer = p * mode
  Eigen::MatrixXd p_inv;       // mode = p_inv * layer
  Eigen::VectorXd lambda;      // m^-2, lambda(0) = 0

  LayerStack() = default;
  LayerStack(double f0_, std::vector<double> thickness_m, std::vector<double> gprime_m_s2);

  // Baroclinic deformation radii Ld_m = 1/sqrt(lambda_m), m = 1..n-1, in m.
  [[nodiscard]] std::vector<double> deformation_radii() const;
  [[nodiscard]] double total_depth() const;
};

}  // namespace plateau
