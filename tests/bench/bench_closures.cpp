// The closure's fractional step (harness/closure_host/) against one coarse model step, both on
// the double-gyre basin of bench_common with two layers, one OpenMP thread and measured FFTW
// plans (what real runs use). The target (issue 3): each closure's step at most 30% of a model
// step at 64^2 and 128^2.
//
//   BM_ClosureModelStep/n:N           one Model::step without a closure (the reference)
//   BM_ClosureStep/VARIANT/n:N        one ClosureHost::apply: fluxes, divergence, update,
//                                     energy tendency and the closure's prognostic fields
//
// Every built-in family is listed with its defaults, and the full-PV target where it has one;
// a registered closure missing from the list is reported as an error row.

#include <benchmark/benchmark.h>
#include <omp.h>

#include <algorithm>
#include <string>
#include <utility>
#include <vector>

#include "bench_common.hpp"
#include "harness/closure_host/host.hpp"
#include "harness/closure_host/parameters.hpp"
#include "harness/closure_host/registry.hpp"

namespace plateau::bench {
namespace {

struct BenchVariant {
  const char* label;
  const char* closure;
  std::vector<std::pair<std::string, std::string>> sets;
};

const std::vector<BenchVariant>& variants() {
  static const std::vector<BenchVariant> v = {
      {"none", "none", {}},
      {"constant", "constant", {}},
      {"constant_full_pv", "constant", {{"target", "full_pv"}}},
      {"eady", "eady", {}},
      {"eady_full_pv", "eady", {{"target", "full_pv"}}},
      {"eddy_energy", "eddy_energy", {}},
      {"flux_limited", "flux_limited", {}},
      {"flux_limited_full_pv", "flux_limited", {{"target", "full_pv"}}},
      {"flux_limited_eady_energy_u_e",
       "flux_limited",
       {{"base", "eady"}, {"u_e_source", "eddy_energy"}}},
  };
  return v;
}

void BM_ClosureModelStep(benchmark::State& state) {
  omp_set_num_threads(1);
  use_plans(Plans::measured);
  const Grid g = basin_grid(static_cast<int>(state.range(0)));
  Model model(g, basin_params(g, 2));
  ModelState s = spun_up_state(model);
  for (auto _ : state) {
    model.step(s);
    benchmark::DoNotOptimize(s.q.front().data());
  }
  state.counters["per_point"] = ns_per_point(grid_points(static_cast<int>(state.range(0))));
}

void BM_ClosureStep(benchmark::State& state, const BenchVariant& v) {
  omp_set_num_threads(1);
  use_plans(Plans::measured);
  const closure::Info* info = find_registered_closure(v.closure);
  if (info == nullptr) {
    state.SkipWithError("closure not registered (is plateau_lib linked whole-archive?)");
    return;
  }
  const Grid g = basin_grid(static_cast<int>(state.range(0)));
  Model model(g, basin_params(g, 2));
  std::vector<ParamOverride> o;
  for (const auto& [k, val] : v.sets) o.push_back({v.closure, k, val, "bench"});
  ClosureHost host(
      model, make_closure(*info, resolve_params(*info, nullptr, "bench", o), make_setup(model)));
  ModelState s = spun_up_state(model);
  for (auto _ : state) {
    host.apply(s);
    benchmark::DoNotOptimize(s.q.front().data());
  }
  state.counters["per_point"] = ns_per_point(grid_points(static_cast<int>(state.range(0))));
  state.counters["substeps"] = host.max_substeps();
  state.SetLabel(closure_step_numbers(host.closure(), host.setup()).full_pv ? "full PV"
                                                                            : "stretching");
}

void BM_ClosureCoverage(benchmark::State& state) {
  std::string missing;
  for (const closure::Info* i : registered_closures()) {
    const bool listed = std::any_of(variants().begin(), variants().end(),
                                    [&](const BenchVariant& v) { return v.closure == i->name; });
    if (!listed) missing += (missing.empty() ? "" : ", ") + i->name;
  }
  for (auto _ : state) benchmark::DoNotOptimize(missing.data());
  if (!missing.empty()) state.SkipWithError(("not benchmarked: " + missing).c_str());
}

const bool kRegistered = [] {
  benchmark::RegisterBenchmark("BM_ClosureModelStep", BM_ClosureModelStep)
      ->ArgName("n")
      ->Arg(64)
      ->Arg(128)
      ->Unit(benchmark::kMicrosecond)
      ->UseRealTime();
  for (const BenchVariant& v : variants()) {
    benchmark::RegisterBenchmark((std::string("BM_ClosureStep/") + v.label).c_str(),
                                 [&v](benchmark::State& st) { BM_ClosureStep(st, v); })
        ->ArgName("n")
        ->Arg(64)
        ->Arg(128)
        ->Unit(benchmark::kMicrosecond)
        ->UseRealTime();
  }
  benchmark::RegisterBenchmark("BM_ClosureCoverage", BM_ClosureCoverage)->Iterations(1);
  return true;
}();

}  // namespace
}  // namespace plateau::bench
