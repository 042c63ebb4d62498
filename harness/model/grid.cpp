#include "harness/model/grid.hpp"

namespace plateau {

double interior_integral(const Grid& g, const Field& f) {
  double s = 0.0;
  for (int j = 1; j < g.ny; ++j) {
    for (int i = 1; i < g.nx; ++i) s += f(i, j);
  }
  return s * g.cell_area();
}

double interior_dot(const Grid& g, const Field& a, const Field& b) {
  double s = 0.0;
  for (int j = 1; j < g.ny; ++j) {
    for (int i = 1; i < g.nx; ++i) s += a(i, j) * b(i, j);
  }
  return s * g.cell_area();
}

double trapezoid_integral(const Grid& g, const Field& f) {
  double s = 0.0;
  for (int j = 0; j <= g.ny; ++j) {
    const double wy = (j == 0 || j == g.ny) ? 0.5 : 1.0;
    double row = 0.0;
    for (int i = 0; i <= g.nx; ++i) {
      const double wx = (i == 0 || i == g.nx) ? 0.5 : 1.0;
      row += wx * f(i, j);
    }
    s += wy * row;
  }
  return s * g.cell_area();
}

}  // namespace plateau
