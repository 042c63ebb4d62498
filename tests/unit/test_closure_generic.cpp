// The properties every closure promises (CLOSURES.md, "Properties every closure is tested
// for"), run over the whole registry: each registered closure with its defaults and with each
// other choice value and each flipped boolean, so a closure is covered the moment it registers.
// Synthetic states go through the stateless evaluation (Closure::fluxes on a view) and the
// harness's fractional step; none needs an inversion. The check values come from the
// definitions (zero, equality, sign), not from this program's output; the measured numbers are
// printed with each test.

#include <gtest/gtest.h>
#include <omp.h>

#include <iostream>
#include <limits>

#include "tests/unit/test_closure_checks.hpp"

namespace plateau::testing_closures {
namespace {

class EveryClosure : public ::testing::TestWithParam<Variant> {
 protected:
  static Model model(int layers) { return {bay_grid(32), bay_params(layers)}; }
};

TEST_P(EveryClosure, StepKeepsTheInteriorSumOfPvInEveryLayer) {
  for (const int layers : {2, 3}) {
    const Model m = model(layers);
    ClosureHost host(m, make_variant(GetParam(), m));
    vary(host.prognostic(), host.setup());
    ModelState s = m.state_from_psi(random_psi(m.grid(), layers, 11U));
    const ModelState before = s;
    host.apply(s);
    const double eps = std::numeric_limits<double>::epsilon();
    for (int k = 0; k < layers; ++k) {
      // The closure's tendency -div F: telescoping face fluxes with the wall faces zero, so its
      // interior sum vanishes up to the rounding of the face differences.
      const Field& t = host.last_tendency()[uz(k)];
      const double t_sum = interior_integral(m.grid(), t);
      const double t_abs = interior_integral(m.grid(), t.abs());
      // The updated q: each node's q + dt dq/dt rounds once, by at most eps/2 |q|.
      const double change = interior_integral(m.grid(), s.q[uz(k)] - before.q[uz(k)]);
      const double rounding = eps * interior_integral(m.grid(), s.q[uz(k)].abs());
      std::cout << "  " << layers << " layers, layer " << k + 1 << ": sum(dq/dt) dA = " << t_sum
                << " (sum |dq/dt| dA = " << t_abs << "); change of sum q dA over the step "
                << change << " (rounding bound " << rounding << ") m^2 s^-1\n";
      EXPECT_LE(std::abs(t_sum), 1e-12 * t_abs + 1e-300) << "layer " << k + 1;
      EXPECT_LE(std::abs(change), rounding) << "layer " << k + 1;
    }
  }
}

TEST_P(EveryClosure, DownGradientFluxNeverRaisesTheSumOfTheSquaredDiffusedQuantity) {
  const closure::Info* info = find_registered_closure(GetParam().closure);
  if (!info->down_gradient) GTEST_SKIP() << GetParam().closure << " is not down-gradient";
  const Model m = model(2);
  ClosureHost host(m, make_variant(GetParam(), m));
  vary(host.prognostic(), host.setup());
  const auto& setup = host.setup();
  for (const unsigned seed : {3U, 5U, 8U}) {
    ModelState s = m.state_from_psi(random_psi(m.grid(), 2, seed));
    const StateView v = view_of(setup, s, host.prognostic());
    const Fluxes f = evaluate(host.closure(), setup, v, setup.dt_s);
    for (int k = 0; k < 2; ++k) {
      const Field qt = diffused_of(host.closure(), setup, v, k);
      double mag = 0.0;
      const double dot = flux_dot_gradient(setup, f, qt, k, &mag);
      std::cout << "  seed " << seed << " layer " << k + 1 << ": sum F.grad q~ dA = " << dot
                << ", sum |F.grad q~| dA = " << mag << '\n';
      EXPECT_LE(dot, 1e-13 * mag) << "layer " << k + 1;
    }
    if (host.closure().target() == Target::full_pv) {
      // The step itself: with the sub-step rule (k dt (1/dx^2 + 1/dy^2) <= 1/4) the
      // forward-Euler update of a down-gradient flux is a contraction of sum q^2.
      const ModelState before = s;
      host.apply(s);
      for (int k = 0; k < 2; ++k) {
        const double z0 = interior_dot(m.grid(), before.q[uz(k)], before.q[uz(k)]);
        const double z1 = interior_dot(m.grid(), s.q[uz(k)], s.q[uz(k)]);
        EXPECT_LE(z1, z0 * (1.0 + 1e-14)) << "layer " << k + 1 << ": " << z0 << " -> " << z1;
      }
    }
  }
}

TEST_P(EveryClosure, UniformDiffusedQuantityGivesZeroFlux) {
  for (const int layers : {2, 3}) {
    const Model m = model(layers);
    ClosureHost host(m, make_variant(GetParam(), m));
    vary(host.prognostic(), host.setup());
    const auto& setup = host.setup();
    // Integer-valued psi: sums and differences are exact, so a uniform q~ is exactly uniform.
    std::vector<Field> psi = random_psi(m.grid(), layers, 21U);
    for (int k = 0; k < layers; ++k) psi[uz(k)] = psi[0].round() + 1000.0 * k;
    ModelState s = m.state_from_psi(psi);
    if (host.closure().target() == Target::full_pv) {
      psi = random_psi(m.grid(), layers, 21U);
      s = m.state_from_psi(psi);
      for (Field& q : s.q) q.setConstant(3.25e-5);
    }
    const Fluxes f =
        evaluate(host.closure(), setup, view_of(setup, s, host.prognostic()), setup.dt_s);
    std::cout << "  " << layers << " layers: max |F| = " << max_abs(f) << " m s^-2\n";
    EXPECT_EQ(max_abs(f), 0.0);
  }
}

TEST_P(EveryClosure, LinearDiffusedQuantityGivesAFluxProportionalToItsGradient) {
  const Model m = model(2);
  ClosureHost host(m, make_variant(GetParam(), m));  // uniform initial prognostic fields
  const auto& setup = host.setup();
  const bool full = host.closure().target() == Target::full_pv;
  // Uniform shear (so that flow-dependent diffusivities are uniform) and a linear q~.
  std::vector<Field> psi(2, m.grid().zeros());
  for (int j = 0; j <= setup.ny; ++j) {
    for (int i = 0; i <= setup.nx; ++i) {
      psi[0](i, j) = -0.05 * setup.x(i) - 0.1 * setup.y(j);  // u1 - u2 = (0.1, -0.05) m/s
    }
  }
  ModelState s = m.state_from_psi(psi);
  if (full) {
    for (int k = 0; k < 2; ++k) {
      for (int j = 0; j <= setup.ny; ++j) {
        for (int i = 0; i <= setup.nx; ++i) {
          s.q[uz(k)](i, j) = (1.0 + k) * (1e-11 * setup.x(i) + 2e-11 * setup.y(j));
        }
      }
    }
  }
  const StateView v = view_of(setup, s, host.prognostic());
  const Fluxes f = evaluate(host.closure(), setup, v, setup.dt_s);
  const double margin = host.closure().wall_taper_width_m() + 3.0 * std::max(setup.dx, setup.dy);
  const int mi = static_cast<int>(std::ceil(margin / setup.dx));
  const int mj = static_cast<int>(std::ceil(margin / setup.dy));
  std::vector<double> ks;
  for (int k = 0; k < 2; ++k) {
    const Field qt = diffused_of(host.closure(), setup, v, k);
    for (int j = mj; j <= setup.ny - mj; ++j) {
      for (int i = mi; i < setup.nx - mi; ++i) {
        ks.push_back(-f.fx[uz(k)](i, j) * setup.dx / (qt(i + 1, j) - qt(i, j)));
        ks.push_back(-f.fy[uz(k)](i, j) * setup.dy / (qt(i, j + 1) - qt(i, j)));
      }
    }
  }
  ASSERT_FALSE(ks.empty());
  const auto [lo, hi] = std::minmax_element(ks.begin(), ks.end());
  std::cout << "  " << ks.size() << " faces away from the walls: K = -F/grad q~ in [" << *lo << ", "
            << *hi << "] m^2/s\n";
  EXPECT_GE(*lo, 0.0);
  EXPECT_LE(*hi - *lo, 1e-9 * std::max(std::abs(*hi), 1e-300));
}

TEST_P(EveryClosure, RestStateGetsNoTendencyOutsideTheWallTaperZone) {
  const Model m = model(2);
  ClosureHost host(m, make_variant(GetParam(), m));
  const auto& setup = host.setup();
  ModelState s = m.rest_state();
  host.apply(s);
  const double width = host.closure().wall_taper_width_m();
  const double scale = std::max(host.closure().diffusivity_bound(), 1.0) * setup.beta / setup.dy;
  double outside = 0.0;
  double inside = 0.0;
  int counted = 0;
  for (int k = 0; k < 2; ++k) {
    const Field& t = host.last_tendency()[uz(k)];
    for (int j = 1; j < setup.ny; ++j) {
      for (int i = 1; i < setup.nx; ++i) {
        const double d =
            std::min({setup.x(i), setup.lx() - setup.x(i), setup.y(j), setup.ly() - setup.y(j)});
        if (host.closure().target() == Target::stretching || d >= width + setup.dy) {
          outside = std::max(outside, std::abs(t(i, j)));
          ++counted;
        } else {
          inside = std::max(inside, std::abs(t(i, j)));
        }
      }
    }
  }
  std::cout << "  taper width " << width / 1e3 << " km; max |dq/dt| outside the taper zone "
            << outside << " s^-2 over " << counted << " nodes; inside " << inside << " s^-2\n";
  EXPECT_GT(counted, 0);
  if (host.closure().target() == Target::stretching) {
    EXPECT_EQ(outside, 0.0);  // q~ = S psi = 0 at rest: no flux at all
  } else {
    EXPECT_LE(outside, 1e-12 * scale);
  }
}

// Three steps of the host and one stateless evaluation: q, the prognostic fields, the fluxes.
std::vector<Field> three_steps(const Model& m, const Variant& v) {
  ClosureHost host(m, make_variant(v, m));
  vary(host.prognostic(), host.setup());
  ModelState s = m.state_from_psi(random_psi(m.grid(), 3, 31U));
  const Fluxes f = evaluate(host.closure(), host.setup(),
                            view_of(host.setup(), s, host.prognostic()), host.setup().dt_s);
  for (int step = 0; step < 3; ++step) host.apply(s);
  std::vector<Field> out = s.q;
  for (const Field& p : host.prognostic()) out.push_back(p);
  for (const Field& a : f.fx) out.push_back(a);
  for (const Field& a : f.fy) out.push_back(a);
  const double e = host.last_energy_tendency();
  out.emplace_back(Field::Constant(1, 1, e));
  return out;
}

TEST_P(EveryClosure, SameBitsWithWideAndBaselineVectors) {
  // The row loops' AVX2 build against the baseline (SSE2) build, on a grid whose rows (31
  // interior nodes) leave a remainder for both vector widths: IEEE arithmetic without fused
  // multiply-add or reassociation gives the same bits (flux_kit.hpp).
  if (!closure::kit::cpu_has_wide_simd()) {
    GTEST_SKIP() << "this CPU has no AVX2: both runs would use the baseline build";
  }
  const Model m = model(3);
  closure::kit::set_wide_simd(false);
  const std::vector<Field> base = three_steps(m, GetParam());
  closure::kit::set_wide_simd(true);
  const std::vector<Field> wide = three_steps(m, GetParam());
  ASSERT_EQ(base.size(), wide.size());
  int differ = 0;
  for (std::size_t k = 0; k < base.size(); ++k) differ += same_bits(base[k], wide[k]) ? 0 : 1;
  std::cout << "  " << base.size() << " arrays compared, " << differ << " differ\n";
  EXPECT_EQ(differ, 0);
}

TEST_P(EveryClosure, SameBitsWithOneAndTwoThreads) {
  const long saved = closure::kit::min_parallel_nodes();
  closure::kit::set_min_parallel_nodes(0);  // the threaded loops, even on this small grid
  const Model m = model(3);
  auto run = [&](int threads) {
    omp_set_num_threads(threads);
    return three_steps(m, GetParam());
  };
  const std::vector<Field> one = run(1);
  const std::vector<Field> two = run(2);
  omp_set_num_threads(1);
  closure::kit::set_min_parallel_nodes(saved);
  ASSERT_EQ(one.size(), two.size());
  int differ = 0;
  for (std::size_t m2 = 0; m2 < one.size(); ++m2) differ += same_bits(one[m2], two[m2]) ? 0 : 1;
  std::cout << "  " << one.size() << " arrays compared, " << differ << " differ\n";
  EXPECT_EQ(differ, 0);
}

INSTANTIATE_TEST_SUITE_P(Registry, EveryClosure, ::testing::ValuesIn(all_variants()),
                         [](const ::testing::TestParamInfo<Variant>& p) { return p.param.label; });

TEST(Registry, ListsTheFiveFamiliesWithDeclaredParameters) {
  std::vector<std::string> names;
  for (const closure::Info* i : registered_closures()) names.push_back(i->name);
  for (const char* family : {"none", "constant", "eady", "eddy_energy", "flux_limited"}) {
    EXPECT_NE(std::find(names.begin(), names.end(), family), names.end()) << family;
  }
  EXPECT_TRUE(std::is_sorted(names.begin(), names.end()));
  for (const closure::Info* i : registered_closures()) {
    EXPECT_FALSE(i->summary.empty()) << i->name;
    EXPECT_FALSE(i->source.empty()) << i->name;
    for (const closure::Param& p : i->params) {
      EXPECT_FALSE(p.meaning.empty()) << i->name << "." << p.name;
      if (p.kind == closure::ParamKind::real || p.kind == closure::ParamKind::integer) {
        EXPECT_FALSE(p.unit.empty()) << i->name << "." << p.name;
        EXPECT_TRUE(p.contains(p.default_value)) << i->name << "." << p.name;
        if (p.is_log_scale) {
          EXPECT_GT(p.min, 0.0) << i->name << "." << p.name;
        }
      }
      if (p.kind == closure::ParamKind::choice) {
        EXPECT_NE(std::find(p.choices.begin(), p.choices.end(), p.default_choice), p.choices.end())
            << i->name << "." << p.name;
      }
    }
  }
}

}  // namespace
}  // namespace plateau::testing_closures
