// Validation of the discrete energy budget (PHYSICS.md section 1): with the weight psi_k - c_k,
// kinetic energy by summation by parts and potential energy by the trapezoid rule (the mass
// constraint's integral), dE/dt = budget().sum() holds exactly in space, so the difference
// between the change of Model::energy().total() over a window and the time integral of
// budget().sum() comes from time stepping alone, and must fall when dt is halved.
//
// The integral is the trapezoid rule over the steps (the budget sampled at every step), whose
// error is second order in dt; AB3's own error is third order. Halving dt must cut the residual
// by more than 3x (4x expected from the trapezoid rule).

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <ostream>
#include <string>

#include "harness/model/model.hpp"

namespace plateau {
namespace {

struct BudgetCase {
  std::string name;
  WallKind wall = WallKind::free_slip;
  double a2 = 0.0;
  double a4 = 0.0;
};

// Readable test names in ctest (gtest prints a parameter's bytes otherwise).
void PrintTo(const BudgetCase& c, std::ostream* os) { *os << c.name; }

struct BudgetResult {
  double residual = 0.0;  // (E_end - E_0) - integral of budget().sum()
  double largest = 0.0;   // the largest |time integral| among the budget terms
  double de = 0.0;        // E_end - E_0
  double wind = 0.0, drag = 0.0, friction = 0.0, advection = 0.0;  // time integrals
  double max_cfl = 0.0;
};

constexpr double kSpan = 300.0 * 7200.0;  // 25 days from rest

BudgetResult run_budget(const BudgetCase& c, double dt) {
  const Grid g(32, 32, 1.0e6, 1.0e6);
  ModelParams p;
  p.f0 = 1e-4;
  p.beta = 2e-11;
  p.thickness_m = {1000.0, 3000.0};
  p.reduced_gravity = {0.02};  // Ld = 39 km
  p.wind.profile = WindProfile::double_gyre;
  p.wind.tau0 = 0.2;
  p.bottom_drag = 1e-7;
  p.a2 = c.a2;
  p.a4 = c.a4;
  p.wall = c.wall;
  p.advection = Advection::arakawa;
  p.dt = dt;
  Model model(g, p);
  ModelState s = model.rest_state();
  const int steps = static_cast<int>(std::lround(kSpan / dt));
  BudgetResult r;
  const double e0 = model.energy(s).total();
  BudgetTerms prev = model.budget(s);
  for (int n = 0; n < steps; ++n) {
    model.step(s);
    const BudgetTerms cur = model.budget(s);
    r.wind += 0.5 * dt * (prev.wind + cur.wind);
    r.drag += 0.5 * dt * (prev.bottom_drag + cur.bottom_drag);
    r.friction += 0.5 * dt * (prev.lateral_friction + cur.lateral_friction);
    r.advection += 0.5 * dt * (prev.advection + cur.advection);
    prev = cur;
    for (int k = 0; k < model.n_layers(); ++k) {
      r.max_cfl = std::max(r.max_cfl, max_cfl(g, s.psi[static_cast<std::size_t>(k)], dt).cfl);
    }
  }
  r.de = model.energy(s).total() - e0;
  r.residual = r.de - (r.wind + r.drag + r.friction + r.advection);
  r.largest =
      std::max({std::abs(r.wind), std::abs(r.drag), std::abs(r.friction), std::abs(r.advection)});
  return r;
}

class EnergyBudget : public ::testing::TestWithParam<BudgetCase> {};

TEST_P(EnergyBudget, ClosesToTimeSteppingError) {
  const BudgetCase& c = GetParam();
  const BudgetResult coarse = run_budget(c, 7200.0);
  const BudgetResult fine = run_budget(c, 3600.0);
  std::printf(
      "%s: dE %.4e; wind %.4e drag %.4e friction %.4e advection %.2e (m^5 s^-2); "
      "max CFL %.3f\n",
      c.name.c_str(), coarse.de, coarse.wind, coarse.drag, coarse.friction, coarse.advection,
      coarse.max_cfl);
  const double rel_coarse = std::abs(coarse.residual) / coarse.largest;
  const double rel_fine = std::abs(fine.residual) / fine.largest;
  std::printf("%s: residual / largest term: dt 7200 s %.3e, dt 3600 s %.3e, ratio %.2f\n",
              c.name.c_str(), rel_coarse, rel_fine, rel_coarse / rel_fine);
  EXPECT_GT(coarse.de, 0.0) << "the wind should spin the basin up";
  // Energy budget (PHYSICS.md section 1): residual < 1e-3 of the largest term...
  EXPECT_LT(rel_coarse, 1e-3);
  // ... from time stepping alone: it falls by > 3x when dt is halved.
  EXPECT_GT(rel_coarse / rel_fine, 3.0);
  // The Arakawa Jacobian does no work (energy identity, Arakawa 1966).
  EXPECT_LT(std::abs(coarse.advection), 1e-10 * coarse.largest);
}

INSTANTIATE_TEST_SUITE_P(
    Walls, EnergyBudget,
    ::testing::Values(BudgetCase{"free_slip_laplacian", WallKind::free_slip, 1000.0, 0.0},
                      BudgetCase{"no_slip_laplacian", WallKind::no_slip, 1000.0, 0.0},
                      BudgetCase{"free_slip_biharmonic", WallKind::free_slip, 0.0, 2e11}),
    [](const ::testing::TestParamInfo<BudgetCase>& tp) { return tp.param.name; });

}  // namespace
}  // namespace plateau
