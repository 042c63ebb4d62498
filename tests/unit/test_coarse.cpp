// Coarse-graining (SCORING.md, coarse-graining): the preserved integral, the known damping of a
// resolved sine mode, and truth q on the coarse grid from filtered psi with the coarse model's
// own operators.
//
// Every check value is derived in this file from the filter's definition (top-hat of width
// r dx_truth, trapezoid weights on the (r+1)^2 truth nodes, normalised by r^2), never taken from
// a number the code printed.

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <numbers>
#include <stdexcept>
#include <utility>
#include <vector>

#include "harness/coarse/coarse_grain.hpp"
#include "harness/model/model.hpp"
#include "harness/model/operators.hpp"

namespace plateau {
namespace {

constexpr double kPi = std::numbers::pi;
constexpr double kLx = 1.6e6;  // m
constexpr double kLy = 1.2e6;  // m

// A deterministic pseudo-random number in [-1, 1) (64-bit LCG, Knuth's MMIX constants).
double noise(std::uint64_t& state) {
  state = state * 6364136223846793005ULL + 1442695040888963407ULL;
  return static_cast<double>(state >> 11) / 4503599627370496.0 - 1.0;
}

// A field equal to c on the walls: a smooth gyre plus small-scale noise inside.
Field walled_field(const Grid& g, double c, std::uint64_t seed) {
  Field f = Field::Constant(g.nx + 1, g.ny + 1, c);
  std::uint64_t s = seed;
  for (int j = 1; j < g.ny; ++j) {
    for (int i = 1; i < g.nx; ++i) {
      const double x = g.x(i) / g.lx_m;
      const double y = g.y(j) / g.ly_m;
      f(i, j) =
          c + 3.0e4 * std::sin(kPi * x) * std::sin(kPi * y) * (1.0 + 0.5 * x) + 2.0e3 * noise(s);
    }
  }
  return f;
}

// The truth's trapezoid integral over [x0, x1] x [y0, y1] with node-aligned ends, written out
// independently of the filter: half weights on the rectangle's edges.
double rectangle_trapezoid(const Grid& g, const Field& f, int i0, int i1, int j0, int j1) {
  double s = 0.0;
  for (int j = j0; j <= j1; ++j) {
    const double wy = (j == j0 || j == j1) ? 0.5 : 1.0;
    for (int i = i0; i <= i1; ++i) {
      const double wx = (i == i0 || i == i1) ? 0.5 : 1.0;
      s += wx * wy * f(i, j);
    }
  }
  return s * g.cell_area();
}

TEST(CoarseRatio, AcceptsEvenAndEqualGridsRefusesTheRest) {
  const Grid truth(64, 48, kLx, kLy);
  EXPECT_EQ(coarse_ratio(truth, Grid(16, 12, kLx, kLy)), 4);
  EXPECT_EQ(coarse_ratio(truth, Grid(32, 24, kLx, kLy)), 2);
  EXPECT_EQ(coarse_ratio(truth, truth), 1);
  EXPECT_THROW(coarse_ratio(Grid(48, 36, kLx, kLy), Grid(16, 12, kLx, kLy)),
               std::invalid_argument);                                               // r = 3, odd
  EXPECT_THROW(coarse_ratio(truth, Grid(20, 12, kLx, kLy)), std::invalid_argument);  // not exact
  EXPECT_THROW(coarse_ratio(truth, Grid(16, 24, kLx, kLy)), std::invalid_argument);  // x != y
  EXPECT_THROW(coarse_ratio(truth, Grid(16, 12, kLx, 2.0 * kLy)), std::invalid_argument);
}

TEST(CoarseGrain, EqualGridsCopyTheField) {
  const Grid g(16, 12, kLx, kLy);
  const Field f = walled_field(g, 5.0, 7);
  EXPECT_EQ((coarse_grain(g, g, f) - f).abs().maxCoeff(), 0.0);
}

TEST(CoarseGrain, WallNodesKeepTheirWallValues) {
  const Grid truth(64, 48, kLx, kLy);
  const Grid coarse(16, 12, kLx, kLy);
  const double c = -1234.5;
  const Field f = coarse_grain(truth, coarse, walled_field(truth, c, 3));
  for (int i = 0; i <= coarse.nx; ++i) {
    EXPECT_EQ(f(i, 0), c);
    EXPECT_EQ(f(i, coarse.ny), c);
  }
  for (int j = 0; j <= coarse.ny; ++j) {
    EXPECT_EQ(f(0, j), c);
    EXPECT_EQ(f(coarse.nx, j), c);
  }
}

// The area mean: adjacent stencils share their edge nodes at half weight each, so the coarse
// interior sum equals the truth's trapezoid integral over the inner rectangle exactly (to
// rounding); against the whole basin the difference is the walls' half cells, bounded by
// max |psi - c| there times their area Lx DY + Ly DX - DX DY.
TEST(CoarseGrain, PreservesTheAreaIntegralOfPsiMinusC) {
  for (const int r : {2, 4, 8}) {
    const Grid coarse(12, 10, kLx, kLy);
    const Grid truth(12 * r, 10 * r, kLx, kLy);
    const double c = 2.5e3;
    const Field psi = walled_field(truth, c, static_cast<std::uint64_t>(r));
    const Field anomaly_t = psi - c;
    const Field anomaly_c = coarse_grain(truth, coarse, psi) - c;

    const double coarse_integral = trapezoid_integral(coarse, anomaly_c);
    const int h = r / 2;
    const double inner = rectangle_trapezoid(truth, anomaly_t, h, truth.nx - h, h, truth.ny - h);
    const double scale = trapezoid_integral(truth, anomaly_t.abs());
    EXPECT_NEAR(coarse_integral, inner, 1e-13 * scale) << "r = " << r;

    // The walls' half cells: nodes of the truth outside the inner rectangle.
    double strip_max = 0.0;
    for (int j = 0; j <= truth.ny; ++j) {
      for (int i = 0; i <= truth.nx; ++i) {
        const bool in = i > h && i < truth.nx - h && j > h && j < truth.ny - h;
        if (!in) strip_max = std::max(strip_max, std::abs(anomaly_t(i, j)));
      }
    }
    const double strip_area = kLx * coarse.dy + kLy * coarse.dx - coarse.dx * coarse.dy;  // m^2
    const double full = trapezoid_integral(truth, anomaly_t);
    EXPECT_LE(std::abs(coarse_integral - full), strip_max * strip_area * (1.0 + 1e-12))
        << "r = " << r;
  }
}

// Damping: (1/r) sum_{a=-r/2}^{r/2} w_a cos(a theta) = sin(r theta/2) cot(theta/2) / r (the
// Dirichlet kernel minus the half end weights), and 1 at theta = 0.
TEST(FilterDamping, MatchesTheStencilSum) {
  EXPECT_EQ(filter_damping(4, 0.0), 1.0);
  EXPECT_EQ(filter_damping(1, 0.7), 1.0);
  for (const int r : {2, 4, 6, 8}) {
    for (const double theta : {1e-3, 0.1, 0.5, 1.0, 2.0, 3.0}) {
      double s = 0.0;
      for (int a = -r / 2; a <= r / 2; ++a) {
        const double w = (a == -r / 2 || a == r / 2) ? 0.5 : 1.0;
        s += w * std::cos(a * theta);
      }
      EXPECT_NEAR(filter_damping(r, theta), s / r, 1e-14) << "r = " << r << " theta " << theta;
    }
  }
  // r = 2 is the 1-2-1 filter: (1 + cos theta) / 2.
  EXPECT_NEAR(filter_damping(2, 0.8), 0.5 * (1.0 + std::cos(0.8)), 1e-15);
  EXPECT_NEAR(filter_damping_wavenumber(4, 2.0e-5, 1.0e4), filter_damping(4, 0.2), 1e-16);
}

// A resolved sine mode comes through as D(k dx) D(l dy) times itself at every interior coarse
// node, to rounding (the stencil is symmetric, so the phase does not move).
TEST(CoarseGrain, DampsAResolvedSineModeByTheKnownFactor) {
  const int r = 4;
  const Grid coarse(16, 12, kLx, kLy);
  const Grid truth(16 * r, 12 * r, kLx, kLy);
  const double amp = 4.0e4;  // m^2 s^-1
  const double c = -300.0;
  for (const auto& [m, n] : {std::pair{1, 1}, std::pair{3, 2}, std::pair{7, 5}}) {
    const double k = m * kPi / kLx;
    const double l = n * kPi / kLy;
    Field psi = truth.zeros();
    for (int j = 0; j <= truth.ny; ++j) {
      for (int i = 0; i <= truth.nx; ++i) {
        const bool wall = i == 0 || j == 0 || i == truth.nx || j == truth.ny;
        psi(i, j) = c + (wall ? 0.0 : amp * std::sin(k * truth.x(i)) * std::sin(l * truth.y(j)));
      }
    }
    const Field f = coarse_grain(truth, coarse, psi);
    const double d =
        filter_damping_wavenumber(r, k, truth.dx) * filter_damping_wavenumber(r, l, truth.dy);
    EXPECT_LT(d, 1.0);
    double worst = 0.0;
    for (int j = 1; j < coarse.ny; ++j) {
      for (int i = 1; i < coarse.nx; ++i) {
        const double expect = c + d * amp * std::sin(k * coarse.x(i)) * std::sin(l * coarse.y(j));
        worst = std::max(worst, std::abs(f(i, j) - expect));
      }
    }
    EXPECT_LT(worst, 1e-10 * amp) << "mode (" << m << ", " << n << ")";
  }
}

ModelParams two_layers(WallKind wall) {
  ModelParams p;
  p.f0 = 8e-5;
  p.beta = 2e-11;
  p.thickness_m = {1000.0, 3000.0};
  p.reduced_gravity = {0.02};
  p.wall = wall;
  p.dt = 3600.0;
  return p;
}

// q on the coarse grid from filtered psi is the coarse operators' q: lap(psi_bar) + beta (y - y0)
// + S psi_bar inside, and on free-slip walls (zeta_w = 0) beta (y - y0) + S c, written out here
// from PHYSICS.md section 1 with the 5-point Laplacian.
TEST(CoarseTruth, QFromFilteredPsiUsesTheCoarseOperators) {
  const Grid truth(64, 48, kLx, kLy);
  const Model coarse(Grid(16, 12, kLx, kLy), two_layers(WallKind::free_slip));
  const Grid& g = coarse.grid();
  const std::vector<Field> psi = {walled_field(truth, 1.5e3, 11), walled_field(truth, -4.0e2, 12)};
  const CoarseFields cf = coarse_grain_truth(coarse, truth, psi);
  const std::vector<Field> bar = coarse_grain(truth, g, psi);
  ASSERT_EQ(cf.state.psi.size(), 2U);
  EXPECT_EQ(cf.state.wall_psi[0], 1.5e3);
  EXPECT_EQ(cf.state.wall_psi[1], -4.0e2);
  const Eigen::MatrixXd& s = coarse.layers().s;
  double worst = 0.0;
  double qscale = 0.0;
  for (int k = 0; k < 2; ++k) {
    Field lap = g.zeros();
    laplacian(g, bar[static_cast<std::size_t>(k)], lap);
    for (int j = 0; j <= g.ny; ++j) {
      for (int i = 0; i <= g.nx; ++i) {
        const bool wall = i == 0 || j == 0 || i == g.nx || j == g.ny;
        const double zeta = wall ? 0.0 : lap(i, j);
        double st = 0.0;
        for (int m = 0; m < 2; ++m) st += s(k, m) * bar[static_cast<std::size_t>(m)](i, j);
        const double q = zeta + 2e-11 * (g.y(j) - g.y0) + st;
        worst = std::max(worst, std::abs(cf.state.q[static_cast<std::size_t>(k)](i, j) - q));
        qscale = std::max(qscale, std::abs(q));
      }
    }
  }
  EXPECT_LT(worst, 1e-13 * qscale);
  // Energy with the coarse model's own operator.
  const Energy e = coarse.energy(coarse.state_from_psi(bar));
  EXPECT_EQ(cf.energy.total(), e.total());
}

// No-slip walls: the wall q follows the model's wall rule (Thom), the same as a coarse run's.
TEST(CoarseTruth, WallQFollowsTheModelsWallRule) {
  const Grid truth(32, 24, kLx, kLy);
  const Model coarse(Grid(16, 12, kLx, kLy), two_layers(WallKind::no_slip));
  const std::vector<Field> psi = {walled_field(truth, 10.0, 21), walled_field(truth, 0.0, 22)};
  const CoarseFields cf = coarse_grain_truth(coarse, truth, psi);
  const ModelState direct = coarse.state_from_psi(coarse_grain(truth, coarse.grid(), psi));
  for (int k = 0; k < 2; ++k) {
    const auto uk = static_cast<std::size_t>(k);
    EXPECT_EQ((cf.state.q[uk] - direct.q[uk]).abs().maxCoeff(), 0.0);
    // Thom's wall vorticity 2 (psi_1 - psi_w) / dn^2 on the western wall, written out.
    const Grid& g = coarse.grid();
    const double zw = 2.0 * (direct.psi[uk](1, 5) - direct.wall_psi[uk]) / (g.dx * g.dx);
    EXPECT_NEAR(cf.state.zeta[uk](0, 5), zw, 1e-12 * std::abs(zw) + 1e-30);
  }
}

// Velocities of psi = c + x (Lx - x) y (Ly - y): quadratic in each direction, so the centred and
// the one-sided second-order differences are exact: u = -x (Lx - x) (Ly - 2 y),
// v = (Lx - 2 x) y (Ly - y); the normal component vanishes on the walls.
TEST(CoarseTruth, VelocitiesAreExactForAQuadraticStreamfunction) {
  const Grid g(16, 12, kLx, kLy);
  const double a = 1e-17;  // m^-2 s^-1
  Field psi = g.zeros();
  for (int j = 0; j <= g.ny; ++j) {
    for (int i = 0; i <= g.nx; ++i) {
      psi(i, j) = 7.0 + a * g.x(i) * (kLx - g.x(i)) * g.y(j) * (kLy - g.y(j));
    }
  }
  Field u;
  Field v;
  velocities(g, psi, u, v);
  double worst = 0.0;
  double scale = 0.0;
  for (int j = 0; j <= g.ny; ++j) {
    for (int i = 0; i <= g.nx; ++i) {
      const bool corner = (i == 0 || i == g.nx) && (j == 0 || j == g.ny);
      if (corner) continue;
      const double x = g.x(i);
      const double y = g.y(j);
      const double ue = -a * x * (kLx - x) * (kLy - 2.0 * y);
      const double ve = a * (kLx - 2.0 * x) * y * (kLy - y);
      worst = std::max({worst, std::abs(u(i, j) - ue), std::abs(v(i, j) - ve)});
      scale = std::max({scale, std::abs(ue), std::abs(ve)});
    }
  }
  EXPECT_LT(worst, 1e-9 * scale);
  EXPECT_EQ(u(0, 5), 0.0);
  EXPECT_EQ(v(5, 0), 0.0);
}

}  // namespace
}  // namespace plateau
