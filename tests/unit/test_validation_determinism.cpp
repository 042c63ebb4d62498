// Determinism (DEVELOPERS.md, reproducibility; PHYSICS.md section 2): a run gives bit-identical
// q whatever the OpenMP thread count, and on repeats. Row loops are split over threads without
// reductions and the inversion splits its sine transforms into blocks fixed by the grid size, so
// the result must not depend on the thread count. The small basin runs on one thread whatever
// the setting (below threaded()'s size); the larger one, with three layers (an odd number of
// modes over two threads), really splits its loops.

#include <gtest/gtest.h>
#include <omp.h>

#include <cmath>
#include <cstring>
#include <numbers>
#include <vector>

#include "harness/model/model.hpp"

namespace plateau {
namespace {

struct Basin {
  int nx;
  int ny;
  int layers;
  int steps;
};

std::vector<Field> run(int threads, const Basin& b = {48, 48, 2, 50}) {
  omp_set_num_threads(threads);
  const Grid g(b.nx, b.ny, 1.2e6, 1.2e6 * b.ny / b.nx);
  ModelParams p;
  p.f0 = 1e-4;
  p.beta = 2e-11;
  if (b.layers == 3) {
    p.thickness_m = {600.0, 1000.0, 2400.0};
    p.reduced_gravity = {0.025, 0.0125};
  } else {
    p.thickness_m = {1000.0, 3000.0};
    p.reduced_gravity = {0.02};
  }
  p.wind.profile = WindProfile::double_gyre;
  p.wind.tau0 = 0.1;
  p.wind.asymmetry = 0.2;
  p.bottom_drag = 1e-7;
  p.a2 = 500.0;
  p.a4 = 1e10;
  p.wall = WallKind::partial_slip;
  p.slip_length_m = 2e4;
  p.advection = Advection::arakawa;
  p.dt = 3600.0;
  Model model(g, p);
  // A smooth non-trivial start so that the Jacobian and the mass constraint act from step 1.
  std::vector<Field> psi(static_cast<std::size_t>(b.layers), g.zeros());
  for (int j = 1; j < g.ny; ++j) {
    for (int i = 1; i < g.nx; ++i) {
      const double x = g.x(i) / g.lx_m;
      const double y = g.y(j) / g.ly_m;
      psi[0](i, j) =
          2e4 * std::sin(3.0 * x) * std::sin(std::numbers::pi * y) * std::cos(5.0 * x * y);
      psi[1](i, j) = -5e3 * std::sin(std::numbers::pi * x) * std::sin(2.0 * std::numbers::pi * y);
      if (b.layers == 3) psi[2](i, j) = 2e3 * std::sin(2.0 * x) * std::sin(std::numbers::pi * y);
    }
  }
  ModelState s = model.state_from_psi(psi);
  for (int n = 0; n < b.steps; ++n) model.step(s);
  return s.q;
}

bool identical(const std::vector<Field>& a, const std::vector<Field>& b) {
  if (a.size() != b.size()) return false;
  for (std::size_t k = 0; k < a.size(); ++k) {
    if (a[k].size() != b[k].size()) return false;
    if (std::memcmp(a[k].data(), b[k].data(),
                    sizeof(double) * static_cast<std::size_t>(a[k].size())) != 0) {
      return false;
    }
  }
  return true;
}

TEST(ValidationDeterminism, BitIdenticalAcrossThreadCountsAndRepeats) {
  const int saved = omp_get_max_threads();
  const std::vector<Field> one = run(1);
  const std::vector<Field> two = run(2);
  const std::vector<Field> two_again = run(2);
  const std::vector<Field> one_again = run(1);
  omp_set_num_threads(saved);
  ASSERT_TRUE(one[0].allFinite() && one[1].allFinite());
  EXPECT_TRUE(identical(one, two)) << "q differs between 1 and 2 threads";
  EXPECT_TRUE(identical(two, two_again)) << "q differs between two repeats with 2 threads";
  EXPECT_TRUE(identical(one, one_again)) << "q differs between two repeats with 1 thread";
}

TEST(ValidationDeterminism, BitIdenticalAcrossThreadCountsOnAThreadedGrid) {
  const Basin basin{128, 112, 3, 20};  // 129 x 113 nodes: above threaded()'s 96^2
  ASSERT_TRUE(threaded(Grid(basin.nx, basin.ny, 1.0, 1.0)));
  const int saved = omp_get_max_threads();
  const std::vector<Field> one = run(1, basin);
  const std::vector<Field> two = run(2, basin);
  const std::vector<Field> two_again = run(2, basin);
  omp_set_num_threads(saved);
  ASSERT_TRUE(one[0].allFinite() && one[1].allFinite() && one[2].allFinite());
  EXPECT_TRUE(identical(one, two)) << "q differs between 1 and 2 threads";
  EXPECT_TRUE(identical(two, two_again)) << "q differs between two repeats with 2 threads";
}

}  // namespace
}  // namespace plateau
