// One full Model::step of the double-gyre basin (tendency, Adams-Bashforth update, inversion,
// vorticity and wall q), reported as nanoseconds per grid point per step.
//
//   BM_Step/n:N/layers:L/measured:M        one OpenMP thread, CPU time (robust on a shared
//                                          machine); M = 1 measured FFTW plans (what real runs
//                                          use), M = 0 FFTW_ESTIMATE
//   BM_StepThreads/n:N/layers:L/threads:T  measured plans, T OpenMP threads, wall-clock time
//
// Every repetition starts again from the same state (a smooth random streamfunction stepped
// three times), so the numbers are of a realistic, non-zero flow.

#include <benchmark/benchmark.h>
#include <omp.h>

#include "bench_common.hpp"

namespace plateau::bench {
namespace {

void run_steps(benchmark::State& state, int n, int layers, Plans plans, int threads) {
  omp_set_num_threads(threads);
  use_plans(plans);
  const Grid g = basin_grid(n);
  Model model(g, basin_params(g, layers));
  ModelState s = spun_up_state(model);
  for (auto _ : state) {
    model.step(s);
    benchmark::DoNotOptimize(s.psi.front().data());
    benchmark::ClobberMemory();
  }
  if (!finite(s)) {
    state.SkipWithError("the state is no longer finite");
    return;
  }
  state.counters["per_point"] = ns_per_point(grid_points(n));
  state.counters["points"] = grid_points(n);
  state.SetLabel(plans == Plans::measured ? "measured plans" : "estimated plans");
}

void BM_Step(benchmark::State& state) {
  run_steps(state, static_cast<int>(state.range(0)), static_cast<int>(state.range(1)),
            state.range(2) != 0 ? Plans::measured : Plans::estimate, 1);
}

void BM_StepThreads(benchmark::State& state) {
  run_steps(state, static_cast<int>(state.range(0)), static_cast<int>(state.range(1)),
            Plans::measured, static_cast<int>(state.range(2)));
}

void step_args(benchmark::internal::Benchmark* b) {
  b->ArgNames({"n", "layers", "measured"});
  for (const int measured : {1, 0}) {
    for (const int layers : {2, 3}) {
      for (const int n : {64, 128, 256, 512}) b->Args({n, layers, measured});
    }
  }
}

void thread_args(benchmark::internal::Benchmark* b) {
  b->ArgNames({"n", "layers", "threads"});
  for (const int layers : {2, 3}) {
    for (const int n : {256, 512}) {
      for (const int threads : {1, 2}) b->Args({n, layers, threads});
    }
  }
}

BENCHMARK(BM_Step)->Apply(step_args)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_StepThreads)->Apply(thread_args)->Unit(benchmark::kMicrosecond)->UseRealTime();

}  // namespace
}  // namespace plateau::bench
