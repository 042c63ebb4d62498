// plateau_bench: Google Benchmark's main (benchmark::benchmark carries no main of its own).
// scripts/bench-report runs it and tabulates the medians.

#include <benchmark/benchmark.h>

BENCHMARK_MAIN();
