// Sign conventions of PHYSICS.md section 1, checked term by term on one tendency evaluation:
//   u = -psi_y, v = psi_x, J(a, b) = a_x b_y - a_y b_x (so J(psi, q) = u q_x + v q_y),
//   dq_k/dt = -J(psi_k, q_k) + W_k + A2 lap zeta_k - A4 lap^2 zeta_k - delta_kN r zeta_N,
//   W_1 = curl_z(tau) / (rho0 H_1), curl_z tau = -d(tau_x)/dy.
// Reference values are the continuous formulas, evaluated here; a sine mode is a discrete
// eigenfunction of the 5-point Laplacian, and centred differences are second order, so the
// tolerances are O(dx^2) (stated per check).

#include <gtest/gtest.h>

#include <cmath>
#include <numbers>
#include <vector>

#include "harness/model/model.hpp"

namespace plateau {
namespace {

constexpr double kPi = std::numbers::pi;

TEST(ValidationSigns, JacobianIsAxByMinusAyBx) {
  const Grid g(32, 24, 1.0e6, 0.8e6);
  Field a = g.zeros();
  Field b = g.zeros();
  Field s = g.zeros();
  Field c = g.zeros();
  for (int j = 0; j <= g.ny; ++j) {
    for (int i = 0; i <= g.nx; ++i) {
      a(i, j) = g.x(i);
      b(i, j) = g.y(j);
      s(i, j) = std::sin(2.0 * kPi * g.x(i) / g.lx_m) * std::cos(kPi * g.y(j) / g.ly_m);
      c(i, j) = std::cos(kPi * g.x(i) / g.lx_m) * std::sin(3.0 * kPi * g.y(j) / g.ly_m);
    }
  }
  Field jac = g.zeros();
  // J(x, y) = 1 exactly (linear fields: every second-order form is exact).
  arakawa_jacobian(g, a, b, jac);
  EXPECT_NEAR(jac.block(1, 1, g.nx - 1, g.ny - 1).minCoeff(), 1.0, 1e-12);
  EXPECT_NEAR(jac.block(1, 1, g.nx - 1, g.ny - 1).maxCoeff(), 1.0, 1e-12);
  // Smooth fields against the analytic a_x b_y - a_y b_x: second order, (k dy)^2 / 6 ~ 2.5 %
  // for the sin(3 pi y/Ly) factor at this grid; allow 5 %.
  arakawa_jacobian(g, s, c, jac);
  double err = 0.0;
  double big = 0.0;
  for (int j = 1; j < g.ny; ++j) {
    for (int i = 1; i < g.nx; ++i) {
      const double x = g.x(i) / g.lx_m;
      const double y = g.y(j) / g.ly_m;
      const double sx = 2.0 * kPi / g.lx_m * std::cos(2 * kPi * x) * std::cos(kPi * y);
      const double sy = -kPi / g.ly_m * std::sin(2 * kPi * x) * std::sin(kPi * y);
      const double cx = -kPi / g.lx_m * std::sin(kPi * x) * std::sin(3 * kPi * y);
      const double cy = 3.0 * kPi / g.ly_m * std::cos(kPi * x) * std::cos(3 * kPi * y);
      const double exact = sx * cy - sy * cx;
      err = std::max(err, std::abs(jac(i, j) - exact));
      big = std::max(big, std::abs(exact));
    }
  }
  EXPECT_LT(err / big, 0.05);
}

struct SignSetup {
  Grid g{32, 32, 1.0e6, 1.0e6};
  double amp = 1.0e4;  // m^2 s^-1
  [[nodiscard]] double kx() const { return kPi / g.lx_m; }
  [[nodiscard]] double ky() const { return 2.0 * kPi / g.ly_m; }
  // psi = amp sin(kx x) sin(ky y): zero on the walls, zeta = -K^2 psi, zero on the walls.
  [[nodiscard]] Field psi() const {
    Field f = g.zeros();
    for (int j = 0; j <= g.ny; ++j) {
      for (int i = 0; i <= g.nx; ++i) {
        f(i, j) = amp * std::sin(kx() * g.x(i)) * std::sin(ky() * g.y(j));
      }
    }
    return f;
  }
  [[nodiscard]] double psi_x(int i, int j) const {
    return amp * kx() * std::cos(kx() * g.x(i)) * std::sin(ky() * g.y(j));
  }
  [[nodiscard]] ModelParams params(int layers) const {
    ModelParams p;
    p.f0 = 1e-4;
    p.beta = 2e-11;
    p.thickness_m = layers == 1 ? std::vector<double>{1000.0} : std::vector<double>{1000.0, 3000.0};
    p.reduced_gravity = layers == 1 ? std::vector<double>{} : std::vector<double>{0.02};
    p.wind.profile = WindProfile::single_gyre;
    p.wind.tau0 = 0.0;
    p.advection = Advection::off;
    p.dt = 3600.0;
    return p;
  }
};

// max |out - expected| / max |expected| over the interior.
template <class F>
double rel_err(const Grid& g, const Field& out, F expected) {
  double e = 0.0;
  double big = 0.0;
  for (int j = 1; j < g.ny; ++j) {
    for (int i = 1; i < g.nx; ++i) {
      e = std::max(e, std::abs(out(i, j) - expected(i, j)));
      big = std::max(big, std::abs(expected(i, j)));
    }
  }
  return e / big;
}

TEST(ValidationSigns, TendencyTermsHaveThePublishedSigns) {
  const SignSetup su;
  const Grid& g = su.g;
  const double k2 = su.kx() * su.kx() + su.ky() * su.ky();
  std::vector<Field> out;

  // Wind: W_1 = curl_z(tau)/(rho0 H1) = -tau0 (pi/Ly) sin(pi y/Ly) / (rho0 H1), top layer only.
  {
    ModelParams p = su.params(2);
    p.wind.tau0 = 0.1;
    const Model m(g, p);
    m.tendency(m.rest_state(), out);
    EXPECT_LT(rel_err(g, out[0],
                      [&](int, int j) {
                        return -0.1 * (kPi / g.ly_m) * std::sin(kPi * g.y(j) / g.ly_m) /
                               (p.rho0 * 1000.0);
                      }),
              1e-12);
    EXPECT_EQ(out[1].abs().maxCoeff(), 0.0) << "wind reaches the lower layer";
  }
  // Linear advection: dq/dt = -beta psi_x (centred: 1 % at K dx ~ 0.2).
  {
    ModelParams p = su.params(1);
    p.advection = Advection::linear;
    const Model m(g, p);
    m.tendency(m.state_from_psi({su.psi()}), out);
    EXPECT_LT(rel_err(g, out[0], [&](int i, int j) { return -p.beta * su.psi_x(i, j); }), 0.01);
  }
  // Arakawa advection of the same sine mode: zeta = L psi is proportional to psi, so
  // J(psi, q) = J(psi, beta (y - y0)) = beta psi_x (2 %: the Arakawa average smooths in y).
  {
    ModelParams p = su.params(1);
    p.advection = Advection::arakawa;
    const Model m(g, p);
    m.tendency(m.state_from_psi({su.psi()}), out);
    EXPECT_LT(rel_err(g, out[0], [&](int i, int j) { return -p.beta * su.psi_x(i, j); }), 0.02);
  }
  // Bottom drag -r zeta_N on the bottom layer only: +r K^2 psi_2 (spin-down of zeta).
  {
    ModelParams p = su.params(2);
    p.bottom_drag = 1e-7;
    const Model m(g, p);
    m.tendency(m.state_from_psi({su.psi(), su.psi()}), out);
    const Field psi = su.psi();
    EXPECT_LT(rel_err(g, out[1], [&](int i, int j) { return 1e-7 * k2 * psi(i, j); }), 0.01);
    EXPECT_EQ(out[0].abs().maxCoeff(), 0.0) << "bottom drag acts on the top layer";
  }
  // Laplacian friction A2 lap zeta = A2 K^4 psi; biharmonic -A4 lap^2 zeta = A4 K^6 psi (free
  // slip; the sine mode meets zeta = 0 and lap zeta = 0 on the walls). Both damp zeta.
  {
    ModelParams p = su.params(1);
    p.a2 = 1000.0;
    const Model m(g, p);
    m.tendency(m.state_from_psi({su.psi()}), out);
    const Field psi = su.psi();
    EXPECT_LT(rel_err(g, out[0], [&](int i, int j) { return 1000.0 * k2 * k2 * psi(i, j); }), 0.02);
  }
  {
    ModelParams p = su.params(1);
    p.a4 = 1e11;
    const Model m(g, p);
    m.tendency(m.state_from_psi({su.psi()}), out);
    const Field psi = su.psi();
    EXPECT_LT(rel_err(g, out[0], [&](int i, int j) { return 1e11 * k2 * k2 * k2 * psi(i, j); }),
              0.03);
  }
}

}  // namespace
}  // namespace plateau
