// A closure with prognostic fields survives a checkpoint: a run with the eddy-energy closure
// that is stopped and resumed ends bit for bit identical to an uninterrupted one, its eddy
// energy and time means included (restarts reproduce bit for bit: common practice in ocean
// modelling, ARCHITECTURE.md "reproducibility"). A checkpoint written with another closure's
// fields is refused with a message that names the file.

#include <gtest/gtest.h>

#include <cstring>
#include <filesystem>
#include <string>
#include <vector>

#include "harness/closure_host/host.hpp"
#include "harness/closure_host/parameters.hpp"
#include "harness/closure_host/registry.hpp"
#include "harness/io/error.hpp"
#include "harness/run/run.hpp"
#include "tests/unit/run_fixtures.hpp"

namespace plateau {
namespace {

namespace fs = std::filesystem;

using fixtures::same_bits;
using fixtures::two_layer;

RunSchedule schedule() { return fixtures::short_schedule(); }

HostOptions host_options() {
  HostOptions o;
  o.means_after_step = 40;
  o.means_every = 10;
  return o;
}

std::unique_ptr<closure::Closure> closure_named(const std::string& name, const Model& m) {
  const closure::Info* info = find_registered_closure(name);
  EXPECT_NE(info, nullptr) << name;
  // A large initial eddy energy, so that K is well above its floor from the first step and the
  // energy field changes visibly over the run.
  std::vector<ParamOverride> sets;
  if (name == "eddy_energy") sets.push_back({name, "e0_m3_per_s2", "50", "test"});
  return make_closure(*info, resolve_params(*info, nullptr, "test", sets), make_setup(m));
}

fs::path scratch(const std::string& name) {
  return fixtures::scratch_dir("closure-resume-" + name);
}

TEST(ClosureResume, EddyEnergyRunResumesBitForBit) {
  const Grid g(24, 24, 8e5, 8e5);
  Model straight_model(g, two_layer(7200.0));
  ClosureHost straight(straight_model, closure_named("eddy_energy", straight_model),
                       host_options());
  const std::vector<Field> initial(straight.prognostic().begin(), straight.prognostic().end());
  RunOptions plain;
  plain.hook = &straight;
  const RunRecord whole = run_model(straight_model, schedule(), plain);
  ASSERT_FALSE(straight.prognostic().empty());
  // The eddy energy must really have evolved, or the test would prove nothing.
  EXPECT_FALSE(same_bits(straight.prognostic()[0], initial[0]));

  const fs::path dir = scratch("eddy-energy");
  RunOptions opt;
  opt.checkpoint = dir / "ckpt.bin";
  opt.checkpoint_key = "closure-resume-test";
  opt.stop_after_step = 57;  // inside the averaging window, not a checkpoint multiple
  {
    Model m(g, two_layer(7200.0));
    ClosureHost h(m, closure_named("eddy_energy", m), host_options());
    opt.hook = &h;
    EXPECT_THROW(run_model(m, schedule(), opt), RunInterrupted);
  }
  Model m(g, two_layer(7200.0));
  ClosureHost resumed_host(m, closure_named("eddy_energy", m), host_options());
  opt.hook = &resumed_host;
  opt.stop_after_step = -1;
  opt.resume = true;
  const RunRecord resumed = run_model(m, schedule(), opt);

  ASSERT_EQ(resumed.steps, whole.steps);
  for (std::size_t k = 0; k < 2; ++k) {
    EXPECT_TRUE(same_bits(resumed.final_state.q[k], whole.final_state.q[k])) << k;
    EXPECT_TRUE(same_bits(resumed.mean_q[k], whole.mean_q[k])) << k;
  }
  ASSERT_EQ(resumed_host.prognostic().size(), straight.prognostic().size());
  for (std::size_t f = 0; f < straight.prognostic().size(); ++f) {
    EXPECT_TRUE(same_bits(resumed_host.prognostic()[f], straight.prognostic()[f])) << f;
  }
  EXPECT_EQ(resumed_host.mean_count(), straight.mean_count());
  EXPECT_EQ(resumed_host.max_substeps(), straight.max_substeps());
  const std::vector<ClosureMeanField> a = resumed_host.mean_fields();
  const std::vector<ClosureMeanField> b = straight.mean_fields();
  ASSERT_EQ(a.size(), b.size());
  for (std::size_t f = 0; f < a.size(); ++f) {
    ASSERT_EQ(a[f].values.size(), b[f].values.size()) << b[f].info.name;
    for (std::size_t c = 0; c < b[f].values.size(); ++c) {
      EXPECT_TRUE(same_bits(a[f].values[c], b[f].values[c])) << b[f].info.name << " " << c;
    }
  }
  const double r1 = resumed.budget_residual();
  const double r2 = whole.budget_residual();
  EXPECT_EQ(std::memcmp(&r1, &r2, sizeof(double)), 0);
}

TEST(ClosureResume, CheckpointOfAnotherClosureIsRefused) {
  const Grid g(16, 16, 8e5, 8e5);
  const fs::path dir = scratch("other");
  RunOptions opt;
  opt.checkpoint = dir / "ckpt.bin";
  opt.checkpoint_key = "same-key-on-purpose";
  opt.stop_after_step = 30;
  {
    Model m(g, two_layer(7200.0));
    ClosureHost h(m, closure_named("eddy_energy", m), host_options());
    opt.hook = &h;
    EXPECT_THROW(run_model(m, schedule(), opt), RunInterrupted);
  }
  Model m(g, two_layer(7200.0));
  ClosureHost other(m, closure_named("constant", m), host_options());
  opt.hook = &other;
  opt.stop_after_step = -1;
  opt.resume = true;
  try {
    (void)run_model(m, schedule(), opt);
    ADD_FAILURE() << "a checkpoint of another closure was accepted";
  } catch (const io::IoError& e) {
    EXPECT_NE(std::string(e.what()).find(opt.checkpoint.string()), std::string::npos) << e.what();
  }
}

}  // namespace
}  // namespace plateau
