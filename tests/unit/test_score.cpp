// Scoring metrics on synthetic fields with known answers (SCORING.md), the scorecard's
// arithmetic and its JSON.
//
// Each check value is derived here from a definition or a published formula (named beside it),
// never from a number this code printed.

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <numbers>
#include <set>
#include <sstream>
#include <string>
#include <vector>

#include "harness/coarse/coarse_grain.hpp"
#include "harness/model/model.hpp"
#include "harness/run/run.hpp"
#include "harness/score/apriori.hpp"
#include "harness/score/contour_budget.hpp"
#include "harness/score/energy.hpp"
#include "harness/score/from_run.hpp"
#include "harness/score/plateau.hpp"
#include "harness/score/regions.hpp"
#include "harness/score/score.hpp"
#include "harness/score/scorecard.hpp"
#include "harness/score/transport.hpp"

namespace plateau {
namespace {

constexpr double kPi = std::numbers::pi;
constexpr double kL = 1.0e6;       // basin side, m
constexpr double kBeta = 2.0e-11;  // m^-1 s^-1
constexpr double kRho0 = 1025.0;   // kg m^-3
constexpr double kTau0 = 0.1;      // N m^-2

std::size_t uz(int k) { return static_cast<std::size_t>(k); }

// A radially symmetric anticyclone psi = c + P exp(-r^2 / (2 s^2)) centred on the basin's
// middle node; the walls hold c exactly.
Field gaussian_gyre(const Grid& g, double c, double amp, double s) {
  Field f = Field::Constant(g.nx + 1, g.ny + 1, c);
  const double xc = 0.5 * g.lx_m;
  const double yc = 0.5 * g.ly_m;
  for (int j = 1; j < g.ny; ++j) {
    for (int i = 1; i < g.nx; ++i) {
      const double r2 = (g.x(i) - xc) * (g.x(i) - xc) + (g.y(j) - yc) * (g.y(j) - yc);
      f(i, j) = c + amp * std::exp(-r2 / (2.0 * s * s));
    }
  }
  return f;
}

double radius(const Grid& g, int i, int j) {
  return std::hypot(g.x(i) - 0.5 * g.lx_m, g.y(j) - 0.5 * g.ly_m);
}

// q = beta (y - y0) everywhere, written as Model::state_from_psi writes it.
Field planetary_q(const Grid& g) {
  Field q = g.zeros();
  for (int j = 0; j <= g.ny; ++j) {
    for (int i = 0; i <= g.nx; ++i) q(i, j) = kBeta * (g.y(j) - g.y0);
  }
  return q;
}

// q uniform (q0) inside radius r0, planetary outside.
Field plateau_q(const Grid& g, double q0, double r0) {
  Field q = planetary_q(g);
  for (int j = 1; j < g.ny; ++j) {
    for (int i = 1; i < g.nx; ++i) {
      if (radius(g, i, j) < r0) q(i, j) = q0;
    }
  }
  return q;
}

// A two-layer run with the circular gyre in both layers; energies and series filled with
// plain numbers.
ScoreRun gyre_run(const Grid& g, const Field& q_lower) {
  const double s = 0.1 * kL;
  ScoreRun r;
  r.mean_psi = {gaussian_gyre(g, 100.0, 3.0e4, s), gaussian_gyre(g, -50.0, 1.0e4, s)};
  r.mean_q = {plateau_q(g, 1.0e-6, 0.25 * kL), q_lower};
  r.wall_psi = {100.0, -50.0};
  r.mean_energy.kinetic = {3.0e15, 1.0e15};
  r.mean_energy.potential = {2.0e15};
  r.mean_state_energy.kinetic = {2.0e15, 0.5e15};
  r.mean_state_energy.potential = {1.5e15};
  r.window_start_s = 1.0e9;
  for (int n = 0; n < 20; ++n) {
    r.series_t_s.push_back(1.0e9 + n * 1.0e6);
    r.series_total.push_back(6.0e15);
  }
  r.budget.window_s = 2.0e7;
  r.budget.terms.wind = 2.0e7 * 1.0e9;
  r.budget.terms.bottom_drag = -2.0e7 * 0.6e9;
  r.budget.terms.lateral_friction = -2.0e7 * 0.4e9;
  r.budget.energy_start = 6.0e15;
  r.budget.energy_end = 6.0e15;
  return r;
}

ScoreInput two_layer_input(const Grid& g) {
  ScoreInput in;
  in.case_name = "synthetic";
  in.closure = "test";
  in.basin.grid = g;
  in.basin.thickness_m = {1000.0, 3000.0};
  in.basin.beta = kBeta;
  in.basin.ld1_m = 3.0e4;
  in.basin.gyres = {Gyre::anticyclonic};
  return in;
}

// ---------------------------------------------------------------------------------------------
// PV plateau: uniform q inside a circular gyre; q = beta y.
// ---------------------------------------------------------------------------------------------

// Uniform q over the gyre region: std_G(q) = 0, so homogeneity = 1 - 0 = 1 (the definition);
// |grad q| = 0 < epsilon beta on all of G, so P = G (fraction 1) and truth and candidate masks
// coincide (IoU 1); cov(q, psi) = 0, so the q-psi slope is 0.
TEST(Plateau, UniformQInsideACircularGyre) {
  const Grid g(64, 64, kL, kL);
  const double s = 0.1 * kL;
  const Field psi = gaussian_gyre(g, -50.0, 1.0e4, s);
  const double q0 = 3.7e-6;
  const Field q = plateau_q(g, q0, 2.5 * s);
  const GyreRegion region = gyre_region(g, psi, -50.0, Gyre::anticyclonic, 0.3);
  ASSERT_FALSE(region.empty());
  // The region is the disc where exp(-r^2/2s^2) >= 0.3: r <= s sqrt(2 ln(1/0.3)).
  const double r_region = s * std::sqrt(2.0 * std::log(1.0 / 0.3));
  for (int j = 0; j <= g.ny; ++j) {
    for (int i = 0; i <= g.nx; ++i) {
      const double r = radius(g, i, j);
      if (std::abs(r - r_region) > 1e-6 * s) {
        EXPECT_EQ(region.mask(i, j), r < r_region);
      }
    }
  }
  EXPECT_NEAR(homogeneity(g, q, region.mask, kBeta), 1.0, 1e-12);
  const Mask p = plateau_mask(g, q, region.mask, 0.25 * kBeta);
  EXPECT_EQ(p.count(), region.mask.count());
  EXPECT_EQ(area_fraction(p, region.mask), 1.0);
  EXPECT_EQ(overlap(p, p), 1.0);
  EXPECT_NEAR(*mean_over(q, p), q0, 1e-18);
  EXPECT_NEAR(q_psi_slope(g, q, psi, region.mask, kBeta), 0.0, 1e-12);
}

// q = beta (y - y0): std_G(q) = std_G(beta (y - y0)) over any region, so homogeneity is exactly
// 0 by the definition; with q = beta y (offset by beta y0) the same up to rounding. Its gradient
// beta exceeds epsilon beta everywhere: the plateau mask is empty.
TEST(Plateau, PlanetaryGradientHasZeroHomogeneity) {
  const Grid g(64, 64, kL, kL);
  const double s = 0.1 * kL;
  const Field psi = gaussian_gyre(g, 0.0, 1.0e4, s);
  const GyreRegion region = gyre_region(g, psi, 0.0, Gyre::anticyclonic, 0.3);
  // The rest state of the model: q = 0 + beta (y - y0) + 0.
  ModelParams mp;
  mp.f0 = 1e-4;
  mp.beta = kBeta;
  mp.thickness_m = {1000.0};
  mp.dt = 1.0;
  const Model model(g, mp);
  const Field q = model.rest_state().q[0];
  EXPECT_EQ(homogeneity(g, q, region.mask, kBeta), 0.0);
  Field qy = g.zeros();
  for (int j = 0; j <= g.ny; ++j) qy.col(j).setConstant(kBeta * g.y(j));
  EXPECT_NEAR(homogeneity(g, qy, region.mask, kBeta), 0.0, 1e-12);
  EXPECT_EQ(plateau_mask(g, q, region.mask, 0.25 * kBeta).count(), 0);
  // A region without meridional extent has no planetary spread: homogeneity 0, not NaN.
  Mask row = empty_mask(g);
  row(10, 10) = row(11, 10) = true;
  EXPECT_EQ(homogeneity(g, q, row, kBeta), 0.0);
}

// The same two fields through score(): truth with the plateau, candidate with q = beta (y - y0)
// in the sheltered layer. Homogeneity error |0 - 1| = 1 (skill 0); the candidate's empty mask
// scores 0 with defined numbers (IoU 0, level undefined), never NaN.
TEST(Plateau, ScorecardOfAPlateauAgainstNone) {
  const Grid g(64, 64, kL, kL);
  ScoreInput in = two_layer_input(g);
  in.truth = gyre_run(g, plateau_q(g, 2.0e-6, 0.25 * kL));
  in.candidate = gyre_run(g, planetary_q(g));
  const Scorecard card = score(in);
  const std::string id = "plateau.L2.anticyclonic.";
  const Metric* h = card.find(id + "homogeneity");
  ASSERT_NE(h, nullptr);
  EXPECT_NEAR(*h->truth, 1.0, 1e-12);
  EXPECT_EQ(*h->candidate, 0.0);
  EXPECT_NEAR(h->skill, 0.0, 1e-12);
  for (const char* name : {"plateau_fraction", "plateau_overlap", "plateau_level"}) {
    const Metric* m = card.find(id + name);
    ASSERT_NE(m, nullptr) << name;
    EXPECT_EQ(m->skill, 0.0) << name;
    EXPECT_TRUE(std::isfinite(m->error)) << name;
    EXPECT_EQ(m->note, "empty plateau mask (candidate)") << name;
  }
  EXPECT_FALSE(card.find(id + "plateau_level")->candidate.has_value());
  EXPECT_EQ(*card.find(id + "plateau_overlap")->candidate, 0.0);
  // The same candidate as the truth scores 1 on every plateau metric.
  in.candidate = in.truth;
  const Scorecard same = score(in);
  for (const Metric& m : same.metrics) {
    if (m.category == Category::plateau) {
      EXPECT_NEAR(m.skill, 1.0, 1e-12) << m.id;
    }
  }
}

// An empty truth mask scores 0 too; so does a gyre the truth does not have.
TEST(Plateau, EmptyTruthMaskAndMissingGyreScoreZero) {
  const Grid g(32, 32, kL, kL);
  ScoreInput in = two_layer_input(g);
  in.truth = gyre_run(g, planetary_q(g));
  in.candidate = in.truth;
  in.basin.gyres = {Gyre::anticyclonic, Gyre::cyclonic};  // no cyclone in these fields
  const Scorecard card = score(in);
  EXPECT_EQ(card.find("plateau.L2.anticyclonic.plateau_overlap")->skill, 0.0);
  EXPECT_FALSE(card.find("plateau.L2.anticyclonic.plateau_overlap")->truth.has_value());
  const Metric* c = card.find("plateau.L2.cyclonic.homogeneity");
  ASSERT_NE(c, nullptr);
  EXPECT_EQ(c->skill, 0.0);
  EXPECT_FALSE(c->truth.has_value());
  const nlohmann::json j = scorecard_to_json(card);
  EXPECT_EQ(j.dump().find("NaN"), std::string::npos);
}

// The dimensionless q-psi slope of q = a (psi - c) + b: slope a times (psi range of G) /
// (beta extent of G), from its definition.
TEST(Plateau, QPsiSlopeOfALinearRelation) {
  const Grid g(64, 64, kL, kL);
  const Field psi = gaussian_gyre(g, 0.0, 1.0e4, 0.1 * kL);
  const double a = 3.0e-14;  // s^-1 / (m^2 s^-1)
  const Field q = a * psi + 1.0e-6;
  const GyreRegion region = gyre_region(g, psi, 0.0, Gyre::anticyclonic, 0.3);
  double pmin = 1e300;
  double pmax = -1e300;
  int jmin = g.ny;
  int jmax = 0;
  for (int j = 0; j <= g.ny; ++j) {
    for (int i = 0; i <= g.nx; ++i) {
      if (!region.mask(i, j)) continue;
      pmin = std::min(pmin, psi(i, j));
      pmax = std::max(pmax, psi(i, j));
      jmin = std::min(jmin, j);
      jmax = std::max(jmax, j);
    }
  }
  const double expect = a * (pmax - pmin) / (kBeta * (jmax - jmin) * g.dy);
  EXPECT_NEAR(q_psi_slope(g, q, psi, region.mask, kBeta), expect, 1e-12 * std::abs(expect));
}

TEST(Plateau, RmsDifferenceOverTheInterior) {
  const Grid g(8, 6, kL, kL);
  Field a = g.zeros();
  Field b = g.zeros();
  a(3, 3) = 7.0;               // interior: counts
  a(0, 3) = 1e9;               // wall: ignored
  const double n = 7.0 * 5.0;  // interior nodes
  EXPECT_NEAR(rms_difference(g, a, b), std::sqrt(49.0 / n), 1e-15);
}

// ---------------------------------------------------------------------------------------------
// Transport: the Sverdrup gyre (Sverdrup 1947, PNAS 33).
// ---------------------------------------------------------------------------------------------

// curl_z tau = -d(tau_x)/dy for tau_x = -tau0 cos(m pi y / Ly): -tau0 (m pi / Ly) sin(m pi y/Ly).
double curl_tau(double y, int m) { return -kTau0 * (m * kPi / kL) * std::sin(m * kPi * y / kL); }

// The depth-integrated Sverdrup balance beta Psi_x = curl(tau) / rho0, integrated westward from
// Psi = 0 on the eastern wall (exact on the grid: the integrand does not depend on x). The
// western boundary current is collapsed into the wall node: psi = c_k on every wall. Each layer
// carries its share H_k / H of Psi (a barotropic flow).
std::vector<Field> sverdrup_layers(const Grid& g, int m, const std::vector<double>& h,
                                   const std::vector<double>& c) {
  const double depth = h[0] + h[1];
  Field psi_t = g.zeros();  // m^3 s^-1
  for (int j = 0; j <= g.ny; ++j) {
    for (int i = g.nx - 1; i >= 0; --i) {
      psi_t(i, j) = psi_t(i + 1, j) - g.dx * curl_tau(g.y(j), m) / (kRho0 * kBeta);
    }
  }
  std::vector<Field> out;
  for (std::size_t k = 0; k < h.size(); ++k) {
    Field p = Field::Constant(g.nx + 1, g.ny + 1, c[k]);
    for (int j = 1; j < g.ny; ++j) {
      for (int i = 1; i < g.nx; ++i) p(i, j) = c[k] + psi_t(i, j) / depth;
    }
    out.push_back(p);
  }
  return out;
}

TEST(Transport, SverdrupGyreMatchesTheFormula) {
  const Grid g(64, 64, kL, kL);
  const std::vector<double> h = {1000.0, 3000.0};
  const std::vector<double> c = {250.0, -80.0};
  const std::vector<Field> psi = sverdrup_layers(g, 1, h, c);
  // Sverdrup: Psi(x, y) = (Lx - x) tau0 (pi / Ly) sin(pi y / Ly) / (rho0 beta); its basin maximum
  // Lx tau0 pi / (rho0 beta Ly) (about 15.3 Sv here) at the western wall, y = Ly/2; the first
  // interior node (x = dx) holds (1 - dx/Lx) of it, the rest is the western boundary current's
  // share west of that node.
  const double basin = kL * kTau0 * kPi / (kRho0 * kBeta * kL) / kSverdrup;
  const double at_dx = (1.0 - g.dx / kL) * basin;
  ScoreInput in = two_layer_input(g);
  ScoreRun run = gyre_run(g, planetary_q(g));
  run.mean_psi = psi;
  run.wall_psi = c;
  in.truth = run;
  in.candidate = run;
  const Scorecard card = score(in);
  const Metric* mx = card.find("transport.barotropic.max_sv");
  ASSERT_NE(mx, nullptr);
  EXPECT_NEAR(*mx->truth, at_dx, 1e-10 * basin);
  EXPECT_NEAR(*mx->truth, basin, g.dx / kL * basin * (1.0 + 1e-9));
  EXPECT_EQ(mx->unit, "Sv");
  EXPECT_NEAR(*card.find("transport.wbc.anticyclonic.sv")->truth, at_dx, 1e-10 * basin);
  EXPECT_NEAR(*card.find("transport.L1.anticyclonic.sv")->truth, at_dx * h[0] / 4000.0,
              1e-10 * basin);
  EXPECT_NEAR(*card.find("transport.L2.anticyclonic.sv")->truth, at_dx * h[1] / 4000.0,
              1e-10 * basin);
  EXPECT_EQ(card.find("transport.barotropic.min_sv"), nullptr);  // single gyre

  // The candidate at 80% of the truth's transport: relative error 0.2, skill 0.8.
  in.candidate.mean_psi = {c[0] + 0.8 * (psi[0] - c[0]), c[1] + 0.8 * (psi[1] - c[1])};
  const Scorecard weak = score(in);
  EXPECT_NEAR(weak.find("transport.barotropic.max_sv")->error, 0.2, 1e-12);
  EXPECT_NEAR(weak.find("transport.barotropic.max_sv")->skill, 0.8, 1e-12);
}

// The double-gyre Sverdrup flow, tau_x = -tau0 cos(2 pi y / Ly): anticyclonic south, cyclonic
// north, zero transport on y = Ly/2. There u = -psi_y is proportional to (Lx - x) (centred
// differences of the sine keep that), eastward; it falls to a fraction f of its maximum (at
// x = dx) where Lx - x = f (Lx - dx): the penetration length is (1 - f) Lx + f dx exactly.
TEST(Transport, DoubleGyreJetAndBothExtremes) {
  const Grid g(64, 64, kL, kL);
  const std::vector<double> h = {1000.0, 3000.0};
  const std::vector<double> c = {0.0, 0.0};
  const std::vector<Field> psi = sverdrup_layers(g, 2, h, c);
  const Field t = barotropic_transport(psi, c, h);
  EXPECT_EQ(zero_transport_row(g, t), g.ny / 2);
  for (const double f : {0.25, 0.5}) {
    EXPECT_NEAR(jet_penetration(g, t, psi[0], f), (1.0 - f) * kL + f * g.dx, 1e-6 * kL) << f;
  }
  // Extremes: +-(Lx - dx) tau0 (2 pi / Ly) / (rho0 beta) at y = Ly/4 and 3 Ly/4.
  const double ext = (kL - g.dx) * kTau0 * (2.0 * kPi / kL) / (kRho0 * kBeta);
  EXPECT_NEAR(gyre_extremum(g, t, 0.0, Gyre::anticyclonic).value, ext, 1e-10 * ext);
  EXPECT_NEAR(gyre_extremum(g, t, 0.0, Gyre::cyclonic).value, -ext, 1e-10 * ext);
  EXPECT_EQ(gyre_extremum(g, t, 0.0, Gyre::anticyclonic).j, g.ny / 4);

  ScoreInput in = two_layer_input(g);
  in.basin.gyres = {Gyre::anticyclonic, Gyre::cyclonic};
  ScoreRun run = gyre_run(g, planetary_q(g));
  run.mean_psi = psi;
  run.wall_psi = c;
  in.truth = run;
  in.candidate = run;
  const Scorecard card = score(in);
  EXPECT_NEAR(*card.find("transport.barotropic.min_sv")->truth, -ext / kSverdrup, 1e-6);
  EXPECT_NEAR(*card.find("transport.jet.penetration_km")->truth, (0.75 * kL + 0.25 * g.dx) / 1e3,
              1e-6);
  EXPECT_NEAR(*card.find("transport.wbc.cyclonic.sv")->truth, -ext / kSverdrup, 1e-6);
}

// A boundary current with a countercurrent: T rises to 10 at the second node, dips to 6, then
// rises to the gyre's 12; the western boundary current is the first extremum (10), not 12.
TEST(Transport, WesternBoundaryCurrentStopsAtTheFirstExtremum) {
  const Grid g(8, 4, kL, kL);
  Field t = g.zeros();
  const double row[] = {0.0, 4.0, 10.0, 6.0, 9.0, 12.0, 8.0, 3.0, 0.0};
  for (int i = 0; i <= 8; ++i) t(i, 2) = row[i];
  t(5, 1) = 1.0;
  EXPECT_EQ(western_boundary_transport(g, t, Gyre::anticyclonic), 10.0);
  EXPECT_EQ(western_boundary_transport(g, -t, Gyre::cyclonic), -10.0);
  EXPECT_EQ(western_boundary_transport(g, g.zeros(), Gyre::anticyclonic), 0.0);
}

// ---------------------------------------------------------------------------------------------
// Energy.
// ---------------------------------------------------------------------------------------------

ModelParams two_layer_params() {
  ModelParams p;
  p.f0 = 8e-5;
  p.beta = kBeta;
  p.thickness_m = {1000.0, 3000.0};
  p.reduced_gravity = {0.02};
  p.dt = 3600.0;
  return p;
}

// psi_1 = c + A sin(k x) sin(l y), psi_2 = c. Closed form (integrals of sin^2 over the basin
// are Lx Ly / 4): KE_1 = 1/2 H_1 A^2 (k^2 + l^2) Lx Ly / 4, APE = 1/2 (f0^2/g') A^2 Lx Ly / 4.
// The edge-difference kinetic energy sees the discrete wavenumber (2/dx) sin(k dx / 2), so the
// discrete/continuous ratio is (kd^2 + ld^2) / (k^2 + l^2), below 1 by at most (k dx)^2 / 12
// (sin x / x >= 1 - x^2/6), falling as dx^2; the trapezoid sum of sin^2 is exact on the grid.
TEST(Energy, SingleSineModeAgainstItsClosedForm) {
  const int m = 3;
  const int n = 2;
  const double amp = 2.0e4;  // m^2 s^-1
  const double c = 37.0;
  double previous = 0.0;
  for (const int nx : {32, 64}) {
    const Model model(Grid(nx, nx, kL, kL), two_layer_params());
    const Grid& g = model.grid();
    const double k = m * kPi / kL;
    const double l = n * kPi / kL;
    std::vector<Field> psi(2, Field::Constant(nx + 1, nx + 1, c));
    for (int j = 1; j < nx; ++j) {
      for (int i = 1; i < nx; ++i) {
        psi[0](i, j) = c + amp * std::sin(k * g.x(i)) * std::sin(l * g.y(j));
      }
    }
    const CoarseFields f = coarse_fields(model, psi);
    const double area = kL * kL / 4.0;
    const double ke = 0.5 * 1000.0 * amp * amp * (k * k + l * l) * area;
    const double ape = 0.5 * (8e-5 * 8e-5 / 0.02) * amp * amp * area;
    const double kd = 2.0 / g.dx * std::sin(0.5 * k * g.dx);
    const double ld = 2.0 / g.dy * std::sin(0.5 * l * g.dy);
    const double ke_discrete = 0.5 * 1000.0 * amp * amp * (kd * kd + ld * ld) * area;
    EXPECT_NEAR(f.energy.kinetic[0], ke_discrete, 1e-11 * ke);
    EXPECT_NEAR(f.energy.kinetic[1], 0.0, 1e-20 * ke);
    EXPECT_NEAR(f.energy.potential[0], ape, 1e-11 * ape);
    const double rel = std::abs(f.energy.kinetic[0] / ke - 1.0);
    const double bound = std::pow(std::max(k * g.dx, l * g.dy), 2) / 12.0;
    EXPECT_LE(rel, bound) << "nx = " << nx;
    if (previous > 0.0) {
      EXPECT_NEAR(previous / rel, 4.0, 0.05);  // second order
    }
    previous = rel;
  }
}

// psi = psi_bar +- psi' in two equal halves of the window: the time-mean energy is
// E(psi_bar) + E(psi') (the cross terms of a quadratic form cancel), so the eddy part is
// E(psi') exactly, to rounding.
TEST(Energy, MeanEddySplitOfTwoStates) {
  const Model model(Grid(32, 32, kL, kL), two_layer_params());
  const Grid& g = model.grid();
  const std::vector<Field> bar = {gaussian_gyre(g, 5.0, 2.0e4, 0.15 * kL),
                                  gaussian_gyre(g, 1.0, 5.0e3, 0.15 * kL)};
  std::vector<Field> prime = {g.zeros(), g.zeros()};
  for (int j = 1; j < g.ny; ++j) {
    for (int i = 1; i < g.nx; ++i) {
      prime[0](i, j) = 3.0e3 * std::sin(4 * kPi * g.x(i) / kL) * std::sin(3 * kPi * g.y(j) / kL);
      prime[1](i, j) = -1.0e3 * std::sin(2 * kPi * g.x(i) / kL) * std::sin(5 * kPi * g.y(j) / kL);
    }
  }
  const std::vector<Field> plus = {bar[0] + prime[0], bar[1] + prime[1]};
  const std::vector<Field> minus = {bar[0] - prime[0], bar[1] - prime[1]};
  EnergySeries series;
  series.t_s = {0.0, 10.0, 20.0};
  series.energy = {coarse_fields(model, bar).energy, coarse_fields(model, plus).energy,
                   coarse_fields(model, minus).energy};
  const Energy mean = time_mean_energy(series, 5.0);  // the first sample is before the window
  const EnergySplit split = energy_split(mean, coarse_fields(model, bar).energy);
  const double eddy = coarse_fields(model, {prime[0] + 9.0, prime[1] + 9.0}).energy.total();
  EXPECT_NEAR(split.eddy, eddy, 1e-12 * split.total);
  EXPECT_NEAR(split.mean_flow + split.eddy, split.total, 1e-12 * split.total);
}

// A linear series E = E0 + a (t - t0) in the window: least squares returns a exactly; the
// change over the window a T against the mean E0 + a T / 2 decides the warning.
TEST(Energy, EquilibrationWarning) {
  std::vector<double> t;
  std::vector<double> e;
  const double e0 = 1.0e15;
  const double window = 1.0e8;
  for (int n = 0; n < 10; ++n) {  // spin-up samples, ignored
    t.push_back(n * 1.0e6);
    e.push_back(1.0e13 * n);
  }
  const double t0 = 2.0e7;
  for (const double change : {0.10, 0.01}) {
    std::vector<double> tt = t;
    std::vector<double> ee = e;
    const double a = change * e0 / window;
    for (int n = 0; n <= 50; ++n) {
      tt.push_back(t0 + n * window / 50.0);
      ee.push_back(e0 + a * n * window / 50.0);
    }
    const EnergyTrend tr = energy_trend(tt, ee, t0, 0.05);
    EXPECT_EQ(tr.samples, 51);
    EXPECT_NEAR(tr.slope, a, 1e-9 * a);
    EXPECT_NEAR(tr.window_s, window, 1e-6);
    EXPECT_NEAR(tr.fraction, a * window / (e0 + 0.5 * a * window), 1e-9);
    EXPECT_EQ(tr.warn, change > 0.05) << change;
  }
  EXPECT_EQ(energy_trend({}, {}, 0.0, 0.05).samples, 0);
}

// Budget powers: integral / window; residual = (E_end - E_start) / window - sum of the terms.
TEST(Energy, BudgetPowersAndResidual) {
  BudgetIntegrals b;
  b.window_s = 100.0;
  b.terms.wind = 500.0;
  b.terms.bottom_drag = -200.0;
  b.terms.lateral_friction = -150.0;
  b.closure = -100.0;
  b.energy_start = 1000.0;
  b.energy_end = 1040.0;
  const BudgetPowers p = budget_powers(b);
  EXPECT_DOUBLE_EQ(p.terms.wind, 5.0);
  EXPECT_DOUBLE_EQ(p.closure, -1.0);
  EXPECT_DOUBLE_EQ(p.storage, 0.4);
  EXPECT_NEAR(p.residual, 0.4 - (5.0 - 2.0 - 1.5 - 1.0), 1e-15);
  // Lx / (beta Ld^2): 1e6 / (2e-11 * 3e4^2) s.
  EXPECT_DOUBLE_EQ(rossby_crossing_time(1e6, 2e-11, 3e4), 1e6 / (2e-11 * 9e8));
  EXPECT_EQ(rossby_crossing_time(1e6, 2e-11, 0.0), 0.0);
}

// ---------------------------------------------------------------------------------------------
// Closed-contour budget and a priori diffusivities on a radially symmetric field.
// ---------------------------------------------------------------------------------------------

// psi = c + P exp(-r^2/(2 s^2)); the contour s(psi - c) = L is the circle
// R = s sqrt(2 ln(P / L)). A radial flux F_r = F0 (r/s) exp(-r^2/s^2) has
// div F = (F0/s) (2 - 2 r^2/s^2) exp(-r^2/s^2), and by the divergence theorem its outflow across
// the circle is 2 pi R F_r(R). The node region differs from the disc only within dx/sqrt(2) of the
// circle (annulus area 2 sqrt(2) pi R dx), and the node sum of a smooth integrand errs by
// (dx^2/24) integral lap(div F) (midpoint rule), with |lap div F| <= 16 F0 / s^3: that is the
// bound.
struct RadialCase {
  Grid g;
  double s = 0.0;
  double amp = 1.0e4;
  double c = 20.0;
  double f0 = 1.0e-12;  // m s^-2
  Field psi;
  BudgetFields fields;
};

double radial_flux(const RadialCase& rc, double r) {
  return rc.f0 * (r / rc.s) * std::exp(-r * r / (rc.s * rc.s));
}

double radial_div(const RadialCase& rc, double r) {
  const double rho2 = r * r / (rc.s * rc.s);
  return rc.f0 / rc.s * (2.0 - 2.0 * rho2) * std::exp(-rho2);
}

RadialCase radial_case(int n) {
  RadialCase rc;
  rc.g = Grid(n, n, kL, kL);
  rc.s = 0.1 * kL;
  rc.psi = gaussian_gyre(rc.g, rc.c, rc.amp, rc.s);
  rc.fields.eddy_divergence = rc.g.zeros();
  rc.fields.forcing = rc.g.zeros();
  rc.fields.friction = rc.g.zeros();
  rc.fields.storage = rc.g.zeros();
  for (int j = 1; j < n; ++j) {
    for (int i = 1; i < n; ++i) {
      const double r = radius(rc.g, i, j);
      rc.fields.eddy_divergence(i, j) = radial_div(rc, r);
      rc.fields.forcing(i, j) = -3.0e-13;  // uniform
      rc.fields.friction(i, j) = 1.0e-13 * std::exp(-r * r / (rc.s * rc.s));
      rc.fields.storage(i, j) = 2.0e-14;
    }
  }
  return rc;
}

TEST(ContourBudget, DivergenceTheoremGivesTheOutflow) {
  const std::vector<double> fractions = {0.3, 0.5, 0.7, 0.9};
  std::vector<double> previous;
  for (const int n : {64, 128}) {
    const RadialCase rc = radial_case(n);
    const Grid& g = rc.g;
    std::vector<double> levels;
    for (const double f : fractions) levels.push_back(f * rc.amp);
    const ContourBudget b = contour_budget(g, rc.psi, rc.c, Gyre::anticyclonic, rc.fields, levels);
    std::vector<double> errors;
    for (std::size_t l = 0; l < levels.size(); ++l) {
      const double r = rc.s * std::sqrt(2.0 * std::log(1.0 / fractions[l]));
      const double expect = 2.0 * kPi * r * radial_flux(rc, r);
      double div_max = 0.0;  // max |div F| over the annulus |r' - R| <= dx / sqrt(2)
      for (int k = -100; k <= 100; ++k) {
        div_max =
            std::max(div_max, std::abs(radial_div(rc, r + k * g.dx / (100.0 * std::sqrt(2.0)))));
      }
      const double annulus = 2.0 * std::sqrt(2.0) * kPi * r * g.dx;
      const double bound = div_max * annulus +
                           g.dx * g.dx / 24.0 * 16.0 * rc.f0 / (rc.s * rc.s * rc.s) * kPi * r * r;
      const double err = std::abs(b.outflow[l] - expect);
      EXPECT_LE(err, bound) << "n = " << n << " level " << fractions[l];
      errors.push_back(err);
      // Uniform forcing: W times the region's area, within W times the annulus of the disc.
      EXPECT_NEAR(b.forcing[l], -3.0e-13 * b.area[l], 1e-12 * 3.0e-13 * b.area[l]);
      EXPECT_NEAR(b.area[l], kPi * r * r, annulus);
      EXPECT_NEAR(b.storage[l], 2.0e-14 * b.area[l], 1e-12 * 2.0e-14 * b.area[l]);
      EXPECT_DOUBLE_EQ(b.residual[l], b.storage[l] - (b.forcing[l] + b.friction[l] - b.outflow[l]));
    }
    if (!previous.empty()) {
      double sum_now = 0.0;
      double sum_before = 0.0;
      for (std::size_t l = 0; l < errors.size(); ++l) {
        sum_now += errors[l];
        sum_before += previous[l];
      }
      EXPECT_LT(sum_now, sum_before);  // falls with resolution
    }
    previous = errors;
  }
}

// A down-gradient flux F = -K grad q with q = a (psi - c) + q0 (q a function of psi, as on
// closed streamlines): the contour form K(psi) and the pointwise K_eff both return K. In the
// contour form the line integral of |grad q| over the region's faces is then a times the
// discrete flux of grad psi through them, which telescopes to a times the node sum of the
// 5-point Laplacian over the region, while the outflow is -K a times the node sum of the exact
// Laplacian: K comes back to within the Laplacian's O((dx/s)^2) truncation error (the bounds
// below: 1% at dx = s/6.4, 0.3% at s/12.8, falling about fourfold). K_eff sees the centred
// gradient of q against the exact flux: also O((dx/s)^2), its median within 0.1% at 128^2.
struct DownGradient {
  Grid g;
  Field psi, q, fx, fy, div;
};

// psi = c + P exp(-r^2 / (2 s^2)), q = a (psi - c) + q0, F = -K a grad psi (exact, at the nodes),
// div F = -K a lap psi (exact) with grad psi = -(x, y) e / s^2, lap psi = e (r^2/s^4 - 2/s^2).
DownGradient down_gradient(int n, double amp, double c, double a, double k) {
  DownGradient d;
  d.g = Grid(n, n, kL, kL);
  const Grid& g = d.g;
  const double s = 0.1 * kL;
  d.psi = gaussian_gyre(g, c, amp, s);
  d.q = a * (d.psi - c) + 1.0e-6;
  d.fx = g.zeros();
  d.fy = g.zeros();
  d.div = g.zeros();
  for (int j = 1; j < g.ny; ++j) {
    for (int i = 1; i < g.nx; ++i) {
      const double x = g.x(i) - 0.5 * kL;
      const double y = g.y(j) - 0.5 * kL;
      const double e = amp * std::exp(-(x * x + y * y) / (2.0 * s * s));
      d.fx(i, j) = -k * a * (-x * e / (s * s));
      d.fy(i, j) = -k * a * (-y * e / (s * s));
      d.div(i, j) = -k * a * e * ((x * x + y * y) / (s * s * s * s) - 2.0 / (s * s));
    }
  }
  return d;
}

TEST(Apriori, DiffusivitiesOfADownGradientFlux) {
  const double amp = 1.0e4;
  const double c = -5.0;
  const double a = 1.0e-9;  // m^-2
  const double k = 800.0;   // m^2 s^-1
  const std::vector<double> levels = {0.2 * amp, 0.4 * amp, 0.6 * amp, 0.8 * amp};
  double previous = 0.0;
  for (const int n : {64, 128}) {
    const DownGradient d = down_gradient(n, amp, c, a, k);
    const ContourDiffusivity cd =
        contour_diffusivity(d.g, d.psi, c, Gyre::anticyclonic, d.div, d.q, levels);
    double worst = 0.0;
    for (std::size_t l = 0; l < levels.size(); ++l) {
      worst = std::max(worst, std::abs(cd.k[l] / k - 1.0));
      EXPECT_GT(cd.outflow[l], 0.0);  // q falls outward: a down-gradient flux leaves the gyre
    }
    EXPECT_LT(worst, n == 64 ? 0.01 : 0.003) << "n = " << n;
    if (previous > 0.0) {
      EXPECT_LT(worst, 0.35 * previous);  // second order: about a quarter
    }
    previous = worst;
    // The sign follows the gradient: q rising outward reverses the flux and keeps K > 0.
    const ContourDiffusivity flipped =
        contour_diffusivity(d.g, d.psi, c, Gyre::anticyclonic, Field(-d.div), Field(-d.q), levels);
    for (std::size_t l = 0; l < levels.size(); ++l) EXPECT_NEAR(flipped.k[l], cd.k[l], 1e-9 * k);
  }

  const DownGradient d = down_gradient(128, amp, c, a, k);
  const KeffMap ke = k_eff(d.g, d.fx, d.fy, d.q, 0.25 * kBeta);
  ASSERT_TRUE(ke.median.has_value());
  EXPECT_NEAR(*ke.median, k, 1e-3 * k);
  EXPECT_GT(ke.valid.count(), 0);
  EXPECT_LT(ke.valid.count(), 127 * 127);  // the flat centre and far field are excluded
  // No valid node: no median (the metric then scores 0), never NaN.
  EXPECT_FALSE(k_eff(d.g, d.fx, d.fy, Field(d.g.zeros()), 0.25 * kBeta).median.has_value());
}

TEST(Apriori, CorrelationAndSlopeOfTendencies) {
  const Grid g(32, 32, kL, kL);
  Field t = g.zeros();
  for (int j = 1; j < g.ny; ++j) {
    for (int i = 1; i < g.nx; ++i) t(i, j) = std::sin(0.3 * i) * std::cos(0.2 * j) + 0.1 * i;
  }
  const TendencyRegression twice = tendency_regression(g, t, Field(2.0 * t));
  EXPECT_NEAR(twice.correlation, 1.0, 1e-14);
  EXPECT_NEAR(twice.slope, 2.0, 1e-13);
  const TendencyRegression none = tendency_regression(g, t, Field(g.zeros()));
  EXPECT_EQ(none.correlation, 0.0);  // `none`: 0 by definition
  EXPECT_EQ(none.slope, 0.0);
  const TendencyRegression anti = tendency_regression(g, t, Field(-t));
  EXPECT_NEAR(anti.correlation, -1.0, 1e-14);
  EXPECT_EQ(median({3.0, 1.0, 2.0}).value(), 2.0);
  EXPECT_EQ(median({4.0, 1.0, 3.0, 2.0}).value(), 2.5);
  EXPECT_FALSE(median({}).has_value());
}

// ---------------------------------------------------------------------------------------------
// Scorecard arithmetic and JSON.
// ---------------------------------------------------------------------------------------------

// skill = max(0, 1 - e); category = mean of its scored metrics; overall = weighted mean of the
// categories that have scored metrics (SCORING.md, aggregation).
TEST(Scorecard, SkillAndAggregationArithmetic) {
  EXPECT_EQ(skill_from_error(0.25), 0.75);
  EXPECT_EQ(skill_from_error(1.5), 0.0);
  EXPECT_EQ(skill_from_error(std::nan("")), 0.0);
  EXPECT_EQ(relative_error(4.0, 5.0), 0.25);
  EXPECT_EQ(relative_error(-4.0, -3.0), 0.25);
  EXPECT_EQ(relative_error(0.0, 0.0), 0.0);
  EXPECT_EQ(relative_error(0.0, 1e-30), 1.0);
  EXPECT_NEAR(relative_profile_error({3.0, 4.0}, {3.0, 4.0 + 2.5}), 0.5, 1e-15);

  Scorecard card;
  card.weights = {2.0, 1.0, 1.0, 5.0};
  card.metrics.push_back(make_metric("plateau.a", Category::plateau, "1", 1.0, 0.9, 0.1, "x"));
  card.metrics.push_back(make_metric("plateau.b", Category::plateau, "1", 1.0, 0.5, 0.5, "x"));
  card.metrics.push_back(make_metric("transport.a", Category::transport, "Sv", 10.0, 16.0,
                                     relative_error(10.0, 16.0), "x"));
  card.metrics.push_back(make_metric("transport.b", Category::transport, "Sv", 10.0, 30.0,
                                     relative_error(10.0, 30.0), "x"));  // e = 2: skill 0
  Metric info = make_metric("energy.info", Category::energy, "1", 1.0, 0.0, 1.0, "x");
  info.scored = false;  // reported only
  card.metrics.push_back(info);
  card.metrics.push_back(make_metric("energy.a", Category::energy, "1", 1.0, 1.0, 0.0, "x"));
  EXPECT_DOUBLE_EQ(card.metrics[2].skill, 0.4);
  EXPECT_DOUBLE_EQ(card.metrics[3].skill, 0.0);
  EXPECT_DOUBLE_EQ(*card.category_skill(Category::plateau), (0.9 + 0.5) / 2.0);
  EXPECT_DOUBLE_EQ(*card.category_skill(Category::transport), (0.4 + 0.0) / 2.0);
  EXPECT_DOUBLE_EQ(*card.category_skill(Category::energy), 1.0);
  EXPECT_FALSE(card.category_skill(Category::a_priori).has_value());
  // a_priori has no metric: its weight 5 drops out.
  EXPECT_DOUBLE_EQ(card.overall(), (2.0 * 0.7 + 1.0 * 0.2 + 1.0 * 1.0) / 4.0);
}

TEST(Scorecard, JsonLayoutAndNoNaN) {
  Scorecard card;
  card.case_name = "c";
  card.closure = "none";
  card.metrics.push_back(make_metric("plateau.L2.anticyclonic.homogeneity", Category::plateau, "1",
                                     0.8, 0.3, 0.5, "|c - t| (dimensionless)"));
  Metric undefined = make_metric("plateau.L2.anticyclonic.plateau_level", Category::plateau, "s^-1",
                                 std::nullopt, std::nan(""), std::nan(""), "scaled");
  card.metrics.push_back(undefined);
  card.metrics.push_back(make_metric("transport.barotropic.max_sv", Category::transport, "Sv", 30.0,
                                     24.0, 0.2, "relative error |c - t| / |t|"));
  card.timing.truth_wall_s = 100.0;
  card.timing.candidate_wall_s = 2.0;
  card.warnings.push_back("something to say");
  const nlohmann::json j = scorecard_to_json(card);
  const std::string text = j.dump(2);
  for (const char* bad : {"NaN", "nan", "inf", "Infinity"}) {
    EXPECT_EQ(text.find(bad), std::string::npos) << bad;
  }
  ASSERT_TRUE(j.contains("overall"));
  EXPECT_DOUBLE_EQ(j["overall"].get<double>(), card.overall());
  for (const char* c : {"plateau", "transport", "energy", "a_priori"}) {
    ASSERT_TRUE(j["categories"].contains(c)) << c;
    EXPECT_TRUE(j["categories"][c].contains("skill"));
    EXPECT_TRUE(j["categories"][c].contains("metrics"));
  }
  EXPECT_TRUE(j["categories"]["a_priori"]["skill"].is_null());
  const auto& h = j["categories"]["plateau"]["metrics"]["plateau.L2.anticyclonic.homogeneity"];
  EXPECT_EQ(h["scale"], "|c - t| (dimensionless)");
  EXPECT_DOUBLE_EQ(h["skill"].get<double>(), 0.5);
  const auto& lvl = j["categories"]["plateau"]["metrics"]["plateau.L2.anticyclonic.plateau_level"];
  EXPECT_TRUE(lvl["truth"].is_null());
  EXPECT_TRUE(lvl["candidate"].is_null());
  EXPECT_EQ(lvl["skill"].get<double>(), 0.0);
  EXPECT_DOUBLE_EQ(j["timing"]["cost_ratio"].get<double>(), 0.02);
  // Skills never read the timing block: changing it leaves everything else equal.
  Scorecard other = card;
  other.timing.candidate_wall_s = 50.0;
  nlohmann::json a = j;
  nlohmann::json b = scorecard_to_json(other);
  a.erase("timing");
  b.erase("timing");
  EXPECT_EQ(a, b);
}

TEST(Scorecard, PrintedTableIsAligned) {
  Scorecard card;
  card.case_name = "c";
  card.closure = "k";
  card.metrics.push_back(make_metric("plateau.L2.anticyclonic.homogeneity", Category::plateau, "1",
                                     0.8, 0.3, 0.5, "scale-a"));
  card.metrics.push_back(make_metric("transport.jet.penetration_km", Category::transport, "km",
                                     1234.5, 99.0, relative_error(1234.5, 99.0), "scale-b"));
  std::ostringstream out;
  print_scorecard(out, card);
  std::istringstream lines(out.str());
  std::string line;
  std::size_t scale_at = std::string::npos;
  int rows = 0;
  while (std::getline(lines, line)) {
    if (line.rfind("metric", 0) == 0) scale_at = line.find("scale");
    if (line.find("scale-") != std::string::npos) {
      ASSERT_NE(scale_at, std::string::npos);
      EXPECT_EQ(line.find("scale-"), scale_at) << line;
      ++rows;
    }
  }
  EXPECT_EQ(rows, 2);
  EXPECT_NE(out.str().find("overall skill"), std::string::npos);
}

// ---------------------------------------------------------------------------------------------
// A whole card: three layers, double gyre, a priori and contour budgets; identical runs score 1.
// ---------------------------------------------------------------------------------------------

TEST(Score, IdenticalRunsScoreOneAndEveryIdIsPresent) {
  const Grid g(48, 48, kL, kL);
  ScoreInput in;
  in.basin.grid = g;
  in.basin.thickness_m = {600.0, 1000.0, 2400.0};
  in.basin.beta = kBeta;
  in.basin.ld1_m = 5.4e4;
  in.basin.gyres = {Gyre::anticyclonic, Gyre::cyclonic};
  const std::vector<double> c = {10.0, -3.0, 0.5};
  ScoreRun run;
  const std::vector<Field> sv = sverdrup_layers(g, 2, {1000.0, 3000.0}, {0.0, 0.0});
  // q uniform wherever |psi - c| exceeds a fifth of its extremum: a plateau in each gyre.
  const double sv_max = sv[0].abs().maxCoeff();
  Field q_plateau = planetary_q(g);
  for (int j = 1; j < g.ny; ++j) {
    for (int i = 1; i < g.nx; ++i) {
      if (std::abs(sv[0](i, j)) > 0.2 * sv_max) q_plateau(i, j) = 1e-7;
    }
  }
  for (int k = 0; k < 3; ++k) {
    run.mean_psi.push_back(c[uz(k)] + sv[0]);  // the same flow in each layer; walls at c_k
    run.mean_q.push_back(k == 1 ? q_plateau : planetary_q(g));
    run.wall_psi.push_back(c[uz(k)]);
    BudgetFields b;
    b.eddy_divergence = Field::Constant(g.nx + 1, g.ny + 1, 1e-13 * (k + 1));
    b.forcing = Field::Constant(g.nx + 1, g.ny + 1, -2e-13);
    b.friction = g.zeros();
    b.storage = g.zeros();
    run.pv_budget.push_back(b);
  }
  run.mean_energy.kinetic = {3.0, 2.0, 1.0};
  run.mean_energy.potential = {1.5, 0.5};
  run.mean_state_energy.kinetic = {2.0, 1.0, 0.5};
  run.mean_state_energy.potential = {1.0, 0.25};
  run.window_start_s = 4.0e8;
  run.series_t_s = {4.0e8, 4.1e8, 4.2e8};
  run.series_total = {8.0, 8.0, 8.0};
  run.budget.window_s = 2.0e7;
  run.budget.terms.wind = 1.0;
  run.budget.terms.bottom_drag = -0.5;
  run.budget.terms.lateral_friction = -0.5;
  in.truth = run;
  in.candidate = run;
  AprioriFields a;
  a.target = resolve_apriori_target(AprioriTarget::automatic, g.dx, in.basin.ld1_m);
  for (int k = 0; k < 3; ++k) {
    Field t = g.zeros();
    for (int j = 1; j < g.ny; ++j) {
      for (int i = 1; i < g.nx; ++i) t(i, j) = 1e-12 * std::sin(0.2 * i + k) * std::cos(0.1 * j);
    }
    a.truth_tendency.push_back(t);
    a.closure_tendency.push_back(t);
    Field fx = g.zeros();
    Field fy = g.zeros();
    for (int j = 1; j < g.ny; ++j) {
      for (int i = 1; i < g.nx; ++i) fy(i, j) = -500.0 * kBeta;  // down the planetary gradient
    }
    a.truth_fx.push_back(fx);
    a.truth_fy.push_back(fy);
    a.closure_fx.push_back(fx);
    a.closure_fy.push_back(fy);
  }
  in.apriori = a;
  const Scorecard card = score(in);
  EXPECT_EQ(card.apriori_target, "subfilter");  // dx = 20.8 km < Ld1 / 2 = 27 km
  std::set<std::string> ids;
  for (const Metric& m : card.metrics) {
    EXPECT_TRUE(ids.insert(m.id).second) << "duplicate " << m.id;
    EXPECT_TRUE(std::isfinite(m.error)) << m.id;
    EXPECT_GE(m.skill, 0.0);
    EXPECT_LE(m.skill, 1.0);
  }
  const std::vector<std::string> expected = {"plateau.L2.anticyclonic.homogeneity",
                                             "plateau.L2.anticyclonic.plateau_fraction",
                                             "plateau.L2.anticyclonic.plateau_overlap",
                                             "plateau.L2.anticyclonic.plateau_level",
                                             "plateau.L2.anticyclonic.q_psi_slope",
                                             "plateau.L2.anticyclonic.contour_outflow",
                                             "plateau.L2.cyclonic.homogeneity",
                                             "plateau.L2.rms_q",
                                             "transport.barotropic.max_sv",
                                             "transport.barotropic.min_sv",
                                             "transport.L1.anticyclonic.sv",
                                             "transport.L3.cyclonic.sv",
                                             "transport.wbc.anticyclonic.sv",
                                             "transport.wbc.cyclonic.sv",
                                             "transport.jet.penetration_km",
                                             "energy.L1.kinetic",
                                             "energy.L3.kinetic",
                                             "energy.I1.potential",
                                             "energy.I2.potential",
                                             "energy.total",
                                             "energy.mean_flow",
                                             "energy.eddy",
                                             "energy.budget.wind",
                                             "energy.budget.bottom_drag",
                                             "energy.budget.lateral_friction",
                                             "energy.budget.closure",
                                             "energy.budget.residual",
                                             "energy.trend",
                                             "a_priori.L1.correlation",
                                             "a_priori.L3.slope",
                                             "a_priori.L2.k_eff_median",
                                             "a_priori.L2.anticyclonic.k_contour",
                                             "a_priori.L2.cyclonic.k_contour"};
  for (const std::string& id : expected) EXPECT_EQ(ids.count(id), 1U) << id;
  EXPECT_EQ(ids.count("plateau.L3.rms_q"), 0U);  // bottom layer of three: not sheltered
  EXPECT_EQ(ids.count("plateau.L1.rms_q"), 0U);  // top layer: not sheltered
  // Identical runs: every scored metric with a plateau or a defined value scores 1.
  for (const Metric& m : card.metrics) {
    if (m.scored) {
      EXPECT_NEAR(m.skill, 1.0, 1e-12) << m.id << ": " << m.note;
    }
  }
  EXPECT_NEAR(card.overall(), 1.0, 1e-12);
  const std::string text = scorecard_to_json(card).dump();
  EXPECT_EQ(text.find("NaN"), std::string::npos);
  // The same input reproduces the card bit for bit.
  EXPECT_EQ(scorecard_to_json(score(in)).dump(), text);
}

TEST(Score, DefaultsOfTheRules) {
  EXPECT_EQ(default_sheltered_layers(1), std::vector<int>{});
  EXPECT_EQ(default_sheltered_layers(2), std::vector<int>{1});
  EXPECT_EQ(default_sheltered_layers(3), std::vector<int>{1});
  EXPECT_EQ(default_sheltered_layers(4), (std::vector<int>{1, 2}));
  // Transient plus subfilter when the coarse spacing exceeds Ld1 / 2.
  EXPECT_EQ(resolve_apriori_target(AprioriTarget::automatic, 60e3, 50e3),
            AprioriTarget::transient_subfilter);
  EXPECT_EQ(resolve_apriori_target(AprioriTarget::automatic, 20e3, 50e3), AprioriTarget::subfilter);
  EXPECT_EQ(resolve_apriori_target(AprioriTarget::subfilter, 60e3, 50e3), AprioriTarget::subfilter);
}

// ---------------------------------------------------------------------------------------------
// The adapter from run records: a tiny truth coarse-grained onto a tiny coarse grid.
// ---------------------------------------------------------------------------------------------

ModelParams gyre_params(double a2) {
  ModelParams p = two_layer_params();
  p.wind.profile = WindProfile::double_gyre;
  p.wind.tau0 = kTau0;
  p.a2 = a2;
  p.bottom_drag = 1e-7;
  p.dt = 7200.0;
  return p;
}

TEST(FromRun, TruthIsMeasuredWithTheCoarseOperators) {
  Model truth_model(Grid(32, 32, kL, kL), gyre_params(200.0));
  Model coarse_model(Grid(16, 16, kL, kL), gyre_params(800.0));
  RunSchedule sch;
  sch.length_s = 40 * 7200.0;
  sch.spinup_s = 20 * 7200.0;
  sch.snapshot_interval_s = 5 * 7200.0;
  const RunRecord truth = run_model(truth_model, sch, RunOptions{});
  const RunRecord cand = run_model(coarse_model, sch, RunOptions{});
  const ScoreRun t = truth_score_run(truth, coarse_model);
  const ScoreRun c = candidate_score_run(cand, coarse_model);
  // Filter q: q from the filtered mean psi with the coarse model's operators.
  const CoarseFields f = coarse_grain_truth(coarse_model, truth.grid, truth.mean_psi);
  for (int k = 0; k < 2; ++k) {
    EXPECT_EQ((t.mean_q[uz(k)] - f.state.q[uz(k)]).abs().maxCoeff(), 0.0);
    EXPECT_EQ(t.wall_psi[uz(k)], f.state.wall_psi[uz(k)]);
  }
  EXPECT_EQ(t.energy_note, "4 coarse-grained snapshots");
  EXPECT_EQ(t.mean_energy.kinetic.size(), 2U);
  EXPECT_DOUBLE_EQ(t.budget.window_s, 20 * 7200.0);
  const ScoreBasin basin = score_basin(coarse_model, t, {});
  EXPECT_EQ(basin.gyres.size(), 2U);
  EXPECT_GT(basin.ld1_m, 0.0);
  ScoreInput in;
  in.case_name = "tiny";
  in.closure = "none";
  in.basin = basin;
  in.truth = t;
  in.candidate = c;
  const Scorecard card = score(in);
  EXPECT_FALSE(card.metrics.empty());
  const std::string text = scorecard_to_json(card).dump();
  EXPECT_EQ(text.find("NaN"), std::string::npos);
  // A short run is flagged: spin-up far below the Rossby-wave crossing time.
  bool spinup_warning = false;
  for (const std::string& w : card.warnings) {
    spinup_warning = spinup_warning || w.find("crossing") != std::string::npos;
  }
  EXPECT_TRUE(spinup_warning);
}

}  // namespace
}  // namespace plateau
