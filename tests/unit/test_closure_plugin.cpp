// External closures (closures/plugin_abi.h): the sample plug-in of tests/plugins/ (plain C,
// built as a MODULE library) loads, registers, passes the closure properties, gives the same
// bits as the built-in closure of the same formula, and runs through the harness and the
// command line; broken plug-ins (another interface version, no entry point, a taken name, not a
// library) are refused with a message that says which. The end-to-end part also runs every
// built-in family on cases/tiny_2layer.toml and checks that its K map reaches the NetCDF file.

#include <sys/wait.h>

#include <gtest/gtest.h>

#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <iostream>
#include <string>

#include "harness/closure_host/plugin.hpp"
#include "harness/run/run.hpp"
#include "tests/unit/test_closure_checks.hpp"

namespace plateau::testing_closures {
namespace {

namespace fs = std::filesystem;

const char* const kSample = PLATEAU_SAMPLE_PLUGIN;

std::string refusal(const char* file) {
  try {
    (void)load_closure_plugin(file);
  } catch (const CaseError& e) {
    std::cout << "  message: " << e.what() << '\n';
    return e.what();
  }
  return "";
}

TEST(Plugin, SampleLoadsWithItsDeclaredParameters) {
  const std::string name = load_closure_plugin(kSample);
  EXPECT_EQ(name, "sample_constant_pv");
  EXPECT_EQ(load_closure_plugin(kSample), name);  // a second load is the same closure
  const closure::Info* info = find_registered_closure(name);
  ASSERT_NE(info, nullptr);
  EXPECT_NE(closure_origin(name).find("plug-in"), std::string::npos);
  ASSERT_EQ(info->params.size(), 2U);
  EXPECT_EQ(info->params[0].name, "k_m2_per_s");
  EXPECT_EQ(info->params[0].unit, "m2 s-1");
  EXPECT_EQ(info->params[0].default_value, 800.0);
  EXPECT_TRUE(info->params[0].is_tunable);
  EXPECT_TRUE(info->params[0].is_log_scale);
  EXPECT_EQ(describe_range(info->params[1]), "[0, 5000]");
}

TEST(Plugin, GivesTheSameBitsAsTheBuiltInClosureOfTheSameFormula) {
  (void)load_closure_plugin(kSample);
  Model m(bay_grid(32), bay_params(2));
  ClosureHost plugin(m, make_variant({"sample_constant_pv", {{"k_m2_per_s", "3000"}}, ""}, m));
  ClosureHost builtin(
      m, make_variant({"constant", {{"k_m2_per_s", "3000"}, {"target", "full_pv"}}, ""}, m));
  EXPECT_EQ(plugin.closure().wall_taper_width_m(), builtin.closure().wall_taper_width_m());
  ModelState a = m.state_from_psi(random_psi(m.grid(), 2, 6U));
  ModelState b = a;
  for (int step = 0; step < 4; ++step) {
    plugin.apply(a);
    builtin.apply(b);
  }
  for (int k = 0; k < 2; ++k) EXPECT_TRUE(same_bits(a.q[uz(k)], b.q[uz(k)])) << k;
  EXPECT_EQ(plugin.last_energy_tendency(), builtin.last_energy_tendency());
  std::cout << "  4 steps: q identical in both layers; energy tendency "
            << plugin.last_energy_tendency() << " m^5 s^-3 both\n";
}

TEST(Plugin, PassesTheClosurePropertiesAndRunsThroughTheRunLoop) {
  (void)load_closure_plugin(kSample);
  Model m(bay_grid(24), bay_params(2));
  ClosureHost host(m, make_variant({"sample_constant_pv", {}, ""}, m));
  // Conservation of the interior sum of q dx dy, down-gradient flux, rest state.
  ModelState s = m.state_from_psi(random_psi(m.grid(), 2, 7U));
  const auto& setup = host.setup();
  const Fluxes f = evaluate(host.closure(), setup, view_of(setup, s, {}), setup.dt_s);
  for (int k = 0; k < 2; ++k) {
    double mag = 0.0;
    EXPECT_LE(flux_dot_gradient(setup, f, s.q[uz(k)], k, &mag), 1e-13 * mag);
  }
  host.apply(s);
  for (int k = 0; k < 2; ++k) {
    const Field& t = host.last_tendency()[uz(k)];
    EXPECT_LE(std::abs(interior_integral(m.grid(), t)),
              1e-12 * interior_integral(m.grid(), t.abs()));
  }
  ModelState rest = m.rest_state();
  host.apply(rest);
  const double w = host.closure().wall_taper_width_m();
  for (int j = 1; j < setup.ny; ++j) {
    const double d = std::min(setup.y(j), setup.ly() - setup.y(j));
    if (d < w + setup.dy) continue;
    for (int i = 1; i < setup.nx; ++i) {
      // Zero up to the rounding of beta (y_{j+1} - y_j) (scale K beta / dy).
      EXPECT_LE(std::abs(host.last_tendency()[0](i, j)), 1e-12 * 800.0 * setup.beta / setup.dy);
    }
  }
  // A short run with the plug-in as the run loop's hook.
  Model run_model_(bay_grid(16), bay_params(2));
  ClosureHost hook(run_model_, make_variant({"sample_constant_pv", {}, ""}, run_model_));
  RunSchedule sched;
  sched.length_s = 60 * 7200.0;
  sched.spinup_s = 20 * 7200.0;
  RunOptions opt;
  opt.hook = &hook;
  const RunRecord r = run_model(run_model_, sched, opt);
  std::cout << "  60 steps with the plug-in: closure energy over the window " << r.closure_integral
            << " m^5 s^-2, budget residual " << r.budget_residual() << " m^5 s^-2\n";
  EXPECT_EQ(r.steps, 60);
  EXPECT_TRUE(r.final_state.q[0].allFinite());
  EXPECT_LT(r.closure_integral, 0.0);  // diffusion takes energy from the flow
}

TEST(Plugin, BrokenPluginsAreRefusedWithTheReason) {
  EXPECT_NE(refusal(PLATEAU_WRONG_VERSION_PLUGIN).find("interface version 42"), std::string::npos);
  EXPECT_NE(refusal(PLATEAU_NO_ENTRY_PLUGIN).find("no entry point plateau_closure_entry"),
            std::string::npos);
  EXPECT_NE(refusal(PLATEAU_NAME_CLASH_PLUGIN).find("'constant' is already taken"),
            std::string::npos);
  const std::string source = std::string(PLATEAU_SOURCE_DIR) + "/tests/plugins/sample_closure.c";
  EXPECT_NE(refusal(source.c_str()).find("cannot be loaded"), std::string::npos);
  EXPECT_NE(refusal("/nonexistent/libnothing.so").find("cannot be read"), std::string::npos);
}

// ---- the command line ------------------------------------------------------------------------

struct Ran {
  int code = -1;
  std::string output;
};

Ran shell(const std::string& command) {
  Ran r;
  FILE* pipe = popen((command + " 2>&1").c_str(), "r");
  if (pipe == nullptr) return r;
  char buf[4096];
  std::size_t n = 0;
  while ((n = std::fread(buf, 1, sizeof buf, pipe)) > 0) r.output.append(buf, n);
  const int status = pclose(pipe);
  r.code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  return r;
}

const std::string kExe = PLATEAU_EXECUTABLE;
const std::string kCase = std::string(PLATEAU_SOURCE_DIR) + "/cases/tiny_2layer.toml";

fs::path out_dir(const std::string& name) {
  const fs::path d = fs::temp_directory_path() / ("plateau-test-closure-cli-" + name);
  fs::remove_all(d);
  return d;
}

TEST(PluginCli, RunsThePluginAndWritesItsDiagnosticsIntoTheNetcdf) {
  const fs::path out = out_dir("plugin");
  const Ran r = shell(kExe + " -q run " + kCase + " --plugin " + kSample +
                      " -c sample_constant_pv --set closure.k_m2_per_s=1500 --out " + out.string());
  std::cout << r.output;
  ASSERT_EQ(r.code, 0);
  const Ran h = shell("ncdump -h " + (out / "run-sample_constant_pv.nc").string());
  EXPECT_NE(h.output.find("sample_k(layer, y, x)"), std::string::npos) << h.output;
  EXPECT_NE(h.output.find("closure_pv_tendency(layer, y, x)"), std::string::npos);
  EXPECT_NE(h.output.find("k_m2_per_s=1500"), std::string::npos);  // in the history
  const Ran list = shell(kExe + " closures --json --plugin " + kSample);
  ASSERT_EQ(list.code, 0);
  EXPECT_NE(list.output.find("\"name\": \"sample_constant_pv\""), std::string::npos);
  const Ran bad = shell(kExe + " -q run " + kCase + " --plugin " + PLATEAU_WRONG_VERSION_PLUGIN +
                        " -c sample_constant_pv --out " + out.string());
  std::cout << bad.output;
  EXPECT_EQ(bad.code, 2);
  EXPECT_NE(bad.output.find("interface version"), std::string::npos);
}

TEST(PluginCli, EveryBuiltInFamilyRunsOnTheTinyCaseAndWritesItsKMap) {
  for (const char* family : {"none", "constant", "eady", "eddy_energy", "flux_limited"}) {
    const fs::path out = out_dir(family);
    const Ran r = shell(kExe + " -q run " + kCase + " -c " + family + " --out " + out.string());
    EXPECT_EQ(r.code, 0) << family << ": " << r.output;
    const Ran h = shell("ncdump -h " + (out / (std::string("run-") + family + ".nc")).string());
    if (std::string(family) != "none") {
      EXPECT_NE(h.output.find("closure_k("), std::string::npos) << family;
    }
    EXPECT_NE(h.output.find("closure_pv_tendency("), std::string::npos) << family;
    std::cout << "  " << family << ": exit " << r.code << '\n';
  }
}

TEST(PluginCli, BadParametersExitWithCodeTwoAndThePosition) {
  const Ran unknown = shell(kExe + " -q run " + kCase + " -c eady --set eady.alfa=1 --out " +
                            out_dir("bad").string());
  EXPECT_EQ(unknown.code, 2);
  EXPECT_NE(unknown.output.find("did you mean 'alpha'"), std::string::npos) << unknown.output;
  const Ran missing =
      shell(kExe + " -q run " + kCase + " -c nosuch --out " + out_dir("bad").string());
  EXPECT_EQ(missing.code, 2);
  EXPECT_NE(missing.output.find("known; allowed: constant, eady"), std::string::npos)
      << missing.output;
}

}  // namespace
}  // namespace plateau::testing_closures
