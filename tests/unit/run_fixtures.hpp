#pragma once
// The small two-layer run the run-loop tests share (test_run.cpp, test_closure_resume.cpp):
// a double-gyre basin at dt = 2 h, a 120-step schedule with a 40-step spin-up, a scratch
// folder per test, and a bit-for-bit comparison of fields.

#include <cstring>
#include <filesystem>
#include <string>

#include "harness/run/run.hpp"

namespace plateau::fixtures {

// Two layers (1000 m over 3000 m, g' = 0.02 m s^-2) under a steady double-gyre wind; with
// `seasonal`, the wind strength swings by 30% over 30 days (a time-dependent forcing).
inline ModelParams two_layer(double dt, bool seasonal = false) {
  ModelParams p;
  p.f0 = 8e-5;
  p.beta = 2e-11;
  p.thickness_m = {1000.0, 3000.0};
  p.reduced_gravity = {0.02};
  p.wind.profile = WindProfile::double_gyre;
  p.wind.tau0 = 0.1;
  if (seasonal) {
    p.wind.seasonal_amplitude = 0.3;
    p.wind.seasonal_period_s = 30.0 * 86400.0;
  }
  p.a2 = 400.0;
  p.bottom_drag = 1e-7;
  p.dt = dt;
  return p;
}

// 120 steps of 2 h: means after step 40, snapshots every 30, series every 10, checkpoints
// every 25 steps.
inline RunSchedule short_schedule() {
  RunSchedule s;
  s.length_s = 120 * 7200.0;
  s.spinup_s = 40 * 7200.0;
  s.snapshot_interval_s = 30 * 7200.0;
  s.series_interval_s = 10 * 7200.0;
  s.checkpoint_interval_s = 25 * 7200.0;
  return s;
}

// An empty folder under the system's temporary directory.
inline std::filesystem::path scratch_dir(const std::string& name) {
  const std::filesystem::path d = std::filesystem::temp_directory_path() / ("plateau-test-" + name);
  std::filesystem::remove_all(d);
  std::filesystem::create_directories(d);
  return d;
}

inline bool same_bits(const Field& a, const Field& b) {
  return a.rows() == b.rows() && a.cols() == b.cols() &&
         std::memcmp(a.data(), b.data(), sizeof(double) * static_cast<std::size_t>(a.size())) == 0;
}

}  // namespace plateau::fixtures
