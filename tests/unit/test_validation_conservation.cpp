// Validation of the conservation properties of the advection scheme (PHYSICS.md sections 3, 4):
// the Arakawa (1966) identities, instantaneous, and Fofonoff's (1954) free steady state.

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <random>
#include <vector>
#include <Eigen/Sparse>
#include <Eigen/SparseCholesky>

#include "harness/model/model.hpp"

namespace plateau {
namespace {

// ---------------------------------------------------------------------------------------------
// Arakawa (1966), J. Comput. Phys. 1: the Jacobian's discrete integral identities, on random
// fields, from one Jacobian evaluation each.
// ---------------------------------------------------------------------------------------------

// Random field: normal values of the given scale inside; on the walls the constant `wall`,
// or random values too when random_walls is set.
Field random_field(const Grid& g, std::mt19937& rng, double wall, double scale,
                   bool random_walls = false) {
  std::normal_distribution<double> nd(0.0, scale);
  Field f = g.zeros();
  for (int j = 0; j <= g.ny; ++j) {
    for (int i = 0; i <= g.nx; ++i) {
      const bool on_wall = i == 0 || j == 0 || i == g.nx || j == g.ny;
      f(i, j) = (on_wall && !random_walls) ? wall : wall + nd(rng);
    }
  }
  return f;
}

// Sum over the interior of |a| |b| dx dy: the rounding scale of an interior sum of a b.
double abs_dot(const Grid& g, const Field& a, const Field& b) {
  return interior_dot(g, a.abs(), b.abs());
}

// Arakawa's identities follow from pairing the terms of neighbouring nodes. In the walled
// basin the interior sum misses the terms that the wall nodes would carry, so each identity
// holds where those terms vanish:
//  - energy: sum (psi - psi_w) J(psi, q) = 0 when psi = psi_w on the walls, any wall q;
//  - enstrophy about the wall value: sum (q - q_w) J(psi, q) = 0 when q = q_w on the walls
//    (by J(a, b) = -J(b, a) and the energy identity);
//  - sum q J(psi, q) = 0 and sum J(psi, q) = 0 when psi and q are constant on the walls AND on
//    the first interior row (fields supported inside, Arakawa's unbounded-domain setting).
//    With constant values on the walls alone the interior sum of J is a wall flux
//    (-sum over wall nodes of J with zero extension): measured and printed below.
//  - J(a, a) = 0 at every node.
TEST(ValidationArakawa, Identities) {
  // A non-square grid with dx != dy.
  const Grid g(37, 26, 1.1e6, 0.7e6);
  std::mt19937 rng(2024U);
  const double eps_rel = 1e-13;  // relative to the sum of absolute values (rounding)
  const Field ones = Field::Ones(g.nx + 1, g.ny + 1);

  // (1) Energy, any wall q.
  {
    const double psi_w = 3.7e4;
    const Field psi = random_field(g, rng, psi_w, 1e4);
    const Field q = random_field(g, rng, 0.0, 1e-5, true);
    Field jac = g.zeros();
    arakawa_jacobian(g, psi, q, jac);
    const Field w = psi - psi_w;
    const double e = interior_dot(g, w, jac);
    const double scale = abs_dot(g, w, jac);
    std::printf("Arakawa energy identity: |sum (psi-psi_w) J| / sum |..| = %.2e\n",
                std::abs(e) / scale);
    EXPECT_LT(std::abs(e), eps_rel * scale) << "Arakawa (1966) energy identity";
  }
  // (2) Enstrophy about the wall value, q constant on the walls (psi walls random).
  {
    const double q_w = 2.5e-5;
    const Field psi = random_field(g, rng, 0.0, 1e4, true);
    const Field q = random_field(g, rng, q_w, 1e-5);
    Field jac = g.zeros();
    arakawa_jacobian(g, psi, q, jac);
    const Field w = q - q_w;
    const double z = interior_dot(g, w, jac);
    const double scale = abs_dot(g, w, jac);
    std::printf("Arakawa enstrophy identity (q - q_w): %.2e (relative)\n", std::abs(z) / scale);
    EXPECT_LT(std::abs(z), eps_rel * scale) << "Arakawa (1966) enstrophy identity";
  }
  // (3) sum q J and sum J, psi and q constant on the walls and the first interior row.
  {
    const double psi_w = -1.2e4;
    const double q_w = 2.5e-5;
    Field psi = random_field(g, rng, psi_w, 1e4);
    Field q = random_field(g, rng, q_w, 1e-5);
    // Wall-only case first: the interior sum of J is a wall flux, not zero.
    Field jac = g.zeros();
    arakawa_jacobian(g, psi, q, jac);
    std::printf(
        "walls-only constant: sum J / sum |J| = %.2e, sum q J / sum |q J| = %.2e "
        "(not identities of the walled scheme)\n",
        std::abs(interior_dot(g, ones, jac)) / abs_dot(g, ones, jac),
        std::abs(interior_dot(g, q, jac)) / abs_dot(g, q, jac));
    for (int j = 0; j <= g.ny; ++j) {
      for (int i = 0; i <= g.nx; ++i) {
        if (i <= 1 || j <= 1 || i >= g.nx - 1 || j >= g.ny - 1) {
          psi(i, j) = psi_w;
          q(i, j) = q_w;
        }
      }
    }
    arakawa_jacobian(g, psi, q, jac);
    const double z = interior_dot(g, q, jac);
    const double zscale = abs_dot(g, q, jac);
    const double m = interior_dot(g, ones, jac);
    const double mscale = abs_dot(g, ones, jac);
    std::printf("Arakawa enstrophy identity %.2e, mean-vorticity identity %.2e (relative)\n",
                std::abs(z) / zscale, std::abs(m) / mscale);
    EXPECT_LT(std::abs(z), eps_rel * zscale) << "Arakawa (1966) enstrophy identity";
    EXPECT_LT(std::abs(m), eps_rel * mscale) << "Arakawa (1966) mean-vorticity identity";
  }
  // (4) J(a, a) = 0 at every interior node, any walls.
  {
    const Field a = random_field(g, rng, 0.0, 1.0, true);
    Field jac = g.zeros();
    arakawa_jacobian(g, a, a, jac);
    // Scale of a single node's terms: |a|^2 / (dx dy).
    const double scale = a.abs().maxCoeff() * a.abs().maxCoeff() / (g.dx * g.dy);
    std::printf("Arakawa J(a,a): max |J| / scale = %.2e\n", jac.abs().maxCoeff() / scale);
    EXPECT_LT(jac.abs().maxCoeff(), 1e-14 * scale) << "Arakawa (1966) J(a, a) = 0";
  }
}

// ---------------------------------------------------------------------------------------------
// Fofonoff (1954), J. Mar. Res. 13: inviscid, unforced flow with q = c psi + q0 is steady since
// J(psi, c psi + q0) = 0. psi solves (L - c) psi = -beta (y - y0) + q0 with psi = 0 on the
// walls, and the wall q is c psi_w + q0 = q0. psi is built here with an Eigen sparse LDLT
// factorisation of the 5-point operator, independently of the sine-transform inversion.
// ---------------------------------------------------------------------------------------------

Field fofonoff_psi(const Grid& g, double beta, double c, double q0) {
  const int mx = g.nx - 1;
  const int my = g.ny - 1;
  const auto idx = [&](int i, int j) { return (j - 1) * mx + (i - 1); };
  const double ax = 1.0 / (g.dx * g.dx);
  const double ay = 1.0 / (g.dy * g.dy);
  std::vector<Eigen::Triplet<double>> t;
  Eigen::VectorXd rhs(mx * my);
  // Assemble -(L - c), symmetric positive definite for c > 0.
  for (int j = 1; j < g.ny; ++j) {
    for (int i = 1; i < g.nx; ++i) {
      const int p = idx(i, j);
      t.emplace_back(p, p, 2.0 * ax + 2.0 * ay + c);
      if (i > 1) t.emplace_back(p, idx(i - 1, j), -ax);
      if (i < g.nx - 1) t.emplace_back(p, idx(i + 1, j), -ax);
      if (j > 1) t.emplace_back(p, idx(i, j - 1), -ay);
      if (j < g.ny - 1) t.emplace_back(p, idx(i, j + 1), -ay);
      rhs(p) = -(-beta * (g.y(j) - g.y0) + q0);
    }
  }
  Eigen::SparseMatrix<double> a(mx * my, mx * my);
  a.setFromTriplets(t.begin(), t.end());
  Eigen::SimplicialLDLT<Eigen::SparseMatrix<double>> solver(a);
  EXPECT_EQ(solver.info(), Eigen::Success);
  const Eigen::VectorXd x = solver.solve(rhs);
  Field psi = g.zeros();
  for (int j = 1; j < g.ny; ++j) {
    for (int i = 1; i < g.nx; ++i) psi(i, j) = x(idx(i, j));
  }
  return psi;
}

struct FofonoffDrift {
  double q = 0.0;
  double psi = 0.0;
  double cfl = 0.0;
};

FofonoffDrift run_fofonoff(bool fixed_wall_q, int steps) {
  const Grid g(48, 48, 1.0e6, 1.0e6);
  ModelParams p;
  p.f0 = 1e-4;
  p.beta = 2e-11;
  p.thickness_m = {1000.0};
  p.reduced_gravity = {};
  p.wind.tau0 = 0.0;
  p.advection = Advection::arakawa;
  p.fixed_wall_q = fixed_wall_q;
  p.dt = 3600.0;
  const double c = 1.0 / (100e3 * 100e3);  // q = c psi + q0: boundary-layer scale 100 km
  const double q0 = 0.2 * p.beta * g.ly_m;
  Model m(g, p);
  ModelState s = m.state_from_psi({fofonoff_psi(g, p.beta, c, q0)});
  // Wall q of the published state: c psi_w + q0 with psi_w = 0.
  Field& q = s.q[0];
  q.row(0).setConstant(q0);
  q.row(g.nx).setConstant(q0);
  q.col(0).setConstant(q0);
  q.col(g.ny).setConstant(q0);
  const Field q_start = s.q[0];
  const Field psi_start = s.psi[0];
  FofonoffDrift d;
  d.cfl = max_cfl(g, psi_start, p.dt).cfl;
  for (int n = 0; n < steps; ++n) m.step(s);
  d.q = (s.q[0] - q_start).abs().maxCoeff() / q_start.abs().maxCoeff();
  d.psi = (s.psi[0] - psi_start).abs().maxCoeff() / psi_start.abs().maxCoeff();
  return d;
}

TEST(ValidationFofonoff, FreeSteadyStateIsSteadyToRounding) {
  const int steps = 1000;  // 1000 h, about 40 days, 3 advective crossings of the basin
  const FofonoffDrift d = run_fofonoff(true, steps);
  std::printf("Fofonoff (1954): CFL %.3f; after %d steps max relative change q %.2e psi %.2e\n",
              d.cfl, steps, d.q, d.psi);
  EXPECT_GT(d.cfl, 0.05) << "the state should carry a real flow";
  EXPECT_LT(d.cfl, 0.5);
  // Fofonoff (1954), J. Mar. Res. 13: steady to rounding.
  EXPECT_LT(d.q, 1e-10) << "Fofonoff (1954) q drift";
  EXPECT_LT(d.psi, 1e-10) << "Fofonoff (1954) psi drift";
  // Control: with the wall q diagnosed from the wall condition (free slip, beta (y - y0))
  // instead of the state's c psi_w + q0, the same flow is not steady.
  const FofonoffDrift free = run_fofonoff(false, 100);
  EXPECT_GT(free.q, 1e-6);
}

}  // namespace
}  // namespace plateau
