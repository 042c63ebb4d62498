#include "harness/score/transport.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

namespace plateau {

Field barotropic_transport(const std::vector<Field>& psi, const std::vector<double>& wall_psi,
                           const std::vector<double>& thickness_m) {
  if (psi.empty() || psi.size() != wall_psi.size() || psi.size() != thickness_m.size()) {
    throw std::invalid_argument(
        "barotropic_transport: psi, wall values and thicknesses differ in "
        "their number of layers");
  }
  Field t = Field::Zero(psi.front().rows(), psi.front().cols());
  for (std::size_t k = 0; k < psi.size(); ++k) t += thickness_m[k] * (psi[k] - wall_psi[k]);
  return t;
}

double western_boundary_transport(const Grid& g, const Field& transport, Gyre gyre) {
  const Extremum e = gyre_extremum(g, transport, 0.0, gyre);
  if (!e.found) return 0.0;
  const double s = gyre_sign(gyre);
  const int j = e.j;
  for (int i = 1; i < g.nx; ++i) {
    // A local extremum of the gyre's sign: the next node east no longer increases s T.
    if (s * transport(i + 1, j) <= s * transport(i, j) && s * transport(i, j) > 0.0) {
      return transport(i, j);
    }
  }
  return e.value;
}

int zero_transport_row(const Grid& g, const Field& transport) {
  const Extremum a = gyre_extremum(g, transport, 0.0, Gyre::anticyclonic);
  const Extremum c = gyre_extremum(g, transport, 0.0, Gyre::cyclonic);
  if (!a.found || !c.found || a.j == c.j) return -1;
  const int j0 = std::min(a.j, c.j);
  const int j1 = std::max(a.j, c.j);
  int best = -1;
  double best_abs = 0.0;
  for (int j = j0; j <= j1; ++j) {
    double s = 0.0;
    for (int i = 1; i < g.nx; ++i) s += transport(i, j);
    const double m = std::abs(s / (g.nx - 1));
    if (best < 0 || m < best_abs) {
      best = j;
      best_abs = m;
    }
  }
  return best;
}

double jet_penetration(const Grid& g, const Field& transport, const Field& psi_top,
                       double fraction) {
  const int j = zero_transport_row(g, transport);
  if (j < 1 || j >= g.ny) return 0.0;
  const double cy = 0.5 / g.dy;
  const auto u = [&](int i) { return -cy * (psi_top(i, j + 1) - psi_top(i, j - 1)); };
  int imax = 1;
  for (int i = 2; i < g.nx; ++i) {
    if (u(i) > u(imax)) imax = i;
  }
  const double umax = u(imax);
  if (!(umax > 0.0)) return 0.0;
  const double cut = fraction * umax;
  for (int i = imax; i < g.nx - 1; ++i) {
    const double a = u(i);
    const double b = u(i + 1);
    if (b < cut) return g.x(i) + g.dx * (a - cut) / (a - b);
  }
  return g.x(g.nx - 1);
}

}  // namespace plateau
