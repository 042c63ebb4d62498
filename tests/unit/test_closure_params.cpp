// Closure parameters against their declarations (CLOSURES.md: "Parameters are declared, not
// parsed ad hoc"): the case file's [closure.NAME] table and --set overrides, each bad value
// reported with the closure, the key, the value, what is allowed and where it was written;
// and the fractional step's sub-stepping (CLOSURES.md, "Time stepping of the closure").

#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>
#include <iostream>
#include <sstream>

#include "tests/unit/test_closure_checks.hpp"

namespace plateau::testing_closures {
namespace {

namespace fs = std::filesystem;

// The tiny case without its own [closure.NAME] tables (the tests append theirs).
std::string base_case_text() {
  std::ifstream in(fs::path(PLATEAU_SOURCE_DIR) / "cases" / "tiny_2layer.toml");
  std::stringstream ss;
  ss << in.rdbuf();
  std::string text = ss.str();
  const auto at = text.find("\n[closure.");
  if (at != std::string::npos) text.resize(at + 1);
  return text;
}

int line_count(const std::string& s) {
  return static_cast<int>(std::count(s.begin(), s.end(), '\n'));
}

// The CaseError message of resolving `closure` with `table` appended to the tiny case.
std::string error_of(const std::string& closure, const std::string& table,
                     const std::vector<std::string>& sets = {}) {
  const fs::path file = fs::temp_directory_path() / "plateau-test-closure-params.toml";
  {
    std::ofstream out(file);
    out << base_case_text() << '\n' << table;
  }
  try {
    const Case c = load_case(file);
    std::vector<ParamOverride> o;
    for (const std::string& s : sets) o.push_back(parse_override(s));
    (void)resolve_params(*find_registered_closure(closure), c.find_closure(closure), file, o);
  } catch (const CaseError& e) {
    std::cout << "  message: " << e.what() << '\n';
    return e.what();
  }
  return "";
}

void expect_contains(const std::string& msg, const std::vector<std::string>& parts) {
  for (const std::string& p : parts)
    EXPECT_NE(msg.find(p), std::string::npos) << p << " in: " << msg;
}

TEST(ClosureParams, OutOfRangeCaseValueNamesFilePositionClosureKeyValueAndRange) {
  const int table_line = line_count(base_case_text()) + 2;  // "[closure.eady]" follows a blank
  const std::string msg = error_of("eady", "[closure.eady]\nalpha = 2\n");
  expect_contains(msg, {"plateau-test-closure-params.toml:" + std::to_string(table_line + 1) + ":9",
                        "closure 'eady'", "'alpha' = 2", "out of range", "[1e-04, 1]"});
}

TEST(ClosureParams, UnknownKeyWrongTypeAndUnknownChoiceAreRefused) {
  expect_contains(error_of("eady", "[closure.eady]\nalfa = 0.02\n"),
                  {"'alfa'", "not a parameter of this closure", "did you mean 'alpha'",
                   "allowed: alpha, mixing_length"});
  expect_contains(error_of("eady", "[closure.eady]\nalpha = \"big\"\n"),
                  {"'alpha' = big", "wrong type: not a number", "a real number in"});
  expect_contains(error_of("eady", "[closure.eady]\nmixing_length = \"bubble\"\n"),
                  {"not a known choice", "one of deformation|fixed|rhines"});
  expect_contains(error_of("flux_limited", "[closure.flux_limited]\nzalesak = 1\n"),
                  {"'zalesak' = 1", "wrong type: not a boolean", "true or false"});
}

TEST(ClosureParams, SetOverridesTheCaseTableAndIsCheckedToo) {
  const fs::path file = fs::temp_directory_path() / "plateau-test-closure-params-ok.toml";
  {
    std::ofstream out(file);
    out << base_case_text() << "\n[closure.eady]\nalpha = 0.03\nmixing_length = \"fixed\"\n";
  }
  const Case c = load_case(file);
  const closure::Info& eady = *find_registered_closure("eady");
  const std::vector<ParamOverride> o = {parse_override("closure.alpha=0.05"),
                                        parse_override("eady.length_km=80")};
  const closure::Params p = resolve_params(eady, c.find_closure("eady"), file, o);
  EXPECT_EQ(p.real("alpha"), 0.05);
  EXPECT_EQ(p.real("length_km"), 80.0);
  EXPECT_EQ(p.choice("mixing_length"), "fixed");
  EXPECT_EQ(p.real("k_max_m2_per_s"), 1e4);  // the declared default
  std::cout << "  " << canonical_text(eady, p) << '\n';
  EXPECT_NE(canonical_text(eady, p).find("alpha=0.05 mixing_length=fixed length_km=80"),
            std::string::npos);

  expect_contains(error_of("eady", "", {"eady.alpha=3"}),
                  {"--set eady.alpha=3", "closure 'eady'", "out of range", "[1e-04, 1]"});
  expect_contains(error_of("eady", "", {"constant.k_m2_per_s=100"}),
                  {"--set constant.k_m2_per_s=100", "this run uses closure 'eady'"});
  EXPECT_THROW((void)parse_override("eady.alpha"), CaseError);
  EXPECT_THROW((void)parse_override("alpha=0.1"), CaseError);
  EXPECT_THROW((void)parse_override("eady.=0.1"), CaseError);
}

TEST(ClosureParams, IntegerParametersRejectFractionsAndRangeBreaches) {
  closure::Info info;
  info.name = "test_integers";
  info.params = {closure::Param::integer("levels", "1", 3, 1, 10, "a count")};
  const closure::Param& p = info.params.front();
  EXPECT_EQ(parse_param_value(info, p, "7", "here").number, 7.0);
  try {
    (void)parse_param_value(info, p, "2.5", "here");
    FAIL();
  } catch (const CaseError& e) {
    expect_contains(e.what(), {"here", "'levels' = 2.5", "not an integer", "[1, 10]"});
  }
  EXPECT_THROW((void)parse_param_value(info, p, "11", "here"), CaseError);
}

TEST(ClosureParams, ContradictoryParametersAndNameClashesAreCaseErrors) {
  Model m(bay_grid(16), bay_params(2));
  const closure::Info& ee = *find_registered_closure("eddy_energy");
  std::vector<ParamOverride> o = {parse_override("eddy_energy.k_min_m2_per_s=500"),
                                  parse_override("eddy_energy.k_max_m2_per_s=100")};
  try {
    (void)make_closure(ee, resolve_params(ee, nullptr, "test", o), make_setup(m));
    FAIL();
  } catch (const CaseError& e) {
    std::cout << "  message: " << e.what() << '\n';
    expect_contains(e.what(), {"eddy_energy", "k_min_m2_per_s", "k_max_m2_per_s"});
  }
  closure::Info clash;
  clash.name = "constant";
  try {
    register_closure(clash, "test");
    FAIL();
  } catch (const CaseError& e) {
    std::cout << "  message: " << e.what() << '\n';
    expect_contains(e.what(), {"'constant'", "already taken by the built-in closure"});
  }
}

// ---- sub-stepping ------------------------------------------------------------------------------

TEST(ClosureSubsteps, FullPvStepIsSplitSoThatKDtOverDxSquaredStaysBelowAQuarter) {
  Model m(bay_grid(32), bay_params(2));
  ClosureHost host(
      m, make_variant({"constant", {{"k_m2_per_s", "5e4"}, {"target", "full_pv"}}, ""}, m));
  const auto& s = host.setup();
  // K dt (1/dx^2 + 1/dy^2) = 5e4 x 7200 x 2 / 31250^2 = 0.737 -> ceil(0.737 / 0.25) = 3.
  const double number = 5e4 * 7200.0 * 2.0 / (31250.0 * 31250.0);
  const int expected = static_cast<int>(std::ceil(number / 0.25));
  const ClosureStepNumbers n = closure_step_numbers(host.closure(), s);
  ModelState state = m.state_from_psi(random_psi(m.grid(), 2, 2U));
  ModelState manual = state;
  host.apply(state);
  std::cout << "  K dt (1/dx^2+1/dy^2) = " << n.diffusion_number << " (" << number
            << "); sub-steps: check " << n.substeps << ", step " << host.last_substeps()
            << " (expected " << expected << ")\n";
  EXPECT_NEAR(n.diffusion_number, number, 1e-12 * number);
  EXPECT_EQ(n.substeps, expected);
  EXPECT_EQ(host.last_substeps(), expected);
  // The same as `expected` forward-Euler steps of dt/expected with the flux re-evaluated.
  const double h = s.dt_s / expected;
  for (int k = 0; k < expected; ++k) {
    const Fluxes f = evaluate(host.closure(), s, view_of(s, manual, {}), h);
    std::vector<Field> t;
    flux_divergence(s, f, t);
    for (int l = 0; l < 2; ++l) {
      for (int j = 1; j < s.ny; ++j) {
        for (int i = 1; i < s.nx; ++i) manual.q[uz(l)](i, j) += h * t[uz(l)](i, j);
      }
    }
  }
  for (int l = 0; l < 2; ++l) EXPECT_TRUE(same_bits(state.q[uz(l)], manual.q[uz(l)])) << l;
}

TEST(ClosureSubsteps, StretchingStepIsOneStepAndReportsItsStiffness) {
  Model m(bay_grid(32), bay_params(2));
  ClosureHost host(m, make_variant({"constant", {{"k_m2_per_s", "5e4"}}, ""}, m));
  const ClosureStepNumbers n = closure_step_numbers(host.closure(), host.setup());
  // K dt / Ld^2 with the two-layer Ld = sqrt(g' H1 H2 / (H1 + H2)) / f0 (PHYSICS.md).
  const double ld = std::sqrt(0.02 * 1000.0 * 3000.0 / 4000.0) / 8e-5;
  ModelState state = m.state_from_psi(random_psi(m.grid(), 2, 2U));
  host.apply(state);
  std::cout << "  stretching: sub-steps " << host.last_substeps()
            << ", K dt / Ld^2 = " << n.stretching_stiffness << " (" << 5e4 * 7200.0 / (ld * ld)
            << ")\n";
  EXPECT_EQ(host.last_substeps(), 1);
  EXPECT_EQ(n.substeps, 1);
  EXPECT_NEAR(n.stretching_stiffness, 5e4 * 7200.0 / (ld * ld), 1e-12);
}

TEST(ClosureHostPieces, SetupWithoutAModelAndTheEnergyTendencySum) {
  const Grid g = bay_grid(24);
  const ModelParams p = bay_params(3);
  Model m(g, p);
  const closure::Setup a = make_setup(m);
  const closure::Setup b = make_setup(g, p);
  EXPECT_EQ(a.deformation_radii_m, b.deformation_radii_m);
  EXPECT_EQ(a.thickness_m, b.thickness_m);
  EXPECT_EQ(a.dx, b.dx);
  EXPECT_EQ(a.viscosity_m2_per_s, b.viscosity_m2_per_s);
  EXPECT_GT(a.deformation_radii_m.front(), a.deformation_radii_m.back());  // Ld1 first
  // The energy tendency of a tendency dq of the layer PVs, dE/dt = -sum_k H_k sum (psi_k - c_k)
  // dq_k dx dy over the interior nodes (the QG energy identity, PHYSICS.md; common practice),
  // summed here in long double node by node: the model's partial sums agree to rounding.
  const ModelState s = m.state_from_psi(random_psi(g, 3, 5U));
  const std::vector<Field> dq = random_psi(g, 3, 6U);
  long double ref = 0.0L;
  long double scale = 0.0L;
  for (int k = 0; k < 3; ++k) {
    for (int j = 1; j < g.ny; ++j) {
      for (int i = 1; i < g.nx; ++i) {
        const long double t =
            static_cast<long double>(p.thickness_m[static_cast<std::size_t>(k)]) *
            (s.psi[static_cast<std::size_t>(k)](i, j) - s.wall_psi[static_cast<std::size_t>(k)]) *
            dq[static_cast<std::size_t>(k)](i, j) * g.cell_area();
        ref -= t;
        scale += t < 0 ? -t : t;
      }
    }
  }
  const double model = m.energy_tendency(s, dq);
  EXPECT_NEAR(model, static_cast<double>(ref), 1e-14 * static_cast<double>(scale))
      << model << " vs " << static_cast<double>(ref);
}

}  // namespace
}  // namespace plateau::testing_closures
