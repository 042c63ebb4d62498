#include "bench_common.hpp"

#include <fftw3.h>

#include <cmath>
#include <cstdlib>
#include <numbers>
#include <random>

#include "harness/model/sine_transform.hpp"

namespace plateau::bench {

std::filesystem::path bench_wisdom_file() {
  if (const char* p = std::getenv("PLATEAU_BENCH_WISDOM"); p != nullptr && *p != '\0') {
    return p;
  }
  if (const char* x = std::getenv("XDG_CACHE_HOME"); x != nullptr && *x != '\0') {
    return std::filesystem::path(x) / "plateau" / "fftw-wisdom-bench";
  }
  return "/tmp/plateau-bench/fftw-wisdom";
}

void use_plans(Plans plans) {
  if (plans == Plans::measured) {
    // Setting the path again makes the next plan re-import the file (cheap once it exists).
    set_wisdom_file(bench_wisdom_file());
  } else {
    set_wisdom_file({});
    fftw_forget_wisdom();
  }
}

Grid basin_grid(int n) { return {n, n, kBasinSide, kBasinSide}; }

ModelParams basin_params(const Grid& g, int layers) {
  ModelParams p;
  p.f0 = 8e-5;
  p.beta = 2e-11;
  if (layers == 2) {
    p.thickness_m = {1000.0, 3000.0};
    p.reduced_gravity = {0.02};
  } else {
    p.thickness_m = {600.0, 1000.0, 2400.0};
    p.reduced_gravity = {0.025, 0.0125};
  }
  p.wind.profile = WindProfile::double_gyre;
  p.wind.tau0 = 0.1;
  p.a2 = 200.0 * g.dx / 8000.0;
  p.bottom_drag = 1e-7;
  p.wall = WallKind::free_slip;
  p.advection = Advection::arakawa;
  p.dt = 1800.0;
  return p;
}

ModelState spun_up_state(Model& model, unsigned seed) {
  const Grid& g = model.grid();
  const int n = model.n_layers();
  std::mt19937 rng(seed);
  std::normal_distribution<double> nd(0.0, 1.0);
  constexpr int kModes = 6;
  const double pi = std::numbers::pi;
  // Sine modes sampled once: sx(i, a - 1) = sin(a pi x_i / Lx), sy(j, b - 1) likewise.
  Eigen::ArrayXXd sx(g.nx + 1, kModes);
  Eigen::ArrayXXd sy(g.ny + 1, kModes);
  for (int a = 1; a <= kModes; ++a) {
    for (int i = 0; i <= g.nx; ++i) sx(i, a - 1) = std::sin(a * pi * g.x(i) / g.lx_m);
    for (int j = 0; j <= g.ny; ++j) sy(j, a - 1) = std::sin(a * pi * g.y(j) / g.ly_m);
  }
  std::vector<Field> psi;
  for (int k = 0; k < n; ++k) {
    // Top layer about 3e4 m^2/s (speeds ~0.1 m/s), weaker below.
    const double amp = 3e4 / (1.0 + 1.5 * k);
    Field f = g.zeros();
    for (int a = 1; a <= kModes; ++a) {
      for (int b = 1; b <= kModes; ++b) {
        const double c = amp * nd(rng) / (a * a + b * b);
        for (int j = 1; j < g.ny; ++j) {
          for (int i = 1; i < g.nx; ++i) f(i, j) += c * sx(i, a - 1) * sy(j, b - 1);
        }
      }
    }
    psi.push_back(std::move(f));
  }
  ModelState s = model.state_from_psi(psi);
  for (int i = 0; i < 3; ++i) model.step(s);
  return s;
}

double grid_points(int n) { return static_cast<double>(n + 1) * static_cast<double>(n + 1); }

benchmark::Counter ns_per_point(double points_per_iteration) {
  // Rate = value * iterations / seconds; inverted: seconds / (value * iterations), seconds per
  // point per iteration (the console shows it as "12.3ns"; the JSON holds seconds).
  return benchmark::Counter(points_per_iteration, benchmark::Counter::kIsIterationInvariantRate |
                                                      benchmark::Counter::kInvert);
}

bool finite(const ModelState& s) {
  for (const auto& f : s.q) {
    if (!f.isFinite().all()) return false;
  }
  for (const auto& f : s.psi) {
    if (!f.isFinite().all()) return false;
  }
  return true;
}

}  // namespace plateau::bench
