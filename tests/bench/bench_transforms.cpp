// The sine transforms of one N-layer step alone: 2N calls of SineTransform2D::apply (forward and
// back for each vertical mode) on aligned FftwBuffers, one thread, CPU time, reported like BM_Step
// as nanoseconds per grid point per step so that BM_Step / BM_Transforms is the step's cost in
// units of its transforms.
//
//   BM_Transforms/n:N/layers:L/measured:M   M = 1 measured plans (as real runs), 0 FFTW_ESTIMATE

#include <benchmark/benchmark.h>
#include <omp.h>

#include <cmath>
#include <cstdint>
#include <random>
#include <vector>

#include "bench_common.hpp"
#include "harness/model/sine_transform.hpp"

namespace plateau::bench {
namespace {

void BM_Transforms(benchmark::State& state) {
  const int n = static_cast<int>(state.range(0));
  const int layers = static_cast<int>(state.range(1));
  const Plans plans = state.range(2) != 0 ? Plans::measured : Plans::estimate;
  omp_set_num_threads(1);
  use_plans(plans);
  const SineTransform2D dst(n, n);
  const auto size = static_cast<std::size_t>(dst.mx()) * static_cast<std::size_t>(dst.my());
  std::mt19937 rng(11U);
  std::normal_distribution<double> nd(0.0, 1.0);
  std::vector<FftwBuffer> buffers;
  for (int m = 0; m < layers; ++m) {
    FftwBuffer b(size);
    for (std::size_t p = 0; p < size; ++p) b.data[p] = nd(rng);
    buffers.push_back(std::move(b));
  }
  // Forward and back multiplies by the normalisation (up to 1e6): bring the data back to
  // order one every few iterations, outside the timing, so it never overflows.
  constexpr std::int64_t kRescaleEvery = 16;
  const double rescale = std::pow(1.0 / dst.normalisation(), static_cast<double>(kRescaleEvery));
  std::int64_t count = 0;
  for (auto _ : state) {
    for (auto& b : buffers) {
      dst.apply(b.data);
      dst.apply(b.data);
    }
    benchmark::ClobberMemory();
    if (++count % kRescaleEvery == 0) {
      state.PauseTiming();
      for (auto& b : buffers) {
        for (std::size_t p = 0; p < size; ++p) b.data[p] *= rescale;
      }
      state.ResumeTiming();
    }
  }
  for (const auto& b : buffers) {
    for (std::size_t p = 0; p < size; ++p) {
      if (!std::isfinite(b.data[p])) {
        state.SkipWithError("transform data overflowed");
        return;
      }
    }
  }
  state.counters["per_point"] = ns_per_point(grid_points(n));
  state.counters["points"] = grid_points(n);
  state.counters["applies"] = 2.0 * layers;
  state.SetLabel(plans == Plans::measured ? "measured plans" : "estimated plans");
}

void transform_args(benchmark::internal::Benchmark* b) {
  b->ArgNames({"n", "layers", "measured"});
  for (const int measured : {1, 0}) {
    for (const int layers : {2, 3}) {
      for (const int n : {64, 128, 256, 512}) b->Args({n, layers, measured});
    }
  }
}

BENCHMARK(BM_Transforms)->Apply(transform_args)->Unit(benchmark::kMicrosecond);

}  // namespace
}  // namespace plateau::bench
