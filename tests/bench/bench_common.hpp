#pragma once
// Shared set-up of the model benchmarks: the double-gyre basin at a given resolution and layer
// count, a realistic (non-zero, smooth) starting state, the FFTW planning mode, and the counter
// that reports nanoseconds per grid point per step.

#include <benchmark/benchmark.h>

#include <filesystem>
#include <vector>

#include "harness/model/model.hpp"

namespace plateau::bench {

// Basin side, m: 2048 km, so dx = 32 km at 64^2 and 4 km at 512^2.
inline constexpr double kBasinSide = 2.048e6;

enum class Plans : int { estimate = 0, measured = 1 };

// Plans made from here on: measured (FFTW_MEASURE, remembered in the benchmark's wisdom file,
// what real runs use) or estimated (FFTW_ESTIMATE, forgetting any measured wisdom first, since
// FFTW would otherwise reuse it for an estimated plan).
void use_plans(Plans plans);
// The wisdom file of the measured plans: $PLATEAU_BENCH_WISDOM, else
// $XDG_CACHE_HOME/plateau/fftw-wisdom-bench, else /tmp/plateau-bench/fftw-wisdom.
std::filesystem::path bench_wisdom_file();

Grid basin_grid(int n);
// f0 8e-5, beta 2e-11; 2 layers H 1000/3000 m, g' 0.02; 3 layers H 600/1000/2400 m,
// g' 0.025/0.0125; A2 = 200 m^2/s at dx = 8 km scaled with dx; r = 1e-7 s^-1; double-gyre wind
// tau0 = 0.1 N/m^2; free slip; Arakawa advection; dt = 1800 s.
ModelParams basin_params(const Grid& g, int layers);
// A smooth random streamfunction (a few low sine modes per layer, speeds of order 0.1 m/s),
// turned into a state and stepped three times so the Adams-Bashforth memory is full.
ModelState spun_up_state(Model& model, unsigned seed = 7U);

// Grid points of an n x n basin: (n + 1)^2.
double grid_points(int n);
// Counter whose report is the time per grid point per iteration in seconds (shown as ns on the
// console), given the grid points one iteration covers: a rate over the benchmark's time (CPU
// time, or real time with UseRealTime), inverted.
benchmark::Counter ns_per_point(double points_per_iteration);

// True if every q and psi of the state is finite.
bool finite(const ModelState& s);

}  // namespace plateau::bench
