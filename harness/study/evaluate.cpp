#include "harness/study/evaluate.hpp"

#include <chrono>
#include <cmath>
#include <string_view>

#include "harness/closure_host/parameters.hpp"
#include "harness/closure_host/registry.hpp"
#include "harness/coarse/coarse_grain.hpp"
#include "harness/io/hash.hpp"
#include "harness/score/from_run.hpp"
#include "harness/score/score.hpp"
#include "harness/truth/eddy_stats.hpp"
#include "plateau/version.hpp"

namespace plateau {
namespace {

namespace fs = std::filesystem;

std::size_t uz(int k) { return static_cast<std::size_t>(k); }

// NetCDF names the run output already uses; a closure field of the same name gets a prefix.
bool reserved_name(const std::string& n) {
  constexpr std::string_view kNames =
      " x y layer interface time series_time layer_thickness reduced_gravity psi q psi_wall"
      " barotropic_streamfunction psi_snapshot q_snapshot series_t kinetic_energy"
      " potential_energy total_energy wind_work bottom_drag_work lateral_friction_work"
      " advection_work closure_work ";
  return kNames.find(" " + n + " ") != std::string_view::npos;
}

// Node-centred closure flux (mean of the two faces beside each interior node).
void node_fluxes(const Grid& g, const closure::Fluxes& f, int k, Field& fx, Field& fy) {
  fx = g.zeros();
  fy = g.zeros();
  const Field& ax = f.fx[uz(k)];
  const Field& ay = f.fy[uz(k)];
  for (int j = 1; j < g.ny; ++j) {
    for (int i = 1; i < g.nx; ++i) {
      fx(i, j) = 0.5 * (ax(i - 1, j) + ax(i, j));
      fy(i, j) = 0.5 * (ay(i, j - 1) + ay(i, j));
    }
  }
}

// The closure's PV tendency and node fluxes at the coarse states `psis`, averaged.
void closure_apriori(const Model& coarse, const ClosureHost& host,
                     const std::vector<std::vector<Field>>& psis, AprioriFields& a) {
  const Grid& g = coarse.grid();
  const int n = coarse.n_layers();
  const closure::Setup& setup = host.setup();
  a.closure_tendency.assign(uz(n), g.zeros());
  a.closure_fx.assign(uz(n), g.zeros());
  a.closure_fy.assign(uz(n), g.zeros());
  closure::Scratch scratch;
  std::vector<Field> tend;
  Field fx;
  Field fy;
  for (const std::vector<Field>& psi : psis) {
    const ModelState s = coarse.state_from_psi(psi);
    closure::Fluxes f = closure::Fluxes::zeros(setup);
    host.closure().fluxes(host.view(s), coarse.params().dt, f, scratch);
    zero_wall_faces(setup, f);
    flux_divergence(setup, f, tend);
    for (int k = 0; k < n; ++k) {
      a.closure_tendency[uz(k)] += tend[uz(k)];
      node_fluxes(g, f, k, fx, fy);
      a.closure_fx[uz(k)] += fx;
      a.closure_fy[uz(k)] += fy;
    }
  }
  const double inv = psis.empty() ? 0.0 : 1.0 / static_cast<double>(psis.size());
  for (int k = 0; k < n; ++k) {
    a.closure_tendency[uz(k)] *= inv;
    a.closure_fx[uz(k)] *= inv;
    a.closure_fy[uz(k)] *= inv;
  }
}

AprioriFields apriori_fields(const Case& c, const Model& coarse, const TruthData& truth,
                             const ClosureHost& host) {
  const std::vector<double> ld = coarse.layers().deformation_radii();
  AprioriFields a;
  a.target = resolve_apriori_target(c.scoring.apriori_target, coarse.grid().dx,
                                    ld.empty() ? 0.0 : ld.front());
  const EddyStatistics& e = truth.eddy;
  const bool transient = a.target == AprioriTarget::transient_subfilter;
  const std::vector<Field>& forcing = transient ? e.forcing_transient : e.forcing_subfilter;
  for (const Field& f : forcing) a.truth_tendency.emplace_back(-f);
  a.truth_fx = transient ? e.flux_x_transient : e.flux_x_subfilter;
  a.truth_fy = transient ? e.flux_y_transient : e.flux_y_subfilter;
  std::vector<std::vector<Field>> states;
  if (transient) {
    states.push_back(truth.record.mean_psi);
  } else {
    for (std::size_t m = 0; m < e.snapshot_t.size(); ++m) {
      if (e.snapshot_t[m] > truth.record.mean_start_s) states.push_back(e.snapshot_psi[m]);
    }
    if (states.empty()) states.push_back(truth.record.mean_psi);
  }
  closure_apriori(coarse, host, states, a);
  return a;
}

std::vector<BudgetFields> truth_budget(const TruthData& t) {
  std::vector<BudgetFields> out;
  for (std::size_t k = 0; k < t.eddy.forcing_transient.size(); ++k) {
    out.push_back(
        {t.eddy.forcing_transient[k], t.eddy.wind_forcing[k], t.friction[k], t.eddy.storage[k]});
  }
  return out;
}

std::vector<BudgetFields> candidate_budget(const Model& coarse, const RunRecord& rec,
                                           const EddyStatistics& e, const ClosureHost& host) {
  const int n = coarse.n_layers();
  std::vector<Field> closure_tendency(uz(n), coarse.grid().zeros());
  for (const ClosureMeanField& m : host.mean_fields()) {
    if (m.info.name == "closure_pv_tendency" && m.values.size() == uz(n)) {
      closure_tendency = m.values;
    }
  }
  const std::vector<Field> friction = friction_tendency(coarse, rec.mean_psi);
  std::vector<BudgetFields> out;
  out.reserve(uz(n));
  for (int k = 0; k < n; ++k) {
    // div F_eddy = what the run resolves of the transient flux + the closure's flux divergence
    // (its tendency is -div F).
    out.push_back({e.forcing_transient[uz(k)] - closure_tendency[uz(k)], e.wind_forcing[uz(k)],
                   friction[uz(k)], e.storage[uz(k)]});
  }
  return out;
}

}  // namespace

Candidate make_candidate(const Case& c, const std::string& name,
                         const std::vector<std::string>& sets) {
  const closure::Info* info = find_registered_closure(name);
  if (info == nullptr) {
    throw CaseError("closure '" + name + "' is not known; allowed: " + registered_closure_names() +
                    " (or an external closure loaded with --plugin FILE)");
  }
  std::vector<ParamOverride> overrides;
  for (const std::string& text : sets) {
    ParamOverride o = parse_override(text);
    if (o.closure == name || o.closure == "closure") overrides.push_back(std::move(o));
  }
  Candidate k;
  k.info = info;
  k.params = resolve_params(*info, c.find_closure(name), c.source, overrides);
  k.label = name;
  return k;
}

std::vector<ExtraField> closure_output(const ClosureHost& host, const Model& model) {
  std::vector<ExtraField> out;
  const double depth = host.setup().total_depth();
  for (const ClosureMeanField& m : host.mean_fields()) {
    ExtraField e;
    e.name = reserved_name(m.info.name) ? "closure_" + m.info.name : m.info.name;
    e.units = m.info.units;
    e.long_name = "time-mean " + m.info.long_name;
    switch (m.info.placement) {
      case closure::Placement::layer:
        e.per_layer = m.values;
        break;
      case closure::Placement::interface:
        if (model.n_layers() < 2) continue;
        e.per_layer = m.values;
        e.on_interfaces = true;
        break;
      case closure::Placement::column:
        for (int k = 0; k < model.n_layers(); ++k) {
          e.per_layer.emplace_back(m.values.front() * (host.setup().h(k) / depth));
        }
        e.long_name +=
            " (a column total apportioned to the layers by thickness: the sum over "
            "layers is the column value)";
        break;
    }
    out.push_back(std::move(e));
  }
  return out;
}

std::string file_label(const std::string& label) {
  std::string s;
  for (char ch : label) {
    const bool ok = (ch >= 'a' && ch <= 'z') || (ch >= 'A' && ch <= 'Z') ||
                    (ch >= '0' && ch <= '9') || ch == '_' || ch == '-' || ch == '.';
    s += ok ? ch : '_';
  }
  return s;
}

Evaluation evaluate(const Case& c, const TruthData& truth, const Candidate& candidate,
                    const EvaluationOptions& o) {
  Model model = make_coarse_model(c);
  const double dt = model.params().dt;
  const std::int64_t spinup = std::llround(c.run.spinup_s / dt);
  HostOptions ho;
  ho.means_after_step = spinup;
  ho.means_every = std::max<std::int64_t>(1, std::llround(c.run.series_interval_s / dt));
  ClosureHost host(model, make_closure(*candidate.info, candidate.params, make_setup(model)), ho);
  EddyStatisticsOptions so;
  so.start_after_step = spinup;
  so.sample_every = std::max<std::int64_t>(1, std::llround(kStatisticsIntervalS / dt));
  EddyStatisticsHook stats(model, model, so);
  HookChain chain({&host, &stats});

  const std::string param_text = canonical_text(*candidate.info, candidate.params);
  const std::string stem = "run-" + file_label(candidate.label);
  RunOptions ro;
  ro.hook = &chain;
  ro.progress = o.progress;
  ro.stop_flag = o.stop_flag;
  if (!o.out_dir.empty()) {
    ro.checkpoint = o.out_dir / "checkpoints" / (stem + ".ckpt");
    ro.checkpoint_key = io::sha256_hex(
        "coarse\n" + truth_key_text(c) + "coarse " + format_real(c.coarse.dt_s) + " " +
        format_real(c.coarse.viscosity_m2_per_s) + " " + format_real(c.coarse.biharmonic_m4_per_s) +
        "\n" + candidate.info->name + "\n" + param_text + "\n");
    ro.resume = o.resume;
  }
  RunSchedule schedule = case_schedule(c);
  const auto t0 = std::chrono::steady_clock::now();
  const RunRecord rec = run_model(model, schedule, ro);
  Evaluation ev;
  ev.wall_s = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
  ev.max_substeps = host.max_substeps();
  const EddyStatistics e = stats.finish();

  if (!o.out_dir.empty()) {
    ev.netcdf = o.out_dir / (stem + ".nc");
    write_run_netcdf(rec, model, ev.netcdf,
                     {"plateau coarse run of case " + c.name + " with closure " + candidate.label,
                      o.history + " (closure parameters: " +
                          (param_text.empty() ? std::string("none") : param_text) + ")",
                      std::string("plateau ") + kProjectVersion + ", model " + kModelHash},
                     closure_output(host, model));
    std::filesystem::remove(ro.checkpoint);
  }

  ScoreInput in;
  in.case_name = c.name;
  in.closure = candidate.label;
  in.options = score_options(c);
  in.truth = truth_score_run(truth.record, model);
  in.truth.pv_budget = truth_budget(truth);
  in.candidate = candidate_score_run(rec, model);
  in.candidate.pv_budget = candidate_budget(model, rec, e, host);
  in.basin = score_basin(model, in.truth, c.sheltered_layers);
  in.apriori = apriori_fields(c, model, truth, host);
  in.timing.truth_wall_s = truth.wall_s;
  in.timing.candidate_wall_s = ev.wall_s;
  ev.card = score(in);
  return ev;
}

}  // namespace plateau
