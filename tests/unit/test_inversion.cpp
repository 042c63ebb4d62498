// PV inversion: the discrete inverse is exact for the discrete operator (PHYSICS.md section 2),
// so q -> psi -> q returns q to rounding error, for 1 to 4 layers and for grids that are not
// powers of two or not square. The mass constraint keeps each baroclinic mode's trapezoid
// integral at its prescribed value.

#include <gtest/gtest.h>

#include <cmath>
#include <numbers>
#include <random>

#include "harness/model/model.hpp"

namespace plateau {
namespace {

ModelParams params_for(int layers) {
  ModelParams p;
  p.f0 = 8e-5;
  p.beta = 2e-11;
  const std::vector<double> h4 = {500.0, 800.0, 1200.0, 2500.0};
  const std::vector<double> g4 = {0.03, 0.015, 0.008};
  p.thickness_m.assign(h4.begin(), h4.begin() + layers);
  p.reduced_gravity.assign(g4.begin(), g4.begin() + (layers - 1));
  p.dt = 1800.0;
  return p;
}

// A random streamfunction per layer, constant (c_k) on the walls. The wall values carry no
// barotropic part (sum_k H_k c_k = 0: no net through-flow, PHYSICS.md section 2).
std::vector<Field> random_psi(const Grid& g, int layers, unsigned seed,
                              const std::vector<double>& h) {
  std::mt19937 rng(seed);
  std::normal_distribution<double> nd(0.0, 1.0);
  std::vector<double> wall(static_cast<std::size_t>(layers));
  double hc = 0.0;
  double htot = 0.0;
  for (int k = 0; k < layers; ++k) {
    const auto uk = static_cast<std::size_t>(k);
    wall[uk] = 1e3 * nd(rng);
    hc += h[uk] * wall[uk];
    htot += h[uk];
  }
  std::vector<Field> psi;
  for (int k = 0; k < layers; ++k) {
    Field f = g.zeros();
    const double c = wall[static_cast<std::size_t>(k)] - hc / htot;
    for (int j = 0; j <= g.ny; ++j) {
      for (int i = 0; i <= g.nx; ++i) {
        const bool on_wall = i == 0 || j == 0 || i == g.nx || j == g.ny;
        f(i, j) = c + (on_wall ? 0.0 : 1e4 * nd(rng));
      }
    }
    psi.push_back(f);
  }
  return psi;
}

struct GridCase {
  int nx;
  int ny;
  int layers;
};

class RoundTrip : public ::testing::TestWithParam<GridCase> {};

TEST_P(RoundTrip, QToPsiToQIsExactToRounding) {
  const auto [nx, ny, layers] = GetParam();
  const Grid g(nx, ny, 1.2e6, 0.9e6);
  Model model(g, params_for(layers));
  ModelState s = model.state_from_psi(random_psi(g, layers, 42U, model.params().thickness_m));
  const std::vector<Field> q0 = s.q;
  const std::vector<Field> psi0 = s.psi;
  model.diagnose(s);  // psi from q
  for (int k = 0; k < layers; ++k) {
    const double scale = psi0[static_cast<std::size_t>(k)].abs().maxCoeff();
    const double err =
        (s.psi[static_cast<std::size_t>(k)] - psi0[static_cast<std::size_t>(k)]).abs().maxCoeff();
    // Rounding error of a sine-transform solve grows like n log n eps (common practice).
    EXPECT_LT(err, 1e-11 * scale * nx) << "layer " << k;
  }
  ModelState again = model.state_from_psi(s.psi);
  for (int k = 0; k < layers; ++k) {
    const auto uk = static_cast<std::size_t>(k);
    const double scale = q0[uk].abs().maxCoeff();
    EXPECT_LT((again.q[uk] - q0[uk]).abs().maxCoeff(), 1e-11 * scale * nx) << "layer " << k;
  }
}

INSTANTIATE_TEST_SUITE_P(Grids, RoundTrip,
                         ::testing::Values(GridCase{16, 16, 1}, GridCase{32, 32, 2},
                                           GridCase{30, 22, 2}, GridCase{27, 40, 3},
                                           GridCase{24, 24, 4}, GridCase{33, 17, 4}));

TEST(MassConstraint, BaroclinicModeIntegralsStayAtTheirTarget) {
  const Grid g(24, 20, 1e6, 8e5);
  Model model(g, params_for(3));
  ModelState s = model.state_from_psi(random_psi(g, 3, 7U, model.params().thickness_m));
  const std::vector<double> target = s.mode_mass;
  // Disturb q, invert, and check the interface volumes did not move.
  for (int j = 1; j < g.ny; ++j) {
    for (int i = 1; i < g.nx; ++i) s.q[1](i, j) += 1e-6 * std::sin(0.3 * i) * std::cos(0.2 * j);
  }
  model.diagnose(s);
  Inversion inv(g, model.layers(), 2e-11);
  const std::vector<double> got = inv.mode_masses(s.psi);
  for (std::size_t m = 1; m < got.size(); ++m) {
    EXPECT_NEAR(got[m], target[m], 1e-9 * std::abs(target[m]) + 1e-3) << "mode " << m;
  }
}

TEST(Layers, TwoLayerDeformationRadius) {
  // Ld = sqrt(g' H1 H2 / (H1 + H2)) / f0: standard two-layer result (Pedlosky 1987,
  // Geophysical Fluid Dynamics, section 6.16; PHYSICS.md section 2).
  const double f0 = 8e-5;
  const double h1 = 1000.0;
  const double h2 = 3000.0;
  const double gp = 0.02;
  const LayerStack ls(f0, {h1, h2}, {gp});
  const double expected = std::sqrt(gp * h1 * h2 / (h1 + h2)) / f0;
  ASSERT_EQ(ls.deformation_radii().size(), 1U);
  EXPECT_NEAR(ls.deformation_radii()[0], expected, 1e-9 * expected);
  EXPECT_EQ(ls.lambda(0), 0.0);
}

}  // namespace
}  // namespace plateau
