#include "harness/model/operators.hpp"

#include <cmath>

namespace plateau {

void laplacian(const Grid& g, const Field& f, Field& out) {
  const double ax = 1.0 / (g.dx * g.dx);
  const double ay = 1.0 / (g.dy * g.dy);
  const int nx = g.nx;
  const int ny = g.ny;
#pragma omp parallel for schedule(static) if (threaded(g))
  for (int j = 1; j < ny; ++j) {
    for (int i = 1; i < nx; ++i) {
      out(i, j) = ax * (f(i + 1, j) - 2.0 * f(i, j) + f(i - 1, j)) +
                  ay * (f(i, j + 1) - 2.0 * f(i, j) + f(i, j - 1));
    }
  }
}

void wall_vorticity(const Grid& g, const Field& psi, double psi_wall, WallKind wall,
                    double slip_length_m, Field& zeta) {
  const int nx = g.nx;
  const int ny = g.ny;
  if (wall == WallKind::free_slip) {
    zeta.row(0).setZero();
    zeta.row(nx).setZero();
    zeta.col(0).setZero();
    zeta.col(ny).setZero();
    return;
  }
  const double lx = (wall == WallKind::no_slip) ? 0.0 : slip_length_m;
  const double fx = 2.0 / (g.dx * g.dx * (1.0 + 2.0 * lx / g.dx));
  const double fy = 2.0 / (g.dy * g.dy * (1.0 + 2.0 * lx / g.dy));
  for (int j = 1; j < ny; ++j) {
    zeta(0, j) = fx * (psi(1, j) - psi_wall);
    zeta(nx, j) = fx * (psi(nx - 1, j) - psi_wall);
  }
  for (int i = 1; i < nx; ++i) {
    zeta(i, 0) = fy * (psi(i, 1) - psi_wall);
    zeta(i, ny) = fy * (psi(i, ny - 1) - psi_wall);
  }
  zeta(0, 0) = zeta(nx, 0) = zeta(0, ny) = zeta(nx, ny) = 0.0;
}

void arakawa_jacobian(const Grid& g, const Field& a, const Field& b, Field& out) {
  const double c = 1.0 / (12.0 * g.dx * g.dy);
  const int nx = g.nx;
  const int ny = g.ny;
#pragma omp parallel for schedule(static) if (threaded(g))
  for (int j = 1; j < ny; ++j) {
    for (int i = 1; i < nx; ++i) {
      const double a_e = a(i + 1, j), a_w = a(i - 1, j), a_n = a(i, j + 1), a_s = a(i, j - 1);
      const double a_ne = a(i + 1, j + 1), a_nw = a(i - 1, j + 1);
      const double a_se = a(i + 1, j - 1), a_sw = a(i - 1, j - 1);
      const double b_e = b(i + 1, j), b_w = b(i - 1, j), b_n = b(i, j + 1), b_s = b(i, j - 1);
      const double b_ne = b(i + 1, j + 1), b_nw = b(i - 1, j + 1);
      const double b_se = b(i + 1, j - 1), b_sw = b(i - 1, j - 1);
      const double jpp = (a_e - a_w) * (b_n - b_s) - (a_n - a_s) * (b_e - b_w);
      const double jpx =
          a_e * (b_ne - b_se) - a_w * (b_nw - b_sw) - a_n * (b_ne - b_nw) + a_s * (b_se - b_sw);
      const double jxp =
          b_n * (a_ne - a_nw) - b_s * (a_se - a_sw) - b_e * (a_ne - a_se) + b_w * (a_nw - a_sw);
      out(i, j) = c * (jpp + jpx + jxp);
    }
  }
}

void ddx_centred(const Grid& g, const Field& f, Field& out) {
  const double c = 1.0 / (2.0 * g.dx);
  const int nx = g.nx;
  const int ny = g.ny;
#pragma omp parallel for schedule(static) if (threaded(g))
  for (int j = 1; j < ny; ++j) {
    for (int i = 1; i < nx; ++i) out(i, j) = c * (f(i + 1, j) - f(i - 1, j));
  }
}

CflReport max_cfl(const Grid& g, const Field& psi, double dt) {
  CflReport r;
  const double cx = dt / (2.0 * g.dx * g.dx);  // |v|/dx dt with v = (psi_e - psi_w)/(2 dx)
  const double cy = dt / (2.0 * g.dy * g.dy);
  for (int j = 1; j < g.ny; ++j) {
    for (int i = 1; i < g.nx; ++i) {
      const double v = std::abs(psi(i + 1, j) - psi(i - 1, j)) * cx;
      const double u = std::abs(psi(i, j + 1) - psi(i, j - 1)) * cy;
      const double c = u + v;
      // A NaN compares false everywhere: report it as the worst point so it is never missed.
      if (c > r.cfl || std::isnan(c)) {
        r.cfl = c;
        r.i = i;
        r.j = j;
        if (std::isnan(c)) return r;
      }
    }
  }
  return r;
}

}  // namespace plateau
