// The run loop: restart bit for bit, stop on a CFL breach with the last good checkpoint kept,
// and NetCDF output that an independent reader (ncdump from Debian's netcdf-bin) opens with the
// dimensions, units and Conventions attribute that the CF conventions ask for.

#include <gtest/gtest.h>

#include <array>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <iostream>
#include <string>

#include "harness/io/checkpoint.hpp"
#include "harness/run/run.hpp"
#include "harness/run/run_output.hpp"
#include "tests/unit/run_fixtures.hpp"

namespace plateau {
namespace {

namespace fs = std::filesystem;

using fixtures::same_bits;
using fixtures::short_schedule;

ModelParams two_layer(double dt) { return fixtures::two_layer(dt, true); }

fs::path scratch(const std::string& name) { return fixtures::scratch_dir("run-" + name); }

TEST(Run, ResumeIsBitForBitIdenticalToAnUninterruptedRun) {
  const Grid g(24, 24, 8e5, 8e5);
  const fs::path dir = scratch("resume");
  Model straight(g, two_layer(7200.0));
  const RunRecord whole = run_model(straight, short_schedule(), {});

  RunOptions opt;
  opt.checkpoint = dir / "ckpt.bin";
  opt.checkpoint_key = "resume-test";
  opt.stop_after_step = 57;  // not a checkpoint multiple: the stop writes its own
  Model first(g, two_layer(7200.0));
  EXPECT_THROW(run_model(first, short_schedule(), opt), RunInterrupted);
  opt.stop_after_step = -1;
  opt.resume = true;
  Model second(g, two_layer(7200.0));
  const RunRecord resumed = run_model(second, short_schedule(), opt);

  ASSERT_EQ(resumed.steps, whole.steps);
  ASSERT_EQ(resumed.mean_count, whole.mean_count);
  for (int k = 0; k < 2; ++k) {
    const auto uk = static_cast<std::size_t>(k);
    EXPECT_TRUE(same_bits(resumed.final_state.q[uk], whole.final_state.q[uk])) << k;
    EXPECT_TRUE(same_bits(resumed.mean_psi[uk], whole.mean_psi[uk])) << k;
    EXPECT_TRUE(same_bits(resumed.mean_q[uk], whole.mean_q[uk])) << k;
  }
  ASSERT_EQ(resumed.series.size(), whole.series.size());
  for (std::size_t m = 0; m < whole.series.size(); ++m) {
    EXPECT_EQ(std::memcmp(&resumed.series[m].total, &whole.series[m].total, sizeof(double)), 0);
  }
  EXPECT_EQ(resumed.snapshot_t, whole.snapshot_t);
  const double r1 = resumed.budget_residual();
  const double r2 = whole.budget_residual();
  EXPECT_EQ(std::memcmp(&r1, &r2, sizeof(double)), 0);
}

TEST(Run, CflBreachStopsWithStepLayerPointAndKeepsTheLastCheckpoint) {
  const Grid g(24, 24, 8e5, 8e5);
  const fs::path dir = scratch("cfl");
  RunSchedule s = short_schedule();
  s.cfl_limit = 2e-3;  // reached after some days of wind spin-up from rest
  s.checkpoint_interval_s = 7200.0;
  RunOptions opt;
  opt.checkpoint = dir / "ckpt.bin";
  opt.checkpoint_key = "cfl-test";
  Model m(g, two_layer(7200.0));
  std::string failure_message;
  try {
    run_model(m, s, opt);
    FAIL() << "expected a numerical failure";
  } catch (const NumericalFailure& e) {
    const std::string msg = e.what();
    std::cout << "  message: " << msg << "\n";
    failure_message = msg;
    EXPECT_NE(msg.find("step"), std::string::npos) << msg;
    EXPECT_NE(msg.find("CFL number"), std::string::npos) << msg;
    EXPECT_NE(msg.find("layer"), std::string::npos) << msg;
    EXPECT_NE(msg.find("grid point (i="), std::string::npos) << msg;
    EXPECT_NE(msg.find("days"), std::string::npos) << msg;
  }
  // The checkpoint on disk is the last good state: the step before the one that broke.
  ASSERT_TRUE(fs::exists(opt.checkpoint));
  const io::CheckpointReader ck(opt.checkpoint, opt.checkpoint_key);
  const std::int64_t good = ck.get_int("step");
  EXPECT_GT(good, 0);
  EXPECT_NE(failure_message.find("step " + std::to_string(good + 1) + ","), std::string::npos)
      << failure_message;
}

TEST(Run, NetcdfOutputOpensInNcdumpWithCfAttributes) {
  const Grid g(16, 12, 8e5, 6e5);
  const fs::path dir = scratch("netcdf");
  Model m(g, two_layer(7200.0));
  const RunRecord r = run_model(m, short_schedule(), {});
  const fs::path out = dir / "run-none.nc";
  write_run_netcdf(r, m, out, {"plateau test run", "test_run", "plateau test"});
  ASSERT_TRUE(fs::exists(out));
  const std::string cmd = "ncdump -h " + out.string();
  FILE* pipe = popen(cmd.c_str(), "r");
  ASSERT_NE(pipe, nullptr);
  std::string text;
  std::array<char, 4096> buf{};
  while (fgets(buf.data(), static_cast<int>(buf.size()), pipe) != nullptr) text += buf.data();
  ASSERT_EQ(pclose(pipe), 0) << text;
  // CF conventions 1.8, sections 2.6.1 (Conventions), 3.1 (units), 4 (coordinates).
  EXPECT_NE(text.find(":Conventions = \"CF-1.8\""), std::string::npos) << text;
  EXPECT_NE(text.find("x = 17"), std::string::npos) << text;
  EXPECT_NE(text.find("y = 13"), std::string::npos) << text;
  EXPECT_NE(text.find("layer = 2"), std::string::npos) << text;
  EXPECT_NE(text.find("time = UNLIMITED"), std::string::npos) << text;
  EXPECT_NE(text.find("double psi(layer, y, x)"), std::string::npos) << text;
  EXPECT_NE(text.find("psi:units = \"m2 s-1\""), std::string::npos) << text;
  EXPECT_NE(text.find("q:units = \"s-1\""), std::string::npos) << text;
  EXPECT_NE(text.find("ocean_barotropic_streamfunction"), std::string::npos) << text;
  EXPECT_NE(text.find("barotropic_streamfunction:units = \"m3 s-1\""), std::string::npos) << text;
}

}  // namespace
}  // namespace plateau
