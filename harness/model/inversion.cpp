#include "harness/model/inversion.hpp"

#include <cmath>
#include <numbers>

namespace plateau {
namespace {

std::size_t interior_size(const Grid& g) {
  return static_cast<std::size_t>(g.nx - 1) * static_cast<std::size_t>(g.ny - 1);
}

}  // namespace

Inversion::Inversion(const Grid& grid, const LayerStack& layers, double beta)
    : grid_(grid), layers_(layers), beta_(beta), dst_(grid.nx, grid.ny) {
  const int n = layers_.n;
  const int mx = grid_.nx - 1;
  const int my = grid_.ny - 1;
  const double norm = dst_.normalisation();
  inv_eigen_.resize(static_cast<std::size_t>(n));
  std::vector<double> mux(static_cast<std::size_t>(mx));
  std::vector<double> muy(static_cast<std::size_t>(my));
  for (int i = 0; i < mx; ++i) {
    const double s = std::sin((i + 1) * std::numbers::pi / (2.0 * grid_.nx));
    mux[static_cast<std::size_t>(i)] = -4.0 / (grid_.dx * grid_.dx) * s * s;
  }
  for (int j = 0; j < my; ++j) {
    const double s = std::sin((j + 1) * std::numbers::pi / (2.0 * grid_.ny));
    muy[static_cast<std::size_t>(j)] = -4.0 / (grid_.dy * grid_.dy) * s * s;
  }
  for (int m = 0; m < n; ++m) {
    auto& e = inv_eigen_[static_cast<std::size_t>(m)];
    e.resize(interior_size(grid_));
    const double lam = layers_.lambda(m);
    for (int j = 0; j < my; ++j) {
      for (int i = 0; i < mx; ++i) {
        e[static_cast<std::size_t>(j) * static_cast<std::size_t>(mx) +
          static_cast<std::size_t>(i)] =
            1.0 /
            ((mux[static_cast<std::size_t>(i)] + muy[static_cast<std::size_t>(j)] - lam) * norm);
      }
    }
  }
  work_.reserve(static_cast<std::size_t>(n));
  for (int m = 0; m < n; ++m) work_.emplace_back(interior_size(grid_));
  modal_.assign(static_cast<std::size_t>(n), grid_.zeros());

  homogeneous_.assign(static_cast<std::size_t>(n), grid_.zeros());
  homogeneous_mass_.assign(static_cast<std::size_t>(n), 0.0);
  for (int m = 1; m < n; ++m) {
    double* b = work_[static_cast<std::size_t>(m)].data;
    const double lam = layers_.lambda(m);
    for (std::size_t p = 0; p < interior_size(grid_); ++p) b[p] = lam;
    solve_mode(m, b);
    Field& h = homogeneous_[static_cast<std::size_t>(m)];
    h.setOnes();
    for (int j = 1; j < grid_.ny; ++j) {
      for (int i = 1; i < grid_.nx; ++i) {
        h(i, j) = 1.0 + b[static_cast<std::size_t>(j - 1) * static_cast<std::size_t>(mx) +
                          static_cast<std::size_t>(i - 1)];
      }
    }
    homogeneous_mass_[static_cast<std::size_t>(m)] = trapezoid_integral(grid_, h);
  }
}

void Inversion::solve_mode(int m, double* buffer) const {
  dst_.apply(buffer);
  const auto& e = inv_eigen_[static_cast<std::size_t>(m)];
  const std::size_t size = e.size();
  for (std::size_t p = 0; p < size; ++p) buffer[p] *= e[p];
  dst_.apply(buffer);
}

void Inversion::invert(const std::vector<Field>& q, const std::vector<double>& mode_mass,
                       std::vector<Field>& psi, std::vector<double>& wall_psi) const {
  const int n = layers_.n;
  const int nx = grid_.nx;
  const int ny = grid_.ny;
  const auto mx = static_cast<std::size_t>(nx - 1);
  const Eigen::MatrixXd& pinv = layers_.p_inv;
  const Eigen::MatrixXd& p = layers_.p;
  const double beta = beta_;
  const Grid& g = grid_;

  // Every mode is independent: one thread per mode, each with its own buffer. Rows inside one
  // mode are not split, so the result does not depend on the thread count.
#pragma omp parallel for schedule(static, 1) if (threaded(grid_))
  for (int m = 0; m < n; ++m) {
    double* b = work_[static_cast<std::size_t>(m)].data;
    for (int j = 1; j < ny; ++j) {
      const double by = beta * (g.y(j) - g.y0);
      double* row = b + static_cast<std::size_t>(j - 1) * mx;
      for (int i = 1; i < nx; ++i) {
        double s = 0.0;
        for (int k = 0; k < n; ++k) s += pinv(m, k) * q[static_cast<std::size_t>(k)](i, j);
        // beta (y - y0) is a barotropic field: P^-1 maps it to mode 0 only (P's column 0 is
        // all ones), so subtract it there.
        row[i - 1] = (m == 0) ? s - by : s;
      }
    }
    solve_mode(m, b);
    Field& phi = modal_[static_cast<std::size_t>(m)];
    phi.setZero();
    for (int j = 1; j < ny; ++j) {
      const double* row = b + static_cast<std::size_t>(j - 1) * mx;
      for (int i = 1; i < nx; ++i) phi(i, j) = row[i - 1];
    }
    if (m > 0) {
      const double c = (mode_mass[static_cast<std::size_t>(m)] - trapezoid_integral(g, phi)) /
                       homogeneous_mass_[static_cast<std::size_t>(m)];
      phi += c * homogeneous_[static_cast<std::size_t>(m)];
    }
  }

  wall_psi.assign(static_cast<std::size_t>(n), 0.0);
  for (int k = 0; k < n; ++k) {
    Field& out = psi[static_cast<std::size_t>(k)];
    out.resize(nx + 1, ny + 1);
    double c = 0.0;
    for (int m = 1; m < n; ++m) c += p(k, m) * modal_[static_cast<std::size_t>(m)](0, 0);
    wall_psi[static_cast<std::size_t>(k)] = c;
  }
#pragma omp parallel for schedule(static) if (threaded(g))
  for (int j = 0; j <= ny; ++j) {
    for (int k = 0; k < n; ++k) {
      Field& out = psi[static_cast<std::size_t>(k)];
      for (int i = 0; i <= nx; ++i) {
        double s = 0.0;
        for (int m = 0; m < n; ++m) s += p(k, m) * modal_[static_cast<std::size_t>(m)](i, j);
        out(i, j) = s;
      }
    }
  }
}

std::vector<double> Inversion::mode_masses(const std::vector<Field>& psi) const {
  const int n = layers_.n;
  std::vector<double> out(static_cast<std::size_t>(n), 0.0);
  std::vector<double> layer_mass(static_cast<std::size_t>(n));
  for (int k = 0; k < n; ++k) {
    layer_mass[static_cast<std::size_t>(k)] =
        trapezoid_integral(grid_, psi[static_cast<std::size_t>(k)]);
  }
  for (int m = 0; m < n; ++m) {
    double s = 0.0;
    for (int k = 0; k < n; ++k) s += layers_.p_inv(m, k) * layer_mass[static_cast<std::size_t>(k)];
    out[static_cast<std::size_t>(m)] = s;
  }
  return out;
}

}  // namespace plateau
