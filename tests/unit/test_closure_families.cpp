// Per-family checks of the closures (CLOSURES.md): the stretching target's momentum and energy
// structure, the Eady and eddy-energy diffusivities against their formulas, the eddy-energy
// budget, the wall taper's rest-state tendency, and the two limiters of flux_limited on fields
// built to break them (each with a control showing that, without the limiter, they do break).
// The expected values come from the formulas named beside each check.

#include <gtest/gtest.h>

#include <iomanip>
#include <iostream>
#include <limits>

#include "tests/unit/test_closure_checks.hpp"

namespace plateau::testing_closures {
namespace {

std::unique_ptr<closure::Closure> make(const std::string& name, const Model& m,
                                       std::vector<std::pair<std::string, std::string>> sets) {
  return make_variant({name, std::move(sets), name}, m);
}

// Two-layer standard result (PHYSICS.md section 2): Ld = sqrt(g' H1 H2 / (H1 + H2)) / f0.
double two_layer_ld(const ModelParams& p) {
  const double h1 = p.thickness_m[0];
  const double h2 = p.thickness_m[1];
  return std::sqrt(p.reduced_gravity[0] * h1 * h2 / (h1 + h2)) / p.f0;
}

// psi_k = -U_k (y - y0) + V_k (x - x0): uniform layer velocities (U_k, V_k).
std::vector<Field> uniform_flow(const Grid& g, const std::vector<std::array<double, 2>>& uv) {
  std::vector<Field> psi(uv.size(), g.zeros());
  for (std::size_t k = 0; k < uv.size(); ++k) {
    for (int j = 0; j <= g.ny; ++j) {
      for (int i = 0; i <= g.nx; ++i) {
        psi[k](i, j) = -uv[k][0] * (g.y(j) - 0.5 * g.ly_m) + uv[k][1] * (g.x(i) - 0.5 * g.lx_m);
      }
    }
  }
  return psi;
}

// ---- constant, stretching target ---------------------------------------------------------------

TEST(ConstantStretching, RemovesAvailablePotentialEnergyAndLeavesTheBarotropicFlowUntouched) {
  const ModelParams p = bay_params(2);
  Model m(bay_grid(32), p);
  const double k = 2000.0;
  ClosureHost host(m, make("constant", m, {{"k_m2_per_s", "2000"}}));
  ModelState s = m.state_from_psi(random_psi(m.grid(), 2, 17U));
  const ModelState before = s;
  const Energy e0 = m.energy(s);
  const Field bt0 = m.barotropic_transport(s);
  host.apply(s);
  // (1) sum_k H_k dq_k/dt = 0 at every node: the fluxes sum to zero over the column.
  double column = 0.0;
  double scale = 0.0;
  for (int j = 1; j < m.grid().ny; ++j) {
    for (int i = 1; i < m.grid().nx; ++i) {
      const double d0 = p.thickness_m[0] * host.last_tendency()[0](i, j);
      const double d1 = p.thickness_m[1] * host.last_tendency()[1](i, j);
      column = std::max(column, std::abs(d0 + d1));
      scale = std::max(scale, std::abs(d0));
    }
  }
  // (2) The energy tendency equals -(f0^2/g') sum over faces of K |grad(psi_1 - psi_2)|^2 dA
  // (CLOSURES.md, layered Gent-McWilliams form), computed here from its formula.
  const Grid& g = m.grid();
  double expected = 0.0;
  const Field d = before.psi[0] - before.psi[1];
  for (int j = 1; j < g.ny; ++j) {
    for (int i = 1; i < g.nx - 1; ++i) expected += std::pow((d(i + 1, j) - d(i, j)) / g.dx, 2);
  }
  for (int j = 1; j < g.ny - 1; ++j) {
    for (int i = 1; i < g.nx; ++i) expected += std::pow((d(i, j + 1) - d(i, j)) / g.dy, 2);
  }
  expected *= -(p.f0 * p.f0 / p.reduced_gravity[0]) * k * g.cell_area();
  // (3) After the inversion: the barotropic transport is unchanged, APE has fallen.
  m.diagnose(s);
  const Energy e1 = m.energy(s);
  const Field bt1 = m.barotropic_transport(s);
  const double bt_change = (bt1 - bt0).abs().maxCoeff();
  std::cout << "  max |sum_k H_k dq_k/dt| = " << column << " m s^-2 (max |H_1 dq_1/dt| = " << scale
            << ")\n"
            << "  energy tendency " << host.last_energy_tendency() << " m^5 s^-3, formula "
            << expected << "\n"
            << "  APE " << e0.potential[0] << " -> " << e1.potential[0] << " m^5 s^-2; (E1-E0)/dt "
            << (e1.total() - e0.total()) / p.dt << " m^5 s^-3\n"
            << "  max |change of the barotropic transport| " << bt_change << " of "
            << bt0.abs().maxCoeff() << " m^3/s\n";
  EXPECT_LE(column, 1e-13 * scale);
  EXPECT_NEAR(host.last_energy_tendency(), expected, 1e-12 * std::abs(expected));
  EXPECT_LT(expected, 0.0);
  EXPECT_LT(e1.potential[0], e0.potential[0]);
  EXPECT_LE(bt_change, 1e-12 * bt0.abs().maxCoeff());
  // The true energy change matches the frozen-psi tendency to O(dt) relative (CLOSURES.md).
  EXPECT_NEAR((e1.total() - e0.total()) / p.dt, expected, 0.05 * std::abs(expected));
}

TEST(ConstantFullPv, RestStateTendencyIsBetaTimesTheTaperSlopeInTheTaperZone) {
  // At rest F_y = -K w beta, so dq/dt = beta K (w(y_{j+1/2}) - w(y_{j-1/2})) / dy: the
  // -beta dK/dy spread over the taper zone (CLOSURES.md), checked against that formula.
  const ModelParams p = bay_params(2);
  Model m(bay_grid(32), p);
  const double k = 1000.0;
  ClosureHost host(m, make("constant", m, {{"k_m2_per_s", "1000"}, {"target", "full_pv"}}));
  ModelState s = m.rest_state();
  host.apply(s);
  const auto& setup = host.setup();
  const closure::kit::Taper t =
      closure::kit::make_taper(setup, host.closure().wall_taper_width_m());
  double worst = 0.0;
  double peak = 0.0;
  for (int j = 1; j < setup.ny; ++j) {
    for (int i = 1; i < setup.nx; ++i) {
      const double wx = t.x_node[uz(i)];
      const double up = j < setup.ny - 1 ? t.y_face[uz(j)] : 0.0;  // wall faces carry nothing
      const double dn = j > 1 ? t.y_face[uz(j - 1)] : 0.0;
      const double expected = p.beta * k * wx * (up - dn) / setup.dy;
      const double got = host.last_tendency()[0](i, j);
      worst = std::max(worst, std::abs(got - expected));
      peak = std::max(peak, std::abs(expected));
    }
  }
  std::cout << "  taper " << t.width_m / 1e3 << " km; peak beta dK/dy " << peak
            << " s^-2 (untapered wall row: K beta/dy = " << k * p.beta / setup.dy
            << "); max deviation " << worst << '\n';
  EXPECT_GT(peak, 0.0);
  EXPECT_LT(peak, k * p.beta / setup.dy);  // spread out: below the untapered wall-row source
  EXPECT_LE(worst, 1e-10 * peak);
}

// ---- eady --------------------------------------------------------------------------------------

TEST(Eady, DiffusivityIsAlphaLSquaredTimesTheEadyGrowthRate) {
  const ModelParams p = bay_params(2);
  Model m(bay_grid(24), p);
  const ModelState s = m.state_from_psi(uniform_flow(m.grid(), {{0.08, 0.03}, {0.02, -0.01}}));
  const double shear = std::hypot(0.08 - 0.02, 0.03 + 0.01);
  // sigma = f0 |u1 - u2| / sqrt(g' h), h = (H1 + H2)/2 (CLOSURES.md; Visbeck et al. 1997).
  const double sigma = p.f0 * shear / std::sqrt(p.reduced_gravity[0] * 2000.0);
  const double ld = two_layer_ld(p);
  const double rhines = std::sqrt(0.3 / p.beta);  // sqrt(U_e / beta) with U_e = 0.3 m/s
  struct Case {
    std::string choice;
    double length;
  };
  for (const Case& c :
       {Case{"fixed", 150e3}, Case{"deformation", ld}, Case{"rhines", std::min(ld, rhines)}}) {
    ClosureHost host(m, make("eady", m,
                             {{"mixing_length", c.choice},
                              {"length_km", "150"},
                              {"u_e_m_per_s", "0.3"},
                              {"alpha", "0.02"}}));
    const auto& setup = host.setup();
    std::vector<Field> diag(2, setup.nodes());
    closure::Scratch scratch;
    const closure::Fluxes none = closure::Fluxes::zeros(setup);
    host.closure().diagnostics(view_of(setup, s, {}), none, diag, scratch);
    const double expected = 0.02 * c.length * c.length * sigma;
    const double got = diag[0](12, 12);
    std::cout << "  mixing length " << c.choice << ": L = " << c.length / 1e3 << " km, K = " << got
              << " m^2/s (formula " << expected << "), sigma " << diag[1](12, 12) << " s^-1 ("
              << sigma << ")\n";
    EXPECT_NEAR(got, expected, 1e-12 * expected);
    EXPECT_NEAR(diag[1](12, 12), sigma, 1e-12 * sigma);
  }
}

// ---- eddy_energy -------------------------------------------------------------------------------

TEST(EddyEnergy, DiffusivityIsAlphaEOverSigmaAndTheSourceGrowsEAtAlphaSigma) {
  const ModelParams p = bay_params(2);
  Model m(bay_grid(24), p);
  const ModelState s = m.state_from_psi(uniform_flow(m.grid(), {{0.1, 0.0}, {0.0, 0.0}}));
  ClosureHost host(m, make("eddy_energy", m, {{"e0_m3_per_s2", "4"}, {"k_min_m2_per_s", "0"}}));
  const auto& setup = host.setup();
  // Sigma = f0 |u1 - u2| sqrt(h/g') (Marshall, Maddison and Berloff 2012); K = alpha E / Sigma.
  const double big_sigma = p.f0 * 0.1 * std::sqrt(2000.0 / p.reduced_gravity[0]);
  const double k_expected = 0.04 * 4.0 / big_sigma;
  std::vector<Field> diag(2, setup.nodes());
  closure::Scratch scratch;
  const StateView v = view_of(setup, s, host.prognostic());
  const closure::Fluxes f = evaluate(host.closure(), setup, v, setup.dt_s);
  host.closure().diagnostics(v, f, diag, scratch);
  // With K = alpha E/Sigma the source (f0^2/g') K |u1-u2|^2 is alpha sigma E, sigma the Eady
  // rate f0 |u1 - u2| / sqrt(g' h): follows from the two definitions.
  const double sigma = p.f0 * 0.1 / std::sqrt(p.reduced_gravity[0] * 2000.0);
  std::cout << "  K = " << diag[0](12, 12) << " m^2/s (alpha E / Sigma = " << k_expected
            << "); source / E = " << diag[1](12, 12) / 4.0
            << " s^-1 (alpha sigma = " << 0.04 * sigma << ")\n";
  EXPECT_NEAR(diag[0](12, 12), k_expected, 1e-12 * k_expected);
  EXPECT_NEAR(diag[1](12, 12) / 4.0, 0.04 * sigma, 1e-12 * 0.04 * sigma);
}

TEST(EddyEnergy, EnergyTakenFromTheMeanFlowEqualsTheEddyEnergySource) {
  const ModelParams p = bay_params(3);
  Model m(bay_grid(32), p);
  // lambda = 0: advection and diffusion of E conserve it, so the change of the basin's E is
  // the source alone; it must equal minus the closure's energy tendency with the frozen psi
  // weight (CLOSURES.md), to rounding.
  ClosureHost host(m,
                   make("eddy_energy", m, {{"lambda_per_day", "0"}, {"kappa_e_m2_per_s", "2000"}}));
  vary(host.prognostic(), host.setup());
  ModelState s = m.state_from_psi(random_psi(m.grid(), 3, 41U));
  const double eps = std::numeric_limits<double>::epsilon();
  for (int step = 0; step < 5; ++step) {
    const Field e_before = host.prognostic()[0];
    host.apply(s);
    const Field& e_after = host.prognostic()[0];
    const double gained = interior_integral(m.grid(), e_after - e_before);  // m^5 s^-2
    const double removed = -host.last_energy_tendency() * p.dt;             // m^5 s^-2
    // Rounding: each node's E rounds once per sub-step of the E update (a few), by eps/2 |E|.
    const double rounding = 4.0 * eps * interior_integral(m.grid(), e_after.abs());
    std::cout << "  step " << step << ": eddy energy gained " << gained
              << " m^5 s^-2, resolved energy removed " << removed << " m^5 s^-2, gap "
              << gained - removed << " (rounding bound " << rounding << ")\n";
    EXPECT_GT(removed, 0.0);
    EXPECT_LE(std::abs(gained - removed), rounding + 1e-12 * removed);
    EXPECT_GE(host.prognostic()[0].minCoeff(), 0.0);
  }
}

TEST(EddyEnergy, StaysNonNegativeUnderStrongDampingAndAdvection) {
  const ModelParams p = bay_params(2, 86400.0);
  Model m(bay_grid(24), p);
  ClosureHost host(m,
                   make("eddy_energy", m, {{"lambda_per_day", "1"}, {"kappa_e_m2_per_s", "1e4"}}));
  vary(host.prognostic(), host.setup());
  std::vector<Field> psi = random_psi(m.grid(), 2, 9U);
  for (Field& f : psi) f *= 5.0;  // fast barotropic flow for the advection of E
  ModelState s = m.state_from_psi(psi);
  for (int step = 0; step < 50; ++step) host.apply(s);
  std::cout << "  after 50 days: E in [" << host.prognostic()[0].minCoeff() << ", "
            << host.prognostic()[0].maxCoeff() << "] m^3 s^-2\n";
  EXPECT_GE(host.prognostic()[0].minCoeff(), 0.0);
  EXPECT_TRUE(host.prognostic()[0].allFinite());
}

// ---- flux_limited --------------------------------------------------------------------------

// Largest excursion of `after` outside [min, max] of `before` over each interior node and its
// interior neighbours, relative to the field's range.
double new_extremum(const Grid& g, const Field& before, const Field& after) {
  double worst = 0.0;
  const double range = before.block(1, 1, g.nx - 1, g.ny - 1).maxCoeff() -
                       before.block(1, 1, g.nx - 1, g.ny - 1).minCoeff();
  for (int j = 1; j < g.ny; ++j) {
    for (int i = 1; i < g.nx; ++i) {
      double lo = before(i, j);
      double hi = before(i, j);
      const int nb[4][2] = {{i - 1, j}, {i + 1, j}, {i, j - 1}, {i, j + 1}};
      for (const auto& n : nb) {
        if (n[0] < 1 || n[0] > g.nx - 1 || n[1] < 1 || n[1] > g.ny - 1) continue;
        lo = std::min(lo, before(n[0], n[1]));
        hi = std::max(hi, before(n[0], n[1]));
      }
      worst = std::max({worst, after(i, j) - hi, lo - after(i, j)});
    }
  }
  return worst / range;
}

// A sharp interface bump: psi_1 - psi_2 is a narrow tower of 3 x 3 nodes plus a step, so that
// the stretching flux with a large K dt / dx^2 overshoots.
ModelState provoking_state(const Model& m) {
  const Grid& g = m.grid();
  std::vector<Field> psi(2, g.zeros());
  for (int j = 1; j < g.ny; ++j) {
    for (int i = 1; i < g.nx; ++i) {
      double v = (i >= 10 && i <= 12 && j >= 10 && j <= 12) ? 3e4 : 0.0;
      if (i > 16) v += 1e4;
      psi[0](i, j) = v;
    }
  }
  return m.state_from_psi(psi);
}

TEST(FluxLimited, ZalesakLimiterCreatesNoNewExtremumOfTheStretchingPv) {
  // Stretching target: q~ = S psi is frozen by psi over the step, so the flux is applied in
  // one piece whatever K dt / dx^2 (here 5e4 m^2/s x 1 day / (41.7 km)^2 = 2.5 per direction).
  const ModelParams p = bay_params(2, 86400.0);
  Model m(bay_grid(24), p);
  const ModelState s = provoking_state(m);
  for (const bool limited : {false, true}) {
    ClosureHost host(m, make("flux_limited", m,
                             {{"k_m2_per_s", "5e4"},
                              {"cauchy_schwarz", "false"},
                              {"zalesak", limited ? "true" : "false"}}));
    const auto& setup = host.setup();
    const StateView v = view_of(setup, s, {});
    const closure::Fluxes f = evaluate(host.closure(), setup, v, setup.dt_s);
    std::vector<Field> t;
    flux_divergence(setup, f, t);
    double worst = 0.0;
    for (int k = 0; k < 2; ++k) {
      const Field qt = diffused_of(host.closure(), setup, v, k);
      const Field after = qt + setup.dt_s * t[uz(k)];
      worst = std::max(worst, new_extremum(m.grid(), qt, after));
    }
    std::cout << "  zalesak " << (limited ? "on " : "off") << ": largest new extremum of q~ "
              << worst << " of its range\n";
    if (limited) {
      EXPECT_LE(worst, 1e-12);
    } else {
      EXPECT_GT(worst, 0.05);  // the control: without the limiter the field does overshoot
    }
  }
}

TEST(FluxLimited, ZalesakLimiterCreatesNoNewExtremumOfTheFullPvWithoutSubSteps) {
  // Full PV with the sub-stepping switched off (test-only hook): K dt (1/dx^2 + 1/dy^2) = 5
  // instead of <= 1/4, so plain diffusion overshoots.
  const ModelParams p = bay_params(2, 86400.0);
  Model m(bay_grid(24), p);
  HostOptions no_substeps;
  no_substeps.substepping = false;
  for (const bool limited : {false, true}) {
    ClosureHost host(m,
                     make("flux_limited", m,
                          {{"k_m2_per_s", "5e4"},
                           {"target", "full_pv"},
                           {"taper_km", "1"},
                           {"cauchy_schwarz", "false"},
                           {"zalesak", limited ? "true" : "false"}}),
                     no_substeps);
    ModelState s = m.state_from_psi(random_psi(m.grid(), 2, 4U));
    for (Field& q : s.q) {
      q(8, 8) += 4e-5;  // a spike
      q(15, 9) -= 3e-5;
    }
    const ModelState before = s;
    host.apply(s);
    double worst = 0.0;
    for (int k = 0; k < 2; ++k)
      worst = std::max(worst, new_extremum(m.grid(), before.q[uz(k)], s.q[uz(k)]));
    std::cout << "  zalesak " << (limited ? "on " : "off") << ", " << host.last_substeps()
              << " sub-step: largest new extremum of q " << worst << " of its range\n";
    EXPECT_EQ(host.last_substeps(), 1);
    if (limited) {
      EXPECT_LE(worst, 1e-12);
    } else {
      EXPECT_GT(worst, 0.05);
    }
  }
}

TEST(FluxLimited, CauchySchwarzBoundHoldsOnEveryFace) {
  const ModelParams p = bay_params(2);
  Model m(bay_grid(32), p);
  const double ld = two_layer_ld(p);
  for (const std::string target : {"stretching", "full_pv"}) {
    for (const std::string source : {"declared", "eddy_energy"}) {
      ClosureHost host(m, make("flux_limited", m,
                               {{"k_m2_per_s", "2e4"},
                                {"zalesak", "false"},
                                {"target", target},
                                {"c_bound", "0.8"},
                                {"u_e_source", source},
                                {"u_e_m_per_s", "0.02"},
                                {"e0_m3_per_s2", "0.5"}}));
      vary(host.prognostic(), host.setup());
      const auto& setup = host.setup();
      const ModelState s = m.state_from_psi(random_psi(m.grid(), 2, 12U));
      const StateView v = view_of(setup, s, host.prognostic());
      const closure::Fluxes f = evaluate(host.closure(), setup, v, setup.dt_s);
      // u_e at a face: declared, or sqrt(2 E / H) with E the mean of the face's two nodes.
      auto u_e = [&](int i0, int j0, int i1, int j1) {
        if (source == "declared") return 0.02;
        const Field& e = host.prognostic()[0];
        return std::sqrt(2.0 * (0.5 * (e(i0, j0) + e(i1, j1))) / setup.total_depth());
      };
      double worst = 0.0;
      int active = 0;
      int faces = 0;
      for (int k = 0; k < 2; ++k) {
        const Field qt = diffused_of(host.closure(), setup, v, k);
        for (int j = 1; j < setup.ny; ++j) {
          for (int i = 1; i < setup.nx - 1; ++i) {
            const double bound =
                0.8 * u_e(i, j, i + 1, j) * ld * std::abs(qt(i + 1, j) - qt(i, j)) / setup.dx;
            const double a = std::abs(f.fx[uz(k)](i, j));
            worst = std::max(worst, bound > 0 ? a / bound : (a > 0 ? 2.0 : 0.0));
            active += a > 0.999 * bound && a > 0 ? 1 : 0;
            ++faces;
          }
        }
        for (int j = 1; j < setup.ny - 1; ++j) {
          for (int i = 1; i < setup.nx; ++i) {
            const double bound =
                0.8 * u_e(i, j, i, j + 1) * ld * std::abs(qt(i, j + 1) - qt(i, j)) / setup.dy;
            const double a = std::abs(f.fy[uz(k)](i, j));
            worst = std::max(worst, bound > 0 ? a / bound : (a > 0 ? 2.0 : 0.0));
            active += a > 0.999 * bound && a > 0 ? 1 : 0;
            ++faces;
          }
        }
      }
      std::cout << std::setprecision(15) << "  " << target << ", u_e " << source
                << ": max |F| / (c u_e L |grad q~|) = " << worst << " over " << faces
                << " faces; at the bound on " << active << '\n';
      // Differences of q~ = S psi between neighbours lose digits to cancellation (q~ is large
      // beside its differences), so the bound is met to 1e-9, not to the last bit.
      EXPECT_LE(worst, 1.0 + 1e-9);
      EXPECT_GT(active, faces / 10);  // the bound is active: K = 2e4 exceeds c u_e L
    }
  }
}

}  // namespace
}  // namespace plateau::testing_closures
