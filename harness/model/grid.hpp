#pragma once
// The basin grid: nodes i = 0..nx, j = 0..ny with spacing dx = Lx/nx, dy = Ly/ny; the walls are
// the boundary nodes. A Field stores one value per node, x fastest (Eigen column-major with
// rows = nx + 1), so Field(i, j) is node (x_i, y_j).

#include <vector>
#include <Eigen/Core>

namespace plateau {

using Field = Eigen::ArrayXXd;

struct Grid {
  int nx = 0;
  int ny = 0;
  double lx_m = 0.0;
  double ly_m = 0.0;
  double dx = 0.0;  // m
  double dy = 0.0;  // m
  double y0 = 0.0;  // reference latitude of f = f0 + beta (y - y0): the basin's middle, m

  Grid() = default;
  Grid(int nx_, int ny_, double lx, double ly)
      : nx(nx_), ny(ny_), lx_m(lx), ly_m(ly), dx(lx / nx_), dy(ly / ny_), y0(0.5 * ly) {}

  [[nodiscard]] double x(int i) const { return dx * i; }
  [[nodiscard]] double y(int j) const { return dy * j; }
  [[nodiscard]] Field zeros() const { return Field::Zero(nx + 1, ny + 1); }
  [[nodiscard]] double cell_area() const { return dx * dy; }
};

// Whether loops over this grid's rows are worth splitting over threads: below about 96^2 nodes
// a parallel region costs more than the loop (measured on the 2-core build machine).
inline bool threaded(const Grid& g) { return (g.nx + 1) * (g.ny + 1) >= 96 * 96; }

// Plain sum over the interior nodes times dx dy: the PV-conservation integral (CLOSURES.md) and
// the weight of every energy-budget term (the weight psi - c vanishes on the walls).
double interior_integral(const Grid& g, const Field& f);
// Interior sum of a * b times dx dy.
double interior_dot(const Grid& g, const Field& a, const Field& b);
// Trapezoid rule over all nodes, walls at half weight and corners at quarter weight: the
// integral used for a layer's mass (interface volume) and for potential energy.
double trapezoid_integral(const Grid& g, const Field& f);

}  // namespace plateau
