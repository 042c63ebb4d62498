// PV homogenisation inside closed streamlines (Rhines and Young 1982, J. Fluid Mech. 122):
// constant-K full-PV diffusion in the prescribed-flow mode (PHYSICS.md section 3), one layer,
// on a steady gyre psi = Psi0 (1 - r^2/R^2)^2 (r < R, zero outside) with q = beta (y - y0) at the
// start. Shear dispersion mixes q along and across the closed streamlines in about T Pe^(1/3),
// T = R/U the circulation time and Pe = U R / K (Rhines and Young 1983, J. Fluid Mech. 133, from
// memory); pure diffusion would need R^2/K. Between the two times the spread of q inside has
// fallen while the rim, where the homogenised interior meets the unmixed exterior, still holds
// (indeed sharpens) its gradient; later K erodes the rim too.
//
// The time scales are computed from these formulas and the flow's own U and R; the thresholds
// (spread below a third, rim gradient at least half the initial beta and five times the
// interior's) are the qualitative statement
// of the theory, not numbers taken from this program.

#include <gtest/gtest.h>

#include <cmath>
#include <iostream>

#include "tests/unit/test_closure_checks.hpp"

namespace plateau::testing_closures {
namespace {

struct Gyre {
  double radius = 3.5e5;  // R, m
  double speed = 0.1;     // U, the peak speed, m/s (at r = R / sqrt(3))
  // Psi0 from the peak speed: |dpsi/dr| peaks at 8 Psi0 / (3 sqrt(3) R).
  [[nodiscard]] double psi0() const { return speed * 3.0 * std::sqrt(3.0) * radius / 8.0; }
};

struct Measures {
  double spread = 0.0;       // standard deviation of q over r < 0.7 R, s^-1
  double inside_grad = 0.0;  // mean |grad q| over r < 0.7 R, m^-1 s^-1
  double rim_grad = 0.0;     // mean |grad q| over 0.85 R < r < 1.15 R, m^-1 s^-1
};

Measures measure(const Grid& g, const Field& q, const Gyre& gy) {
  const double xc = 0.5 * g.lx_m;
  const double yc = 0.5 * g.ly_m;
  double s1 = 0.0;
  double s2 = 0.0;
  int n_in = 0;
  double grad = 0.0;
  double grad_in = 0.0;
  int n_rim = 0;
  for (int j = 1; j < g.ny; ++j) {
    for (int i = 1; i < g.nx; ++i) {
      const double r = std::hypot(g.x(i) - xc, g.y(j) - yc) / gy.radius;
      const double gx = (q(i + 1, j) - q(i - 1, j)) / (2.0 * g.dx);
      const double gyv = (q(i, j + 1) - q(i, j - 1)) / (2.0 * g.dy);
      if (r < 0.7) {
        s1 += q(i, j);
        s2 += q(i, j) * q(i, j);
        grad_in += std::hypot(gx, gyv);
        ++n_in;
      } else if (r > 0.85 && r < 1.15) {
        grad += std::hypot(gx, gyv);
        ++n_rim;
      }
    }
  }
  const double mean = s1 / n_in;
  return {std::sqrt(std::max(0.0, s2 / n_in - mean * mean)), grad_in / n_in, grad / n_rim};
}

TEST(Homogenisation, ConstantKFlattensPvInsideClosedStreamlinesWhileTheRimKeepsItsGradient) {
  const int n = 48;
  const Grid g(n, n, 1e6, 1e6);
  const Gyre gy;
  ModelParams p;
  p.f0 = 8e-5;
  p.beta = 2e-11;
  p.thickness_m = {4000.0};
  p.wind.tau0 = 0.0;
  p.prescribed_flow = true;
  p.dt = 2e4;  // CFL U dt (1/dx + 1/dy) = 0.19
  Model m(g, p);
  std::vector<Field> psi(1, g.zeros());
  for (int j = 0; j <= n; ++j) {
    for (int i = 0; i <= n; ++i) {
      const double r2 =
          (std::pow(g.x(i) - 5e5, 2) + std::pow(g.y(j) - 5e5, 2)) / (gy.radius * gy.radius);
      if (r2 < 1.0) psi[0](i, j) = gy.psi0() * (1.0 - r2) * (1.0 - r2);
    }
  }
  const double k = 300.0;
  const double t_circ = gy.radius / gy.speed;  // T = R/U
  const double pe = gy.speed * gy.radius / k;
  const double t_shear = t_circ * std::cbrt(pe);
  const double t_diff = gy.radius * gy.radius / k;
  const double t_check = std::sqrt(t_shear * t_diff);  // between the two
  std::cout << "  R = " << gy.radius / 1e3 << " km, U = " << gy.speed << " m/s, K = " << k
            << " m^2/s: Pe = " << pe << ", T Pe^(1/3) = " << t_shear / 86400.0
            << " days, R^2/K = " << t_diff / 86400.0 << " days; checked at " << t_check / 86400.0
            << " days\n";

  auto run = [&](double k_m2_per_s, double until_s) {
    ModelState s = m.state_from_psi(psi);
    for (int j = 0; j <= n; ++j) {
      for (int i = 0; i <= n; ++i) s.q[0](i, j) = p.beta * (g.y(j) - g.y0);
    }
    const std::string kv = format_real(k_m2_per_s);
    ClosureHost host(
        m, make_variant({"constant", {{"k_m2_per_s", kv}, {"target", "full_pv"}}, "constant"}, m));
    const auto steps = static_cast<long>(std::llround(until_s / p.dt));
    for (long st = 0; st < steps; ++st) m.step(s, &host);
    return measure(g, s.q[0], gy);
  };

  ModelState s0 = m.state_from_psi(psi);
  for (int j = 0; j <= n; ++j) {
    for (int i = 0; i <= n; ++i) s0.q[0](i, j) = p.beta * (g.y(j) - g.y0);
  }
  const Measures start = measure(g, s0.q[0], gy);
  const Measures early = run(k, 0.25 * t_shear);
  const Measures mid = run(k, t_check);
  const Measures late = run(k, 2.0 * t_diff);
  const Measures stirred = run(1.0, t_check);  // the control: K nearly off
  auto show = [&](const char* when, const Measures& x) {
    std::cout << "  " << when << ": spread inside / start " << x.spread / start.spread
              << ", |grad q| / beta inside " << x.inside_grad / p.beta << ", on the rim "
              << x.rim_grad / p.beta << '\n';
  };
  show("t = 0                 ", start);
  show("t = T Pe^(1/3) / 4    ", early);
  show("t = check time        ", mid);
  show("t = 2 R^2/K           ", late);
  show("check time, K = 1 m2/s", stirred);

  // Homogenised inside, the gradient expelled to the rim and held there, between the two
  // time scales.
  EXPECT_LT(mid.spread, start.spread / 3.0);
  EXPECT_GE(mid.rim_grad, 0.5 * p.beta);
  EXPECT_LT(mid.inside_grad, 0.2 * mid.rim_grad);
  // Not yet before the shear-dispersion time ...
  EXPECT_GT(early.spread, mid.spread * 2.0);
  // ... and the diffusivity does it: stirring alone keeps more of the spread.
  EXPECT_GT(stirred.spread, mid.spread * 2.0);
  // Much later K erodes the rim as well.
  EXPECT_LT(late.rim_grad, mid.rim_grad);
}

}  // namespace
}  // namespace plateau::testing_closures
