#include "harness/score/regions.hpp"

#include <cmath>
#include <utility>
#include <vector>

namespace plateau {

std::string gyre_name(Gyre g) { return g == Gyre::anticyclonic ? "anticyclonic" : "cyclonic"; }

double gyre_sign(Gyre g) { return g == Gyre::anticyclonic ? 1.0 : -1.0; }

Mask empty_mask(const Grid& g) { return Mask::Constant(g.nx + 1, g.ny + 1, false); }

double region_integral(const Grid& g, const Field& f, const Mask& m) {
  double s = 0.0;
  for (int j = 0; j <= g.ny; ++j) {
    for (int i = 0; i <= g.nx; ++i) {
      if (m(i, j)) s += f(i, j);
    }
  }
  return s * g.cell_area();
}

Extremum gyre_extremum(const Grid& g, const Field& f, double c, Gyre gyre) {
  const double s = gyre_sign(gyre);
  Extremum e;
  double best = 0.0;
  // Fixed scan order (x fastest), first node wins ties: reproducible.
  for (int j = 1; j < g.ny; ++j) {
    for (int i = 1; i < g.nx; ++i) {
      const double a = s * (f(i, j) - c);
      if (a > best) {
        best = a;
        e.found = true;
        e.i = i;
        e.j = j;
        e.value = f(i, j) - c;
      }
    }
  }
  return e;
}

Mask connected_region(const Grid& g, const Field& f, double c, Gyre gyre, double level, int i0,
                      int j0) {
  Mask m = empty_mask(g);
  const double s = gyre_sign(gyre);
  const auto inside = [&](int i, int j) {
    return i > 0 && i < g.nx && j > 0 && j < g.ny && !m(i, j) && s * (f(i, j) - c) >= level;
  };
  if (!inside(i0, j0)) return m;
  std::vector<std::pair<int, int>> stack{{i0, j0}};
  m(i0, j0) = true;
  while (!stack.empty()) {
    const auto [i, j] = stack.back();
    stack.pop_back();
    const int di[4] = {1, -1, 0, 0};
    const int dj[4] = {0, 0, 1, -1};
    for (int d = 0; d < 4; ++d) {
      const int a = i + di[d];
      const int b = j + dj[d];
      if (inside(a, b)) {
        m(a, b) = true;
        stack.emplace_back(a, b);
      }
    }
  }
  return m;
}

GyreRegion gyre_region(const Grid& g, const Field& f, double c, Gyre gyre, double theta) {
  GyreRegion r;
  r.gyre = gyre;
  r.extremum = gyre_extremum(g, f, c, gyre);
  if (!r.extremum.found) {
    r.mask = empty_mask(g);
    return r;
  }
  r.level = theta * std::abs(r.extremum.value);
  r.mask = connected_region(g, f, c, gyre, r.level, r.extremum.i, r.extremum.j);
  return r;
}

void centred_gradient(const Grid& g, const Field& f, Field& fx, Field& fy) {
  fx = g.zeros();
  fy = g.zeros();
  const double cx = 0.5 / g.dx;
  const double cy = 0.5 / g.dy;
  for (int j = 1; j < g.ny; ++j) {
    for (int i = 1; i < g.nx; ++i) {
      fx(i, j) = cx * (f(i + 1, j) - f(i - 1, j));
      fy(i, j) = cy * (f(i, j + 1) - f(i, j - 1));
    }
  }
}

Field gradient_magnitude(const Grid& g, const Field& f) {
  Field fx;
  Field fy;
  centred_gradient(g, f, fx, fy);
  return (fx * fx + fy * fy).sqrt();
}

}  // namespace plateau
