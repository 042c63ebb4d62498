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
  row_sums_.assign(static_cast<std::size_t>(n) * static_cast<std::size_t>(grid_.ny - 1), 0.0);

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
  const auto un = static_cast<std::size_t>(n);
  const auto mx = static_cast<std::size_t>(nx - 1);
  const Eigen::Index rows = static_cast<Eigen::Index>(nx) + 1;
  const Eigen::MatrixXd& pinv = layers_.p_inv;
  const Eigen::MatrixXd& p = layers_.p;
  const double beta = beta_;
  const Grid& g = grid_;
  const bool par = threaded(g);
  std::vector<double> cm(un, 0.0);  // the mass constraint's C_m (entry 0 unused)
  wall_psi.assign(un, 0.0);
  for (int k = 0; k < n; ++k) {
    Field& out = psi[static_cast<std::size_t>(k)];
    if (out.rows() != nx + 1 || out.cols() != ny + 1) out.resize(nx + 1, ny + 1);
  }

  // The modes' solves in parts of (mode, block) (sine_transform.hpp): gather the rows of q
  // into mode m and transform them in x; transform the columns in y and divide by the
  // eigenvalues; back in x, then y; the row sums of phi^0 for the mass constraint. Every part
  // does the same arithmetic whichever thread runs it, so the result does not depend on the
  // thread count; the loops' barriers order the passes.
  const int blocks = dst_.blocks();
  const int parts = n * blocks;
  const auto my = static_cast<std::size_t>(ny - 1);
#pragma omp parallel if (par)
  {
#pragma omp for schedule(static)
    for (int t = 0; t < parts; ++t) {
      const int m = t / blocks;
      const int blk = t % blocks;
      double* b = work_[static_cast<std::size_t>(m)].data;
      for (int r = dst_.row_begin(blk); r < dst_.row_begin(blk + 1); ++r) {
        const int j = r + 1;
        double* row = b + static_cast<std::size_t>(r) * mx;
        for (std::size_t i = 0; i < mx; ++i) row[i] = 0.0;
        for (int k = 0; k < n; ++k) {
          const double wk = pinv(m, k);
          const double* qk = q[static_cast<std::size_t>(k)].data() + j * rows + 1;
#pragma omp simd
          for (std::size_t i = 0; i < mx; ++i) row[i] += wk * qk[i];
        }
        // beta (y - y0) is a barotropic field: P^-1 maps it to mode 0 only (P's column 0 is
        // all ones), so subtract it there.
        if (m == 0) {
          const double by = beta * (g.y(j) - g.y0);
#pragma omp simd
          for (std::size_t i = 0; i < mx; ++i) row[i] -= by;
        }
      }
      dst_.apply_rows(b, blk);
    }
#pragma omp for schedule(static)
    for (int t = 0; t < parts; ++t) {
      const int m = t / blocks;
      const int blk = t % blocks;
      double* b = work_[static_cast<std::size_t>(m)].data;
      dst_.apply_columns(b, blk);
      const double* e = inv_eigen_[static_cast<std::size_t>(m)].data();
      const auto c0 = static_cast<std::size_t>(dst_.col_begin(blk));
      const auto c1 = static_cast<std::size_t>(dst_.col_begin(blk + 1));
      for (std::size_t r = 0; r < my; ++r) {
#pragma omp simd
        for (std::size_t c = c0; c < c1; ++c) b[r * mx + c] *= e[r * mx + c];
      }
    }
#pragma omp for schedule(static)
    for (int t = 0; t < parts; ++t) {
      dst_.apply_rows(work_[static_cast<std::size_t>(t / blocks)].data, t % blocks);
    }
#pragma omp for schedule(static)
    for (int t = 0; t < parts; ++t) {
      dst_.apply_columns(work_[static_cast<std::size_t>(t / blocks)].data, t % blocks);
    }
    // phi^0 is zero on the walls, so its trapezoid integral is the plain interior sum, added up
    // row by row as trapezoid_integral does.
#pragma omp for schedule(static)
    for (int t = blocks; t < parts; ++t) {
      const int m = t / blocks;
      const int blk = t % blocks;
      const double* b = work_[static_cast<std::size_t>(m)].data;
      double* sums = row_sums_.data() + static_cast<std::size_t>(m) * my;
      for (int r = dst_.row_begin(blk); r < dst_.row_begin(blk + 1); ++r) {
        const double* row = b + static_cast<std::size_t>(r) * mx;
        double sum = 0.0;
        for (std::size_t i = 0; i < mx; ++i) sum += row[i];
        sums[r] = sum;
      }
    }
#pragma omp single
    {
      for (int m = 1; m < n; ++m) {
        const double* sums = row_sums_.data() + static_cast<std::size_t>(m) * my;
        double sum = 0.0;
        for (std::size_t r = 0; r < my; ++r) sum += sums[r];
        cm[static_cast<std::size_t>(m)] =
            (mode_mass[static_cast<std::size_t>(m)] - sum * g.cell_area()) /
            homogeneous_mass_[static_cast<std::size_t>(m)];
      }
      for (int k = 0; k < n; ++k) {
        double c = 0.0;
        for (int m = 1; m < n; ++m) {
          c += p(k, m) * (0.0 + cm[static_cast<std::size_t>(m)] *
                                    homogeneous_[static_cast<std::size_t>(m)](0, 0));
        }
        wall_psi[static_cast<std::size_t>(k)] = c;
      }
    }
    // phi_m = phi^0_m + C_m h_m (phi^0_m = 0 on the walls) and psi_k = sum_m P(k, m) phi_m,
    // in one pass over the nodes.
#pragma omp for schedule(static)
    for (int j = 0; j <= ny; ++j) {
      const bool wall_row = (j == 0 || j == ny);
      for (int k = 0; k < n; ++k) {
        double* out = psi[static_cast<std::size_t>(k)].data() + j * rows;
        for (int i = 0; i <= nx; ++i) out[i] = 0.0;
        for (int m = 0; m < n; ++m) {
          const double pm = p(k, m);
          const double c = cm[static_cast<std::size_t>(m)];
          const double* h =
              (m > 0) ? homogeneous_[static_cast<std::size_t>(m)].data() + j * rows : nullptr;
          if (wall_row) {
            if (m > 0) {
              for (int i = 0; i <= nx; ++i) out[i] += pm * (0.0 + c * h[i]);
            } else {
              for (int i = 0; i <= nx; ++i) out[i] += pm * 0.0;
            }
            continue;
          }
          // Node i of row j is entry i - 1 of the buffer's row j - 1.
          const double* row =
              work_[static_cast<std::size_t>(m)].data + static_cast<std::size_t>(j - 1) * mx;
          if (m > 0) {
            out[0] += pm * (0.0 + c * h[0]);
#pragma omp simd
            for (int i = 1; i < nx; ++i) out[i] += pm * (row[i - 1] + c * h[i]);
            out[nx] += pm * (0.0 + c * h[nx]);
          } else {
            out[0] += pm * 0.0;
#pragma omp simd
            for (int i = 1; i < nx; ++i) out[i] += pm * row[i - 1];
            out[nx] += pm * 0.0;
          }
        }
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
