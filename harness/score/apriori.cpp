#include "harness/score/apriori.hpp"

#include <algorithm>
#include <cmath>

namespace plateau {

TendencyRegression tendency_regression(const Grid& g, const Field& truth, const Field& closure) {
  TendencyRegression r;
  double mt = 0.0;
  double mc = 0.0;
  for (int j = 1; j < g.ny; ++j) {
    for (int i = 1; i < g.nx; ++i) {
      mt += truth(i, j);
      mc += closure(i, j);
    }
  }
  const double n = static_cast<double>(g.nx - 1) * static_cast<double>(g.ny - 1);
  if (!(n > 0.0)) return r;
  mt /= n;
  mc /= n;
  double tt = 0.0;
  double cc = 0.0;
  double tc = 0.0;
  for (int j = 1; j < g.ny; ++j) {
    for (int i = 1; i < g.nx; ++i) {
      const double a = truth(i, j) - mt;
      const double b = closure(i, j) - mc;
      tt += a * a;
      cc += b * b;
      tc += a * b;
    }
  }
  if (!(tt > 0.0) || !(cc > 0.0)) return r;
  r.correlation = tc / std::sqrt(tt * cc);
  r.slope = tc / tt;
  return r;
}

std::optional<double> median(std::vector<double> values) {
  if (values.empty()) return std::nullopt;
  std::sort(values.begin(), values.end());
  const std::size_t n = values.size();
  if (n % 2 == 1) return values[n / 2];
  return 0.5 * (values[n / 2 - 1] + values[n / 2]);
}

KeffMap k_eff(const Grid& g, const Field& fx, const Field& fy, const Field& q,
              double min_gradient) {
  KeffMap m;
  m.k = g.zeros();
  m.valid = empty_mask(g);
  Field qx;
  Field qy;
  centred_gradient(g, q, qx, qy);
  std::vector<double> values;
  for (int j = 1; j < g.ny; ++j) {
    for (int i = 1; i < g.nx; ++i) {
      const double g2 = qx(i, j) * qx(i, j) + qy(i, j) * qy(i, j);
      if (!(std::sqrt(g2) > min_gradient)) continue;
      m.valid(i, j) = true;
      m.k(i, j) = -(fx(i, j) * qx(i, j) + fy(i, j) * qy(i, j)) / g2;
      values.push_back(m.k(i, j));
    }
  }
  m.median = median(std::move(values));
  return m;
}

ContourDiffusivity contour_diffusivity(const Grid& g, const Field& psi, double c, Gyre gyre,
                                       const Field& flux_divergence, const Field& q,
                                       const std::vector<double>& levels) {
  ContourDiffusivity out;
  out.levels = levels;
  const Extremum e = gyre_extremum(g, psi, c, gyre);
  const Field grad_q = gradient_magnitude(g, q);
  const Field grad_psi = gradient_magnitude(g, psi);
  for (const double level : levels) {
    double k = 0.0;
    double outflow = 0.0;
    double line = 0.0;
    if (e.found) {
      const Mask inside = connected_region(g, psi, c, gyre, level, e.i, e.j);
      outflow = region_integral(g, flux_divergence, inside);
      double normal_flux = 0.0;  // outward flux of grad q through the region's faces
      const int di[4] = {1, -1, 0, 0};
      const int dj[4] = {0, 0, 1, -1};
      for (int j = 1; j < g.ny; ++j) {
        for (int i = 1; i < g.nx; ++i) {
          if (!inside(i, j)) continue;
          for (int d = 0; d < 4; ++d) {
            const int a = i + di[d];
            const int b = j + dj[d];
            if (inside(a, b)) continue;
            const double dn = di[d] != 0 ? g.dx : g.dy;
            const double ds = di[d] != 0 ? g.dy : g.dx;
            const double psi_n = (psi(a, b) - psi(i, j)) / dn;
            const double q_n = (q(a, b) - q(i, j)) / dn;
            const double gp = 0.5 * (grad_psi(i, j) + grad_psi(a, b));
            const double gq = 0.5 * (grad_q(i, j) + grad_q(a, b));
            if (gp > 0.0) line += gq * std::abs(psi_n) / gp * ds;
            normal_flux += q_n * ds;
          }
        }
      }
      const double sigma = normal_flux < 0.0 ? -1.0 : 1.0;
      if (line > 0.0 && inside.count() > 0) k = -sigma * outflow / line;
    }
    out.k.push_back(k);
    out.outflow.push_back(outflow);
    out.gradient_integral.push_back(line);
  }
  return out;
}

}  // namespace plateau
