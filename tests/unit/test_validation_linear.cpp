// Validation against the published linear wind-driven gyre solutions (PHYSICS.md section 4):
// Stommel (1948), its second-order convergence, Munk (1950) and Sverdrup (1947).
//
// Every reference value is computed here from the paper's formula; no number printed by this
// program is used as a reference. Sign conventions (PHYSICS.md section 1): u = -psi_y,
// v = psi_x, dq/dt = -beta psi_x + W - r zeta + A2 lap zeta, W = curl_z(tau) / (rho0 H) with
// curl_z tau = -d(tau_x)/dy. For the single gyre tau_x = -tau0 cos(pi y / Ly), so
//   curl_z tau = -tau0 (pi / Ly) sin(pi y / Ly) < 0   and   W = W0 sin(l y), W0 = -tau0 l / (rho0
//   H),
// an anticyclonic (clockwise) subtropical gyre: psi > 0 inside, southward interior flow
// (v = W / beta < 0) and a northward western boundary current.

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <complex>
#include <numbers>
#include <vector>
#include <Eigen/Dense>
#include <Eigen/Eigenvalues>

#include "harness/model/model.hpp"

namespace plateau {
namespace {

constexpr double kPi = std::numbers::pi;

// One-layer single-gyre parameters shared by the runs.
constexpr double kL = 1.0e6;       // basin side, m
constexpr double kBeta = 2.0e-11;  // m^-1 s^-1
constexpr double kH = 1000.0;      // m
constexpr double kTau0 = 0.1;      // N m^-2
constexpr double kRho0 = 1025.0;   // kg m^-3

// The wind-stress curl computed here from tau_x = -tau0 cos(pi y/Ly), independent of wind.cpp.
double curl_tau(double y, double ly) { return -kTau0 * (kPi / ly) * std::sin(kPi * y / ly); }

// AB3 on y' = z y / dt: largest root modulus of zeta^3 - zeta^2 = z (23 zeta^2 - 16 zeta + 5)/12.
double ab3_amplification(std::complex<double> z) {
  Eigen::Matrix3cd c = Eigen::Matrix3cd::Zero();
  // Monic polynomial zeta^3 + a2 zeta^2 + a1 zeta + a0.
  const std::complex<double> a2 = -(1.0 + 23.0 * z / 12.0);
  const std::complex<double> a1 = 16.0 * z / 12.0;
  const std::complex<double> a0 = -5.0 * z / 12.0;
  c(0, 0) = -a2;
  c(0, 1) = -a1;
  c(0, 2) = -a0;
  c(1, 0) = 1.0;
  c(2, 1) = 1.0;
  const Eigen::ComplexEigenSolver<Eigen::Matrix3cd> es(c);
  return es.eigenvalues().cwiseAbs().maxCoeff();
}

ModelParams one_layer(double dt) {
  ModelParams p;
  p.f0 = 1e-4;
  p.beta = kBeta;
  p.rho0 = kRho0;
  p.thickness_m = {kH};
  p.reduced_gravity = {};
  p.wind.profile = WindProfile::single_gyre;
  p.wind.tau0 = kTau0;
  p.advection = Advection::linear;
  p.dt = dt;
  return p;
}

// ---------------------------------------------------------------------------------------------
// Stommel (1948), Trans. AGU 29: r lap psi + beta psi_x = W, psi = 0 on the walls.
// ---------------------------------------------------------------------------------------------

constexpr double kDrag = 2.0e-6;  // s^-1: r / beta = 100 km

struct StommelResult {
  double rel_max_error = 0.0;
  double xp = 0.0;
  double model_centre = 0.0;  // psi at the basin's centre
  double tendency = 0.0;      // max |dq/dt| / max |W| at the end: the steady state is reached
};

// psi = X(x) sin(l y), X = X_p [1 + A e^(m1 x) + B e^(m2 x)], X_p = tau0 / (rho0 H r l).
double stommel_psi(double x, double y) {
  const double l = kPi / kL;
  // Sign: the particular solution of r (X'' - l^2 X) + beta X' = W0 with W0 = -tau0 l/(rho0 H)
  // is X_p = -W0 / (r l^2) = +tau0 / (rho0 H r l): positive, the sign opposite to the curl.
  const double xp = kTau0 / (kRho0 * kH * kDrag * l);
  const double sq = std::sqrt(kBeta * kBeta + 4.0 * kDrag * kDrag * l * l);
  const double m1 = (-kBeta + sq) / (2.0 * kDrag);
  const double m2 = (-kBeta - sq) / (2.0 * kDrag);
  // X(0) = 0: 1 + A + B = 0;  X(Lx) = 0: 1 + A e^(m1 Lx) + B e^(m2 Lx) = 0.
  const double e1 = std::exp(m1 * kL);
  const double e2 = std::exp(m2 * kL);
  const double a = (e2 - 1.0) / (e1 - e2);
  const double b = -1.0 - a;
  return xp * (1.0 + a * std::exp(m1 * x) + b * std::exp(m2 * x)) * std::sin(l * y);
}

StommelResult run_stommel(int n) {
  // The linear problem has no CFL limit; dt is set by AB3's stability for the eigenvalues
  // -r + i omega of the linear operator (checked in the Stommel test), and the steady state
  // of AB3 is the exact discrete steady state whatever dt is.
  const double dt = 5.0e4;
  ModelParams p = one_layer(dt);
  p.bottom_drag = kDrag;
  const Grid g(n, n, kL, kL);
  Model model(g, p);
  ModelState s = model.rest_state();
  // From rest the transient decays as e^(-r t): 16/r leaves e^-16 ~ 1e-7 of it.
  const int steps = static_cast<int>(std::ceil(16.0 / kDrag / dt));
  for (int i = 0; i < steps; ++i) model.step(s);
  StommelResult r;
  r.xp = kTau0 / (kRho0 * kH * kDrag * (kPi / kL));
  double err = 0.0;
  double big = 0.0;
  for (int j = 0; j <= n; ++j) {
    for (int i = 0; i <= n; ++i) {
      const double ex = stommel_psi(g.x(i), g.y(j));
      err = std::max(err, std::abs(s.psi[0](i, j) - ex));
      big = std::max(big, std::abs(ex));
    }
  }
  r.rel_max_error = err / big;
  r.model_centre = s.psi[0](n / 2, n / 2);
  std::vector<Field> tend;
  model.tendency(s, tend);
  r.tendency = tend[0].abs().maxCoeff() / (kTau0 * (kPi / kL) / (kRho0 * kH));
  return r;
}

TEST(ValidationStommel, SteadyGyreMatchesStommel1948) {
  const int n = 64;
  const Grid g(n, n, kL, kL);
  // Resolution of the Stommel layer r/beta (100 km) by the grid.
  EXPECT_GE(kDrag / kBeta / g.dx, 6.0);
  // AB3 stability of dt = 5e4 s. The linear operator on zeta is -beta D_x L^-1 - r; D_x is
  // antisymmetric and -L positive definite, so its eigenvalues are -r + i omega with
  // |omega| <= beta / sqrt(mu_min) (mu_min the smallest eigenvalue of -L). Sample that segment.
  const double dt = 5.0e4;
  const double mu_min = 4.0 / (g.dx * g.dx) * std::pow(std::sin(kPi / (2.0 * n)), 2) +
                        4.0 / (g.dy * g.dy) * std::pow(std::sin(kPi / (2.0 * n)), 2);
  const double omega_max = kBeta / std::sqrt(mu_min);
  double worst = 0.0;
  for (int k = 0; k <= 200; ++k) {
    const double w = omega_max * k / 200.0;
    worst = std::max(worst, ab3_amplification(std::complex<double>(-kDrag * dt, w * dt)));
  }
  EXPECT_LT(worst, 1.0) << "AB3 unstable at dt = " << dt;

  const StommelResult r = run_stommel(n);
  // Sign of X_p as worked out above: a negative curl drives a positive (clockwise) gyre.
  EXPECT_GT(r.xp, 0.0);
  EXPECT_GT(r.model_centre, 0.0) << "the model's gyre turns the other way";
  // The transient left after 16/r is e^-16 of the spin-up: far below the 1e-3 error.
  EXPECT_LT(r.tendency, 1e-4) << "not yet steady";
  // Stommel (1948), Trans. AGU 29: relative max error over all nodes below 0.2 % at 64^2
  // (r/beta = 6.4 grid intervals).
  EXPECT_LT(r.rel_max_error, 2e-3) << "Stommel (1948) relative max error";
  RecordProperty("stommel_rel_error_64", std::to_string(r.rel_max_error));
  std::printf("Stommel (1948) 64^2: relative max error %.3e\n", r.rel_max_error);
}

TEST(ValidationStommel, ErrorFallsAsDxSquared) {
  // Second-order scheme (common practice): error ~ dx^2 over three resolutions, each
  // resolving r/beta by >= 3 grid intervals.
  const std::vector<int> ns = {32, 64, 96};
  std::vector<double> e;
  for (const int n : ns) e.push_back(run_stommel(n).rel_max_error);
  for (std::size_t k = 0; k + 1 < ns.size(); ++k) {
    const double order = std::log(e[k] / e[k + 1]) / std::log(double(ns[k + 1]) / ns[k]);
    std::printf("Stommel error n=%d %.3e -> n=%d %.3e: observed order %.3f\n", ns[k], e[k],
                ns[k + 1], e[k + 1], order);
    EXPECT_GT(order, 1.7) << "between n=" << ns[k] << " and n=" << ns[k + 1];
    EXPECT_LT(order, 2.3) << "between n=" << ns[k] << " and n=" << ns[k + 1];
  }
}

// ---------------------------------------------------------------------------------------------
// Munk (1950), J. Meteorol. 7, and Sverdrup (1947), PNAS 33, on one no-slip run.
// ---------------------------------------------------------------------------------------------

constexpr double kMunkD = 30.0e3;  // d = (A2/beta)^(1/3), m
constexpr int kMunkNx = 128;       // dx = 7.8 km: d / dx = 3.84
constexpr int kMunkNy = 64;

// Munk's x-problem beta X' = W0 + A2 X'''' (the boundary-layer approximation: y-derivatives of
// the friction dropped) with no slip, X = X' = 0 at x = 0 and x = Lx. Solution:
//   X = W0 (x - Lx)/beta + c0 + c1 e^((x-Lx)/d) + e^(-x/2d) (c2 cos(s3 x/2d) + c3 sin(s3 x/2d)),
// the Sverdrup interior plus Munk's homogeneous solutions (d^3 kappa^3 = 1), s3 = sqrt(3): the
// structure of Munk's (1950) solution, western and eastern layers (from memory; derived here
// from his equation, the four constants solved below). Its western part to leading order in
// d/Lx is psi_Sv [1 - e^(-x/2d) (cos(s3 x/2d) + sin(s3 x/2d)/s3)]; c0 = W0 d / beta is the
// eastern no-slip layer's shift of the interior, -d/Lx of psi_Sv.
class MunkX {
 public:
  MunkX(double w0, double lx, double d) : w0_(w0), lx_(lx), d_(d) {
    Eigen::Matrix4d a;
    Eigen::Vector4d rhs;
    a.row(0) << basis(0.0, 0);
    a.row(1) << basis(lx_, 0);
    a.row(2) << basis(0.0, 1);
    a.row(3) << basis(lx_, 1);
    rhs << -interior(0.0, 0), -interior(lx_, 0), -interior(0.0, 1), -interior(lx_, 1);
    c_ = a.fullPivLu().solve(rhs);
  }
  // der = 0: X, der = 1: X'.
  [[nodiscard]] double operator()(double x, int der = 0) const {
    return interior(x, der) + basis(x, der).dot(c_);
  }

 private:
  double w0_, lx_, d_;
  Eigen::Vector4d c_;
  [[nodiscard]] double interior(double x, int der) const {
    return der == 0 ? w0_ * (x - lx_) / kBeta : w0_ / kBeta;
  }
  [[nodiscard]] Eigen::RowVector4d basis(double x, int der) const {
    const double s3 = std::sqrt(3.0);
    const double k = s3 / (2.0 * d_);
    const double ed = std::exp((x - lx_) / d_);
    const double ew = std::exp(-x / (2.0 * d_));
    Eigen::RowVector4d b;
    if (der == 0) {
      b << 1.0, ed, ew * std::cos(k * x), ew * std::sin(k * x);
    } else {
      b << 0.0, ed / d_, ew * (-std::cos(k * x) / (2.0 * d_) - k * std::sin(k * x)),
          ew * (-std::sin(k * x) / (2.0 * d_) + k * std::cos(k * x));
    }
    return b;
  }
};

// First x > 0 where f changes sign from + to -, by bisection of a sampled bracket.
template <class F>
double first_down_crossing(F f, double x0, double x1, int samples) {
  double a = x0;
  double fa = f(a);
  for (int k = 1; k <= samples; ++k) {
    const double b = x0 + (x1 - x0) * k / samples;
    const double fb = f(b);
    if (fa > 0.0 && fb <= 0.0) {
      double lo = a;
      double hi = b;
      for (int it = 0; it < 100; ++it) {
        const double mid = 0.5 * (lo + hi);
        (f(mid) > 0.0 ? lo : hi) = mid;
      }
      return 0.5 * (lo + hi);
    }
    a = b;
    fa = fb;
  }
  return -1.0;
}

class MunkRun : public ::testing::Test {
 protected:
  static void SetUpTestSuite() {
    grid_ = new Grid(kMunkNx, kMunkNy, kL, kL);
    const Grid& g = *grid_;
    ModelParams p = one_layer(1.0e4);
    p.a2 = kBeta * kMunkD * kMunkD * kMunkD;
    p.wall = WallKind::no_slip;
    p.bottom_drag = 0.0;
    model_ = new Model(g, p);
    // Start from Munk's leading-order composite (western layer plus Sverdrup interior), so
    // that only a small transient of basin modes has to decay.
    const double s3 = std::sqrt(3.0);
    std::vector<Field> psi(1, g.zeros());
    for (int j = 1; j < g.ny; ++j) {
      const double w0 = curl_tau(g.y(j), kL) / (kRho0 * kH);
      for (int i = 1; i < g.nx; ++i) {
        const double x = g.x(i);
        const double e = std::exp(-x / (2.0 * kMunkD));
        psi[0](i, j) = w0 * (x - kL) / kBeta +
                       w0 * kL / kBeta * e *
                           (std::cos(s3 * x / (2 * kMunkD)) + std::sin(s3 * x / (2 * kMunkD)) / s3);
      }
    }
    state_ = new ModelState(model_->state_from_psi(psi));
    const int steps = 3000;  // 3e7 s: about 10 periods of the gravest basin mode (32 days)
    for (int i = 0; i < steps; ++i) model_->step(*state_);
  }
  static void TearDownTestSuite() {
    delete state_;
    delete model_;
    delete grid_;
  }
  static Grid* grid_;
  static Model* model_;
  static ModelState* state_;
};
Grid* MunkRun::grid_ = nullptr;
Model* MunkRun::model_ = nullptr;
ModelState* MunkRun::state_ = nullptr;

TEST_F(MunkRun, StabilityAndResolution) {
  const Grid& g = *grid_;
  const ModelParams& p = model_->params();
  EXPECT_GE(kMunkD / g.dx, 3.5) << "Munk layer resolved by >= 3.5 grid intervals";
  // AB3 limit for the explicit Laplacian friction (PHYSICS.md section 3).
  EXPECT_LE(p.a2 * p.dt * (1.0 / (g.dx * g.dx) + 1.0 / (g.dy * g.dy)), 3.0 / 22.0);
  // Rossby-wave part: |omega| dt <= beta dt / sqrt(mu_min), AB3 stable on the imaginary axis
  // up to about 0.72.
  const double mu_min = 4.0 / (g.dx * g.dx) * std::pow(std::sin(kPi / (2.0 * g.nx)), 2) +
                        4.0 / (g.dy * g.dy) * std::pow(std::sin(kPi / (2.0 * g.ny)), 2);
  EXPECT_LT(ab3_amplification({0.0, kBeta / std::sqrt(mu_min) * p.dt}), 1.0);
  EXPECT_TRUE(state_->psi[0].allFinite());
  // Close to steady: the remaining basin-mode transient is small against the forcing.
  std::vector<Field> tend;
  model_->tendency(*state_, tend);
  const double rel = tend[0].abs().maxCoeff() / (kTau0 * (kPi / kL) / (kRho0 * kH));
  std::printf("Munk run: max |dq/dt| / max |W| = %.2e after %.2e s\n", rel, state_->t);
  EXPECT_LT(rel, 0.05);
}

TEST_F(MunkRun, WesternBoundaryLayerMatchesMunk1950) {
  const Grid& g = *grid_;
  const Field& psi = state_->psi[0];
  const int jm = g.ny / 2;  // y = Ly/2: sin(l y) = 1
  const double w0 = curl_tau(g.y(jm), kL) / (kRho0 * kH);
  const double psi_sv = -w0 * kL / kBeta;  // Sverdrup interior value at the western wall
  const double d = kMunkD;
  const MunkX munk(w0, kL, d);

  // Profile within 6 d of the western wall against Munk's x-problem solution.
  double err = 0.0;
  for (int i = 0; g.x(i) <= 6.0 * d; ++i) {
    err = std::max(err, std::abs(psi(i, jm) - munk(g.x(i))));
  }
  std::printf("Munk (1950) profile, x <= 6d: max |psi - X| / psi_Sv = %.3e\n", err / psi_sv);
  // Munk (1950), J. Meteorol. 7: within 2 % of psi_Sv (the y-derivatives of the friction that
  // the boundary-layer problem drops are 2 (l d)^2 ~ 2 %; Thom's wall vorticity is first order).
  EXPECT_LT(err / psi_sv, 0.02) << "Munk (1950) boundary-layer profile";

  // First zero crossing of v = psi_x (the maximum of psi), linear interpolation between nodes.
  double x_model = -1.0;
  for (int i = 1; i + 2 <= g.nx; ++i) {
    const double v1 = psi(i + 1, jm) - psi(i - 1, jm);
    const double v2 = psi(i + 2, jm) - psi(i, jm);
    if (v1 > 0.0 && v2 <= 0.0) {
      x_model = g.x(i) + g.dx * v1 / (v1 - v2);
      break;
    }
  }
  const double x_munk =
      first_down_crossing([&](double x) { return munk(x, 1); }, 1.0, 10 * d, 1000);
  // Leading order in d/Lx: v ~ e^(-x/2d) sin(sqrt(3) x/2d) vanishes at x = 2 pi d / sqrt(3).
  const double x_leading = 2.0 * kPi / std::sqrt(3.0) * d;
  std::printf("Munk v zero crossing: model %.4f d, Munk x-problem %.4f d, leading order %.4f d\n",
              x_model / d, x_munk / d, x_leading / d);
  // Munk (1950): within 1 % of the x-problem's value.
  EXPECT_NEAR(x_model, x_munk, 0.01 * x_munk) << "Munk (1950) zero crossing of v";
  // Leading-order formula: the Sverdrup slope -psi_Sv/Lx of the interior moves the zero west
  // by (d/Lx) e^(pi/sqrt3) d = 0.18 d (5 %) at d/Lx = 0.03; allow 8 %.
  EXPECT_NEAR(x_model, x_leading, 0.08 * x_leading) << "Munk (1950) leading-order zero crossing";

  // Position of the maximum of v (parabola through the largest node value). Leading order:
  // tan(sqrt(3) x/2d) = sqrt(3), x = 2 pi d / (3 sqrt(3)).
  int imax = 1;
  for (int i = 1; i + 1 < g.nx / 2; ++i) {
    if (psi(i + 1, jm) - psi(i - 1, jm) > psi(imax + 1, jm) - psi(imax - 1, jm)) imax = i;
  }
  const auto v = [&](int i) { return (psi(i + 1, jm) - psi(i - 1, jm)) / (2.0 * g.dx); };
  const double vm = v(imax - 1);
  const double v0 = v(imax);
  const double vp = v(imax + 1);
  const double xv_model = g.x(imax) + 0.5 * g.dx * (vm - vp) / (vm - 2.0 * v0 + vp);
  const double xv_leading = 2.0 * kPi / (3.0 * std::sqrt(3.0)) * d;
  std::printf("Munk v maximum: model %.4f d, leading order %.4f d\n", xv_model / d, xv_leading / d);
  // Munk (1950): within half a grid interval of the leading-order position.
  EXPECT_NEAR(xv_model, xv_leading, 0.5 * g.dx) << "Munk (1950) position of the v maximum";
}

TEST_F(MunkRun, InteriorIsInSverdrupBalance) {
  const Grid& g = *grid_;
  const Field& psi = state_->psi[0];
  // Sverdrup (1947), PNAS 33: beta H v = curl(tau)/rho0 away from the western layer. The
  // western layer's tail is (Lx/d) e^(-x/2d) of the interior v: below 0.3 % for x >= 0.55 Lx;
  // the eastern layer decays as e^((x-Lx)/d): below 0.7 % for x <= 0.85 Lx.
  double worst = 0.0;
  for (int j = g.ny / 4; j <= 3 * g.ny / 4; ++j) {
    const double rhs = curl_tau(g.y(j), kL) / kRho0;
    for (int i = static_cast<int>(0.55 * g.nx); i <= static_cast<int>(0.85 * g.nx); ++i) {
      const double v = (psi(i + 1, j) - psi(i - 1, j)) / (2.0 * g.dx);
      worst = std::max(worst, std::abs(kBeta * kH * v - rhs) / std::abs(rhs));
    }
  }
  std::printf("Sverdrup (1947) interior: max |beta H v - curl tau/rho0| / |curl tau/rho0| = %.3e\n",
              worst);
  EXPECT_LT(worst, 0.02) << "Sverdrup (1947) interior balance";

  // Gyre transport, Sv: the Sverdrup transport at the western edge of the interior,
  // T = (1 / (rho0 beta)) int_Lx^0 curl tau dx at y = Ly/2; curl tau does not depend on x, so
  // the integral is -Lx curl tau (tau0 pi Lx / (rho0 beta Ly) = 15.3 Sv here).
  const double y = 0.5 * kL;
  const double t_sverdrup = -kL * curl_tau(y, kL) / (kRho0 * kBeta) / 1e6;  // Sv
  const double t_model = kH * psi.maxCoeff() / 1e6;
  // Munk's x-problem includes the boundary-layer overshoot and the eastern layer's transport.
  const MunkX munk(curl_tau(y, kL) / (kRho0 * kH), kL, kMunkD);
  double munk_max = 0.0;
  for (int k = 0; k <= 4000; ++k) munk_max = std::max(munk_max, munk(kL * k / 4000.0));
  std::printf("gyre transport: model %.3f Sv, Sverdrup %.3f Sv, Munk x-problem %.3f Sv\n", t_model,
              t_sverdrup, kH * munk_max / 1e6);
  // Sverdrup (1947): within 5 % (the Munk overshoot, +6 %, and the eastern no-slip layer,
  // -d/Lx = -3 %, are outside Sverdrup's balance).
  EXPECT_NEAR(t_model, t_sverdrup, 0.05 * t_sverdrup) << "Sverdrup (1947) gyre transport";
  // Munk (1950) x-problem: within 1 %.
  EXPECT_NEAR(t_model, kH * munk_max / 1e6, 0.01 * kH * munk_max / 1e6)
      << "Munk (1950) gyre transport";
}

}  // namespace
}  // namespace plateau
