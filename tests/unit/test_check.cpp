// Derived numbers of `plateau check` against their formulas (never against printed numbers), the
// findings it reports, and the command's exit codes.

#include <gtest/gtest.h>

#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <numbers>
#include <sstream>
#include <string>
#include <vector>

#include <sys/wait.h>
#include <nlohmann/json.hpp>

#include "harness/case/case.hpp"
#include "harness/case/derived.hpp"
#include "harness/cli/cli.hpp"

namespace plateau {
namespace {

const std::filesystem::path kSourceDir = PLATEAU_SOURCE_DIR;
const std::filesystem::path kBinaryDir = PLATEAU_BINARY_DIR;
constexpr double kPi = std::numbers::pi;

Case load(const std::string& name) { return load_case(kSourceDir / "cases" / (name + ".toml")); }

bool has_finding(const std::vector<Finding>& findings, Finding::Severity severity,
                 const std::string& grid, const std::string& words) {
  for (const auto& f : findings) {
    if (f.severity == severity && f.grid == grid && f.message.find(words) != std::string::npos) {
      return true;
    }
  }
  return false;
}

std::size_t count(const std::vector<Finding>& findings, Finding::Severity severity) {
  std::size_t n = 0;
  for (const auto& f : findings) n += f.severity == severity ? 1 : 0;
  return n;
}

// ---- vertical modes -------------------------------------------------------------------------

TEST(DeformationRadius, TwoLayerFormula) {
  // Two-layer result Ld = sqrt(g' H1 H2 / (H1 + H2)) / f0: Pedlosky (1987), Geophysical Fluid
  // Dynamics, 2nd ed. (the two-layer model's internal deformation radius).
  struct Stack {
    double f0, h1, h2, g;
  };
  for (const Stack s : {Stack{8e-5, 1000, 3000, 0.02}, Stack{1e-4, 500, 3500, 0.03},
                        Stack{6e-5, 2000, 2000, 0.01}}) {
    const auto radii = deformation_radii_m(s.f0, {s.h1, s.h2}, {s.g});
    ASSERT_EQ(radii.size(), 1U);
    const double expected = std::sqrt(s.g * s.h1 * s.h2 / (s.h1 + s.h2)) / s.f0;
    EXPECT_NEAR(radii[0], expected, 1e-12 * expected);
  }
}

TEST(DeformationRadius, TwoLayerCaseDerivedNumbers) {
  const Case c = load("double_gyre_2layer");
  const DerivedNumbers d = derive(c);
  const double h1 = c.thickness_m[0];
  const double h2 = c.thickness_m[1];
  const double g = c.reduced_gravity_m_per_s2[0];
  // Pedlosky (1987), as above.
  const double expected = std::sqrt(g * h1 * h2 / (h1 + h2)) / c.f0_per_s;
  ASSERT_EQ(d.deformation_radii_m.size(), 1U);
  EXPECT_NEAR(d.deformation_radii_m[0], expected, 1e-12 * expected);
  EXPECT_NEAR(d.truth.intervals_per_radius[0], expected / (c.lx_m / c.truth.nx), 1e-9);
  EXPECT_NEAR(d.coarse.intervals_per_radius[0], expected / (c.lx_m / c.coarse.nx), 1e-9);
  // Rossby crossing time Lx / (beta Ld^2).
  EXPECT_NEAR(d.rossby_crossing_s, c.lx_m / (c.beta_per_m_s * expected * expected),
              1e-9 * d.rossby_crossing_s);
}

TEST(DeformationRadius, ThreeLayerEigenvaluesSolveTheCharacteristicPolynomial) {
  // -S for three layers, written out from PHYSICS.md section 1:
  //   [[a, -a, 0], [-b1, b1 + b2, -b2], [0, -c, c]],
  //   a = f0^2/(H1 g1), b1 = f0^2/(H2 g1), b2 = f0^2/(H2 g2), c = f0^2/(H3 g2).
  // Its characteristic polynomial is lambda (lambda^2 - T lambda + M) with T the trace and M the
  // sum of the principal 2x2 minors, M = a b2 + a c + b1 c.
  const Case c = load("double_gyre_3layer");
  const double f2 = c.f0_per_s * c.f0_per_s;
  const auto& h = c.thickness_m;
  const auto& g = c.reduced_gravity_m_per_s2;
  const double a = f2 / (h[0] * g[0]);
  const double b1 = f2 / (h[1] * g[0]);
  const double b2 = f2 / (h[1] * g[1]);
  const double cc = f2 / (h[2] * g[1]);
  const double trace = a + b1 + b2 + cc;
  const double minors = a * b2 + a * cc + b1 * cc;
  const double root = std::sqrt(trace * trace - 4.0 * minors);
  const double lambda1 = (trace - root) / 2.0;
  const double lambda2 = (trace + root) / 2.0;

  const DerivedNumbers d = derive(c);
  ASSERT_EQ(d.eigenvalues_per_m2.size(), 2U);
  EXPECT_NEAR(d.eigenvalues_per_m2[0], lambda1, 1e-10 * lambda1);
  EXPECT_NEAR(d.eigenvalues_per_m2[1], lambda2, 1e-10 * lambda2);
  EXPECT_NEAR(d.deformation_radii_m[0], 1.0 / std::sqrt(lambda1), 1e-6);
  EXPECT_NEAR(d.deformation_radii_m[1], 1.0 / std::sqrt(lambda2), 1e-6);
  // PHYSICS.md section 5 quotes "about 54 and 31 km" for this stack.
  EXPECT_NEAR(d.deformation_radii_m[0], 54e3, 1e3);
  EXPECT_NEAR(d.deformation_radii_m[1], 31e3, 1e3);
}

TEST(DeformationRadius, OneLayerHasNone) {
  EXPECT_TRUE(deformation_radii_m(1e-4, {4000.0}, {}).empty());
  const DerivedNumbers d = derive(load("single_gyre_barotropic"));
  EXPECT_TRUE(d.deformation_radii_m.empty());
  EXPECT_FALSE(std::isfinite(d.rossby_crossing_s));
}

TEST(StretchingMatrix, RowsSumToZero) {
  // A uniform psi has no stretching: each row of S sums to zero (PHYSICS.md section 1).
  const Eigen::MatrixXd s = stretching_matrix(8e-5, {600, 1000, 2400}, {0.025, 0.0125});
  for (Eigen::Index k = 0; k < s.rows(); ++k) EXPECT_NEAR(s.row(k).sum(), 0.0, 1e-20);
}

// ---- boundary layers and transports ---------------------------------------------------------

TEST(BoundaryLayers, MunkWidthFormula) {
  // Munk (1950): d = (A2/beta)^(1/3).
  EXPECT_NEAR(munk_width_m(200.0, 2e-11), std::cbrt(200.0 / 2e-11), 1e-9);
  EXPECT_EQ(munk_width_m(0.0, 2e-11), 0.0);
  const Case c = load("double_gyre_3layer");
  const DerivedNumbers d = derive(c);
  for (const auto& [grid, numbers] : {std::pair{c.truth, d.truth}, std::pair{c.coarse, d.coarse}}) {
    const double width = std::cbrt(grid.viscosity_m2_per_s / c.beta_per_m_s);
    EXPECT_NEAR(numbers.munk_width_m, width, 1e-9 * width);
    EXPECT_NEAR(numbers.munk_intervals, width / (c.lx_m / grid.nx), 1e-12);
  }
  // PHYSICS.md section 3: the coarse grid resolves its own Munk layer by >= about 1.5.
  EXPECT_GE(d.coarse.munk_intervals, 1.5);
}

TEST(BoundaryLayers, MunkPeakFactorFromTheProfile) {
  // Munk (1950), PHYSICS.md section 4: psi = psi_Sv [1 - e^(-s/2) (cos(sqrt3 s/2) +
  // sin(sqrt3 s/2)/sqrt3)], s = x/d. The peak of d(psi/psi_Sv)/ds is the factor of U_b.
  const auto profile = [](double s) {
    const double r3 = std::sqrt(3.0);
    return 1.0 - std::exp(-s / 2.0) * (std::cos(r3 * s / 2.0) + std::sin(r3 * s / 2.0) / r3);
  };
  double peak = 0.0;
  const double h = 1e-5;
  for (double s = h; s < 10.0; s += 1e-4) {
    peak = std::max(peak, (profile(s + h) - profile(s - h)) / (2.0 * h));
  }
  EXPECT_NEAR(munk_peak_factor(), peak, 1e-6);
}

TEST(BoundaryLayers, StommelAndBiharmonicWidths) {
  EXPECT_NEAR(stommel_width_m(1e-7, 2e-11), 1e-7 / 2e-11, 1e-9);
  EXPECT_NEAR(biharmonic_munk_width_m(1e11, 2e-11), std::pow(1e11 / 2e-11, 0.2), 1e-9);
}

TEST(Transport, SverdrupSingleAndDoubleGyre) {
  // Sverdrup (1947): T = Lx max|curl tau| / (rho0 beta); for tau_x = -tau0 cos(n pi y / Ly) the
  // maximum curl is tau0 n pi / Ly.
  Case c = load("double_gyre_3layer");
  const double lx = c.lx_m;
  const double ly = c.ly_m;
  const double expected_double =
      lx * c.wind.tau0_n_per_m2 * 2.0 * kPi / ly / (c.rho0_kg_per_m3 * c.beta_per_m_s);
  EXPECT_NEAR(derive(c).sverdrup_transport_m3_per_s, expected_double, 1e-9 * expected_double);
  c.wind.shape = WindShape::single_gyre;
  const double expected_single = expected_double / 2.0;
  EXPECT_NEAR(derive(c).sverdrup_transport_m3_per_s, expected_single, 1e-9 * expected_single);
}

TEST(Transport, TableCurlIsTheSteepestSegment) {
  WindSpec w;
  w.shape = WindShape::table;
  w.table_y_m = {0.0, 400e3, 1000e3};
  w.table_tau_x_n_per_m2 = {-0.05, 0.1, 0.0};
  EXPECT_NEAR(max_wind_curl(w, 1000e3), 0.15 / 400e3, 1e-18);
  EXPECT_NEAR(wind_stress_x(w, 1000e3, 200e3), 0.025, 1e-15);  // halfway up the first segment
  EXPECT_NEAR(wind_stress_x(w, 1000e3, -1.0), -0.05, 1e-15);   // held beyond the ends
}

TEST(Transport, AsymmetricWindFormula) {
  // case.hpp: double gyre tau_x = -tau0 cos(2 pi y/Ly) (1 + a (2 y/Ly - 1)).
  WindSpec w;
  w.shape = WindShape::double_gyre;
  w.tau0_n_per_m2 = 0.1;
  w.asymmetry = 0.5;
  const double ly = 1600e3;
  for (double y : {0.0, 300e3, 800e3, 1500e3}) {
    EXPECT_NEAR(wind_stress_x(w, ly, y),
                -0.1 * std::cos(2.0 * kPi * y / ly) * (1.0 + 0.5 * (2.0 * y / ly - 1.0)), 1e-15);
  }
  // The maximum curl is at least the centred difference anywhere.
  double sampled = 0.0;
  for (int j = 1; j < 1000; ++j) {
    const double y = ly * j / 1000.0;
    const double dy = 1.0;
    sampled = std::max(sampled,
                       std::abs(wind_stress_x(w, ly, y + dy) - wind_stress_x(w, ly, y - dy)) / 2.0);
  }
  EXPECT_GE(max_wind_curl(w, ly) * (1.0 + 1e-6), sampled);
}

// ---- time-step limits -----------------------------------------------------------------------

TEST(TimeStep, FrictionLimitIsAb3Bound) {
  // AB3 for y' = z y has the characteristic polynomial
  //   zeta^3 - zeta^2 - (z/12)(23 zeta^2 - 16 zeta + 5);
  // on the negative real axis it first has a root zeta = -1 at the stability bound.
  const auto ab3_at_minus_one = [](double z) { return -2.0 - (z / 12.0) * (23.0 + 16.0 + 5.0); };
  const double dx = 12.5e3;
  const double dy = 10e3;
  const double s = 1.0 / (dx * dx) + 1.0 / (dy * dy);
  // The 5-point Laplacian's most negative eigenvalue tends to -4 s on fine grids.
  const double a2 = 200.0;
  const double dt_lap = friction_dt_limit_s(a2, 0.0, dx, dy);
  EXPECT_NEAR(ab3_at_minus_one(-a2 * 4.0 * s * dt_lap), 0.0, 1e-12);
  EXPECT_NEAR(a2 * dt_lap * s, 3.0 / 22.0, 1e-15);
  const double a4 = 1e10;
  const double dt_bih = friction_dt_limit_s(0.0, a4, dx, dy);
  EXPECT_NEAR(ab3_at_minus_one(-a4 * 16.0 * s * s * dt_bih), 0.0, 1e-12);
  // Both together: the rates add.
  const double dt_both = friction_dt_limit_s(a2, a4, dx, dy);
  EXPECT_NEAR(ab3_at_minus_one(-(a2 * 4.0 * s + a4 * 16.0 * s * s) * dt_both), 0.0, 1e-12);
  EXPECT_FALSE(std::isfinite(friction_dt_limit_s(0.0, 0.0, dx, dy)));
}

TEST(TimeStep, CflLimit) {
  // ARCHITECTURE.md: CFL = (|u|/dx + |v|/dy) dt, with |u| = |v| = U.
  const double dt = cfl_dt_limit_s(1.3, 12.5e3, 10e3, 0.5);
  EXPECT_NEAR(1.3 * (1.0 / 12.5e3 + 1.0 / 10e3) * dt, 0.5, 1e-15);
}

TEST(TimeStep, DerivedSpeedsAndSteps) {
  const Case c = load("double_gyre_3layer");
  const DerivedNumbers d = derive(c);
  const double transport = d.sverdrup_transport_m3_per_s;
  const double h1 = c.thickness_m[0];
  const GridNumbers& t = d.truth;
  EXPECT_EQ(t.boundary_layer, "Munk");
  EXPECT_NEAR(t.interior_speed_m_per_s, transport / (h1 * c.lx_m), 1e-12);
  EXPECT_NEAR(t.boundary_speed_m_per_s, munk_peak_factor() * transport / (h1 * t.munk_width_m),
              1e-12);
  const double dx = c.lx_m / c.truth.nx;
  const double dy = c.ly_m / c.truth.ny;
  EXPECT_NEAR(t.cfl_boundary, t.boundary_speed_m_per_s * (1.0 / dx + 1.0 / dy) * c.truth.dt_s,
              1e-12);
  EXPECT_EQ(t.steps, static_cast<long long>(std::ceil(c.run.length_s / c.truth.dt_s)));
  EXPECT_DOUBLE_EQ(t.node_layer_steps,
                   (c.truth.nx + 1.0) * (c.truth.ny + 1.0) * 3.0 * static_cast<double>(t.steps));
  EXPECT_DOUBLE_EQ(t.estimated_wall_s, t.node_layer_steps * kCostPerNodeLayerStep_s);
}

// ---- findings -------------------------------------------------------------------------------

TEST(Findings, ShippedReferenceCasesAreClean) {
  for (const char* name : {"double_gyre_3layer", "double_gyre_2layer", "single_gyre_barotropic"}) {
    const Case c = load(name);
    EXPECT_TRUE(assess(c, derive(c)).empty()) << name;
  }
}

TEST(Findings, TinyCaseWarnsButPasses) {
  const Case c = load("tiny_2layer");
  const auto f = assess(c, derive(c));
  EXPECT_EQ(count(f, Finding::Severity::failure), 0U);
  EXPECT_TRUE(has_finding(f, Finding::Severity::warning, "truth", "resolves Ld1"));
  EXPECT_TRUE(has_finding(f, Finding::Severity::warning, "", "spin-up"));
}

TEST(Findings, CflWarningThenFailure) {
  Case c = load("double_gyre_3layer");
  const double limit = derive(c).truth.cfl_dt_boundary_s;
  c.truth.dt_s = 1.5 * limit;  // over the limit, not twice over
  auto f = assess(c, derive(c));
  EXPECT_TRUE(has_finding(f, Finding::Severity::warning, "truth", "boundary-current CFL"));
  EXPECT_EQ(count(f, Finding::Severity::failure), 0U);
  c.truth.dt_s = 2.5 * limit;
  f = assess(c, derive(c));
  EXPECT_TRUE(has_finding(f, Finding::Severity::failure, "truth", "CFL limit badly"));
}

TEST(Findings, FrictionBoundFails) {
  Case c = load("double_gyre_3layer");
  c.coarse.dt_s = 1.01 * derive(c).coarse.friction_dt_s;
  const auto f = assess(c, derive(c));
  EXPECT_TRUE(has_finding(f, Finding::Severity::failure, "coarse", "AB3 friction"));
}

TEST(Findings, UnresolvedMunkLayerWarns) {
  Case c = load("double_gyre_3layer");
  c.coarse.viscosity_m2_per_s = 2000.0;  // (2000/2e-11)^(1/3) = 46 km < 1.5 x 50 km
  const auto f = assess(c, derive(c));
  EXPECT_TRUE(has_finding(f, Finding::Severity::warning, "coarse", "lateral friction layer"));
}

// ---- the command ----------------------------------------------------------------------------

TEST(CheckCommand, PrintsAndWritesJson) {
  const auto json_path = std::filesystem::temp_directory_path() / "plateau_test_check.json";
  std::filesystem::remove(json_path);
  cli::CheckOptions options;
  options.case_path = kSourceDir / "cases" / "double_gyre_3layer.toml";
  options.json_path = json_path;
  std::ostringstream out;
  std::ostringstream err;
  EXPECT_EQ(cli::run_check(options, {}, out, err), cli::kExitOk);
  for (const char* words : {"Ld1", "Ld2", "Munk width", "Stommel width", "Sverdrup transport",
                            "friction dt limit", "CFL dt limit", "Rossby crossing time", "steps",
                            "estimated wall time", "estimate", "km", "Sv", "result: ok"}) {
    EXPECT_NE(out.str().find(words), std::string::npos) << words;
  }
  std::ifstream in(json_path);
  ASSERT_TRUE(in.good());
  const nlohmann::json j = nlohmann::json::parse(in);
  const DerivedNumbers d = derive(load_case(options.case_path));
  EXPECT_DOUBLE_EQ(j["modes"]["deformation_radii_m"][0].get<double>(), d.deformation_radii_m[0]);
  EXPECT_DOUBLE_EQ(j["grids"]["truth"]["munk_width_m"].get<double>(), d.truth.munk_width_m);
  EXPECT_EQ(j["grids"]["coarse"]["steps"].get<long long>(), d.coarse.steps);
  EXPECT_EQ(j["result"], "ok");
  std::filesystem::remove(json_path);
}

TEST(CheckCommand, QuietPrintsOnlyFindings) {
  cli::CheckOptions options;
  options.case_path = kSourceDir / "cases" / "tiny_2layer.toml";
  cli::GlobalOptions global;
  global.quiet = true;
  std::ostringstream out;
  std::ostringstream err;
  EXPECT_EQ(cli::run_check(options, global, out, err), cli::kExitOk);
  EXPECT_TRUE(out.str().empty());
  EXPECT_NE(err.str().find("plateau: warning: "), std::string::npos);
}

TEST(CheckCommand, BadDtExitsOne) {
  const auto path = std::filesystem::temp_directory_path() / "plateau_test_bad_dt.toml";
  std::ifstream in(kSourceDir / "cases" / "tiny_2layer.toml");
  std::stringstream text;
  text << in.rdbuf();
  std::string s = text.str();
  s.replace(s.find("dt_s = 7200"), 11, "dt_s = 72000");  // coarse: far past the friction bound
  std::ofstream(path) << s;
  cli::CheckOptions options;
  options.case_path = path;
  std::ostringstream out;
  std::ostringstream err;
  EXPECT_EQ(cli::run_check(options, {}, out, err), cli::kExitFailedCheck);
  EXPECT_NE(out.str().find("FAIL [coarse]"), std::string::npos);
  std::filesystem::remove(path);
}

// The closures table of `check` for the demo case: each closure's diffusion number against the
// explicit-diffusion formula K dt (1/dx^2 + 1/dy^2), with K the case's own value (constant) and
// the stability bound 1/4 of forward Euler on the 5-point Laplacian (common practice).
TEST(CheckCommand, ClosureStepNumbersFollowTheDiffusionFormula) {
  const Case c = load("double_gyre_3layer");
  const auto json_path = std::filesystem::temp_directory_path() / "plateau_test_check.json";
  cli::CheckOptions options;
  options.case_path = c.source;
  options.json_path = json_path;
  std::ostringstream out;
  std::ostringstream err;
  ASSERT_EQ(cli::run_check(options, {}, out, err), cli::kExitOk);
  EXPECT_NE(out.str().find("Closures (coarse grid)"), std::string::npos);
  std::ifstream in(json_path);
  const nlohmann::json j = nlohmann::json::parse(in);
  ASSERT_EQ(j["closures"].size(), c.closures.size());
  const double dx = c.lx_m / c.coarse.nx;
  const double dy = c.ly_m / c.coarse.ny;
  const double s = 1.0 / (dx * dx) + 1.0 / (dy * dy);
  bool saw_constant = false;
  for (const auto& e : j["closures"]) {
    ASSERT_TRUE(e["registered"].get<bool>()) << e.dump();
    const double k = e["k_bound_m2_per_s"].get<double>();
    EXPECT_NEAR(e["diffusion_number"].get<double>(), k * c.coarse.dt_s * s, 1e-12 * (1.0 + k));
    if (e["target"] == "full_pv") {
      // The least n with (K dt / n) s <= 1/4.
      const int n = e["substeps"].get<int>();
      EXPECT_LE(k * c.coarse.dt_s / n * s, 0.25 + 1e-12);
      if (n > 1) {
        EXPECT_GT(k * c.coarse.dt_s / (n - 1) * s, 0.25);
      }
    } else {
      EXPECT_EQ(e["substeps"].get<int>(), 1);
    }
    if (e["name"] == "constant") {
      saw_constant = true;
      EXPECT_EQ(k, 500.0);  // cases/double_gyre_3layer.toml [closure.constant] k_m2_per_s
    }
  }
  EXPECT_TRUE(saw_constant);
}

TEST(CheckCommand, BadCaseThrowsCaseError) {
  cli::CheckOptions options;
  options.case_path = kSourceDir / "cases" / "no_such_case.toml";
  std::ostringstream out;
  std::ostringstream err;
  EXPECT_THROW((void)cli::run_check(options, {}, out, err), CaseError);
}

// The built binary, when it is there (the test does not depend on the plateau target): exit
// codes and the error prefix.
int run_binary(const std::string& args, std::string* stderr_text = nullptr) {
  const auto err_path = std::filesystem::temp_directory_path() / "plateau_test_cli_stderr.txt";
  const std::string command = "'" + (kBinaryDir / "plateau").string() + "' " + args +
                              " > /dev/null 2> '" + err_path.string() + "'";
  const int status = std::system(command.c_str());
  if (stderr_text != nullptr) {
    std::ifstream in(err_path);
    std::stringstream s;
    s << in.rdbuf();
    *stderr_text = s.str();
  }
  std::filesystem::remove(err_path);
  return WIFEXITED(status) ? WEXITSTATUS(status) : -1;
}

TEST(CheckBinary, ExitCodes) {
  if (!std::filesystem::exists(kBinaryDir / "plateau")) GTEST_SKIP() << "plateau not built";
  const std::string tiny = "'" + (kSourceDir / "cases" / "tiny_2layer.toml").string() + "'";
  EXPECT_EQ(run_binary("check " + tiny), 0);
  EXPECT_EQ(run_binary("--threads 2 check " + tiny + " --quiet"), 0);
  EXPECT_EQ(run_binary("--help"), 0);
  std::string err;
  EXPECT_EQ(run_binary("check " + tiny + " --no-such-option", &err), 2);
  EXPECT_NE(err.find("plateau: error: "), std::string::npos) << err;
  EXPECT_EQ(run_binary("", &err), 2);  // no command
  EXPECT_EQ(run_binary("--threads 0 check " + tiny, &err), 2);
  EXPECT_EQ(run_binary("check no_such_case.toml", &err), 2);
  EXPECT_NE(err.find("plateau: error: no_such_case.toml"), std::string::npos) << err;
}

}  // namespace
}  // namespace plateau
