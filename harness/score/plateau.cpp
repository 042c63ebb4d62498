#include "harness/score/plateau.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

namespace plateau {
namespace {

// The planetary part of q, computed exactly as Model::state_from_psi does.
Field planetary(const Grid& g, double beta) {
  Field f = g.zeros();
  for (int j = 0; j <= g.ny; ++j) {
    const double by = beta * (g.y(j) - g.y0);
    for (int i = 0; i <= g.nx; ++i) f(i, j) = by;
  }
  return f;
}

}  // namespace

std::optional<double> mean_over(const Field& f, const Mask& m) {
  double s = 0.0;
  long n = 0;
  for (Eigen::Index j = 0; j < m.cols(); ++j) {
    for (Eigen::Index i = 0; i < m.rows(); ++i) {
      if (m(i, j)) {
        s += f(i, j);
        ++n;
      }
    }
  }
  if (n == 0) return std::nullopt;
  return s / static_cast<double>(n);
}

double std_over(const Field& f, const Mask& m) {
  const std::optional<double> mean = mean_over(f, m);
  if (!mean) return 0.0;
  double s = 0.0;
  long n = 0;
  for (Eigen::Index j = 0; j < m.cols(); ++j) {
    for (Eigen::Index i = 0; i < m.rows(); ++i) {
      if (m(i, j)) {
        const double d = f(i, j) - *mean;
        s += d * d;
        ++n;
      }
    }
  }
  if (n < 2) return 0.0;
  return std::sqrt(s / static_cast<double>(n));
}

double homogeneity(const Grid& g, const Field& q, const Mask& region, double beta) {
  const double ref = std_over(planetary(g, beta), region);
  if (!(ref > 0.0)) return 0.0;
  return 1.0 - std_over(q, region) / ref;
}

Mask plateau_mask(const Grid& g, const Field& q, const Mask& region, double max_gradient) {
  const Field grad = gradient_magnitude(g, q);
  Mask p = empty_mask(g);
  for (int j = 1; j < g.ny; ++j) {
    for (int i = 1; i < g.nx; ++i) p(i, j) = region(i, j) && grad(i, j) < max_gradient;
  }
  return p;
}

double area_fraction(const Mask& part, const Mask& whole) {
  const auto n = whole.count();
  if (n == 0) return 0.0;
  return static_cast<double>((part && whole).count()) / static_cast<double>(n);
}

double overlap(const Mask& a, const Mask& b) {
  const auto u = (a || b).count();
  if (u == 0) return 0.0;
  return static_cast<double>((a && b).count()) / static_cast<double>(u);
}

double q_psi_slope(const Grid& g, const Field& q, const Field& psi, const Mask& region,
                   double beta) {
  const std::optional<double> mq = mean_over(q, region);
  const std::optional<double> mp = mean_over(psi, region);
  if (!mq || !mp) return 0.0;
  double cov = 0.0;
  double var = 0.0;
  double pmin = std::numeric_limits<double>::infinity();
  double pmax = -pmin;
  int jmin = g.ny;
  int jmax = 0;
  for (int j = 0; j <= g.ny; ++j) {
    for (int i = 0; i <= g.nx; ++i) {
      if (!region(i, j)) continue;
      const double dp = psi(i, j) - *mp;
      cov += dp * (q(i, j) - *mq);
      var += dp * dp;
      pmin = std::min(pmin, psi(i, j));
      pmax = std::max(pmax, psi(i, j));
      jmin = std::min(jmin, j);
      jmax = std::max(jmax, j);
    }
  }
  const double extent = (jmax - jmin) * g.dy;
  if (!(var > 0.0) || !(extent > 0.0) || beta == 0.0) return 0.0;
  return (cov / var) * (pmax - pmin) / (beta * extent);
}

double rms_difference(const Grid& g, const Field& a, const Field& b) {
  double s = 0.0;
  for (int j = 1; j < g.ny; ++j) {
    for (int i = 1; i < g.nx; ++i) {
      const double d = a(i, j) - b(i, j);
      s += d * d;
    }
  }
  const double n = static_cast<double>(g.nx - 1) * static_cast<double>(g.ny - 1);
  return n > 0.0 ? std::sqrt(s / n) : 0.0;
}

}  // namespace plateau
