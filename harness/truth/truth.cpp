#include "harness/truth/truth.hpp"

#include <fcntl.h>
#include <sys/file.h>
#include <unistd.h>

#include <chrono>
#include <cmath>
#include <cstdlib>
#include <memory>
#include <sstream>

#include <nlohmann/json.hpp>

#include "harness/closure_host/host.hpp"
#include "harness/closure_host/parameters.hpp"
#include "harness/closure_host/registry.hpp"
#include "harness/coarse/coarse_grain.hpp"
#include "harness/io/atomic_file.hpp"
#include "harness/io/error.hpp"
#include "harness/io/hash.hpp"
#include "harness/io/netcdf.hpp"
#include "harness/run/run_output.hpp"
#include "harness/run/setup.hpp"
#include "plateau/version.hpp"

namespace plateau {
namespace {

namespace fs = std::filesystem;

std::size_t uz(int k) { return static_cast<std::size_t>(k); }

constexpr const char* kManifest = "manifest.json";
constexpr const char* kContents = "truth.nc";
constexpr const char* kTruthGrid = "truth-grid.nc";

std::string num(double v) { return format_real(v); }

std::string nums(const std::vector<double>& v) {
  std::string s = "[";
  for (std::size_t i = 0; i < v.size(); ++i) s += (i ? ", " : "") + num(v[i]);
  return s + "]";
}

const char* wind_name(WindShape w) {
  switch (w) {
    case WindShape::single_gyre:
      return "single_gyre";
    case WindShape::double_gyre:
      return "double_gyre";
    case WindShape::table:
      return "table";
  }
  return "?";
}
const char* wall_name(WallCondition w) {
  switch (w) {
    case WallCondition::free_slip:
      return "free_slip";
    case WallCondition::no_slip:
      return "no_slip";
    case WallCondition::partial_slip:
      return "partial_slip";
  }
  return "?";
}

// An exclusive flock() on ENTRY/lock, held for the object's life. Waits (with a notice) when
// another process holds it.
class EntryLock {
 public:
  EntryLock(const fs::path& entry, const std::function<void(const std::string&)>& notice) {
    fs::create_directories(entry);
    const fs::path p = entry / "lock";
    fd_ = ::open(p.c_str(), O_RDWR | O_CREAT | O_CLOEXEC, 0644);
    if (fd_ < 0) throw io::IoError(p, "cannot open the truth cache lock " + p.string());
    if (::flock(fd_, LOCK_EX | LOCK_NB) != 0) {
      if (notice) {
        notice("another process is computing this truth; waiting for its lock " + p.string());
      }
      if (::flock(fd_, LOCK_EX) != 0) {
        ::close(fd_);
        throw io::IoError(p, "cannot lock " + p.string());
      }
    }
  }
  ~EntryLock() {
    if (fd_ >= 0) {
      ::flock(fd_, LOCK_UN);
      ::close(fd_);
    }
  }
  EntryLock(const EntryLock&) = delete;
  EntryLock& operator=(const EntryLock&) = delete;

 private:
  int fd_ = -1;
};

// ---- truth.nc -------------------------------------------------------------------------------

std::vector<double> stack(const std::vector<Field>& fs) {
  std::vector<double> v;
  for (const Field& f : fs) v.insert(v.end(), f.data(), f.data() + f.size());
  return v;
}

std::vector<Field> unstack(const io::NetcdfArray& a, const Grid& g, int n, const fs::path& file,
                           const std::string& var) {
  const std::size_t per = static_cast<std::size_t>(g.nx + 1) * static_cast<std::size_t>(g.ny + 1);
  if (a.values.size() != per * uz(n)) {
    throw TruthCacheError(file.string() + ": variable " + var + " has " +
                          std::to_string(a.values.size()) + " values, expected " +
                          std::to_string(per * uz(n)));
  }
  std::vector<Field> out(uz(n), g.zeros());
  for (int k = 0; k < n; ++k) {
    std::copy(a.values.begin() + static_cast<std::ptrdiff_t>(per * uz(k)),
              a.values.begin() + static_cast<std::ptrdiff_t>(per * uz(k + 1)), out[uz(k)].data());
  }
  return out;
}

struct FieldVar {
  const char* name;
  const char* units;
  const char* long_name;
};

void write_contents(const TruthData& d, const Model& coarse, const fs::path& path,
                    const std::string& history) {
  const Grid& g = coarse.grid();
  const int n = coarse.n_layers();
  io::NetcdfWriter w(path, {"plateau truth (cache entry contents, coarse grid)", history,
                            std::string("plateau ") + kProjectVersion + ", model " + kModelHash});
  std::vector<double> xs;
  std::vector<double> ys;
  for (int i = 0; i <= g.nx; ++i) xs.push_back(g.x(i));
  for (int j = 0; j <= g.ny; ++j) ys.push_back(g.y(j));
  w.add_time_dimension();
  w.add_x_coordinate(xs);
  w.add_y_coordinate(ys);
  w.add_layer_coordinate(n);
  const std::size_t ns = d.record.series.size();
  w.add_dimension("series", ns);
  if (n > 1) w.add_dimension("interface", uz(n - 1));
  const std::vector<std::string> lyx = {"layer", "y", "x"};
  const auto field = [&](const FieldVar& v, const std::vector<Field>& f) {
    w.define_variable({v.name, lyx, v.units, v.long_name, "", true});
    return std::make_pair(std::string(v.name), stack(f));
  };
  std::vector<std::pair<std::string, std::vector<double>>> data;
  const EddyStatistics& e = d.eddy;
  data.push_back(field({"mean_psi", "m2 s-1", "time-mean layer streamfunction, coarse-grained"},
                       d.record.mean_psi));
  data.push_back(
      field({"eddy_mean_psi", "m2 s-1", "mean of the sampled coarse-grained psi"}, e.mean_psi));
  data.push_back(field({"eddy_forcing_transient", "s-2",
                        "eddy PV flux divergence relative to the coarse-grained time mean"},
                       e.forcing_transient));
  data.push_back(field({"eddy_forcing_subfilter", "s-2", "subfilter PV flux divergence, time mean"},
                       e.forcing_subfilter));
  data.push_back(
      field({"eddy_flux_x_transient", "m s-2", "eddy PV flux, x (transient plus subfilter)"},
            e.flux_x_transient));
  data.push_back(
      field({"eddy_flux_y_transient", "m s-2", "eddy PV flux, y (transient plus subfilter)"},
            e.flux_y_transient));
  data.push_back(
      field({"eddy_flux_x_subfilter", "m s-2", "subfilter PV flux, x"}, e.flux_x_subfilter));
  data.push_back(
      field({"eddy_flux_y_subfilter", "m s-2", "subfilter PV flux, y"}, e.flux_y_subfilter));
  data.push_back(
      field({"pv_storage", "s-2", "change of coarse-grained q over the window"}, e.storage));
  data.push_back(field({"pv_wind_forcing", "s-2", "time-mean wind forcing of q"}, e.wind_forcing));
  data.push_back(
      field({"pv_friction", "s-2", "friction tendency of q at the time-mean state, coarse-grained"},
            d.friction));
  w.define_variable(
      {"psi_wall_mean", {"layer"}, "m2 s-1", "time-mean wall value of psi", "", false});
  w.define_variable(
      {"eddy_psi_wall_mean", {"layer"}, "m2 s-1", "mean sampled wall value", "", false});
  if (!e.snapshot_t.empty()) {
    w.define_variable({"psi_snapshot",
                       {"time", "layer", "y", "x"},
                       "m2 s-1",
                       "coarse-grained layer streamfunction",
                       "",
                       true});
  }
  struct SeriesVar {
    const char* name;
    const char* long_name;
  };
  const SeriesVar scalar_series[] = {{"series_t", "time of the energy sample, s"},
                                     {"series_total", "total energy, m5 s-2"},
                                     {"series_wind", "wind work, m5 s-3"},
                                     {"series_bottom_drag", "bottom drag work, m5 s-3"},
                                     {"series_lateral_friction", "lateral friction work, m5 s-3"},
                                     {"series_advection", "advection work, m5 s-3"},
                                     {"series_closure", "closure work, m5 s-3"}};
  if (ns > 0) {
    for (const SeriesVar& v : scalar_series) {
      const std::string name = v.name;
      const char* units = name == "series_t" ? "s" : (name == "series_total" ? "m5 s-2" : "m5 s-3");
      w.define_variable({v.name, {"series"}, units, v.long_name, "", false});
    }
    w.define_variable(
        {"series_kinetic", {"series", "layer"}, "m5 s-2", "kinetic energy", "", false});
    if (n > 1) {
      w.define_variable({"series_potential",
                         {"series", "interface"},
                         "m5 s-2",
                         "available potential energy",
                         "",
                         false});
    }
  }
  const RunRecord& r = d.record;
  w.put_global_attribute("key", d.key);
  w.put_global_attribute("cache_format", kTruthCacheFormat);
  w.put_global_attribute("steps", r.steps);
  w.put_global_attribute("dt", r.dt);
  w.put_global_attribute("t_end", r.t_end);
  w.put_global_attribute("mean_start_s", r.mean_start_s);
  w.put_global_attribute("mean_count", r.mean_count);
  w.put_global_attribute("energy_window_start", r.energy_window_start);
  w.put_global_attribute("energy_window_end", r.energy_window_end);
  w.put_global_attribute("budget_wind", r.budget_integral.wind);
  w.put_global_attribute("budget_bottom_drag", r.budget_integral.bottom_drag);
  w.put_global_attribute("budget_lateral_friction", r.budget_integral.lateral_friction);
  w.put_global_attribute("budget_advection", r.budget_integral.advection);
  w.put_global_attribute("budget_closure", r.closure_integral);
  w.put_global_attribute("eddy_samples", e.samples);
  w.put_global_attribute("eddy_first_t", e.first_sample_t);
  w.put_global_attribute("eddy_last_t", e.last_sample_t);
  w.put_global_attribute("truth_nx", d.truth_nx);
  w.put_global_attribute("truth_ny", d.truth_ny);
  w.put_global_attribute("wall_s", d.wall_s);

  for (const auto& [name, values] : data) w.write(name, values);
  w.write("psi_wall_mean", r.mean_wall_psi);
  w.write("eddy_psi_wall_mean", e.mean_wall_psi);
  for (std::size_t m = 0; m < e.snapshot_t.size(); ++m) {
    w.write_time(m, e.snapshot_t[m]);
    w.write_record("psi_snapshot", m, stack(e.snapshot_psi[m]));
  }
  if (ns > 0) {
    std::vector<std::vector<double>> cols(7);
    std::vector<double> kin;
    std::vector<double> pot;
    for (const SeriesSample& x : r.series) {
      const double vals[] = {x.t,
                             x.total,
                             x.terms.wind,
                             x.terms.bottom_drag,
                             x.terms.lateral_friction,
                             x.terms.advection,
                             x.closure};
      for (std::size_t c = 0; c < 7; ++c) cols[c].push_back(vals[c]);
      kin.insert(kin.end(), x.kinetic.begin(), x.kinetic.end());
      pot.insert(pot.end(), x.potential.begin(), x.potential.end());
    }
    for (std::size_t c = 0; c < 7; ++c) w.write(scalar_series[c].name, cols[c]);
    w.write("series_kinetic", kin);
    if (n > 1) w.write("series_potential", pot);
  }
  w.close();
}

TruthData read_contents(const fs::path& path, const Grid& g, int n) {
  const io::NetcdfReader rd(path);
  TruthData d;
  const auto fields = [&](const char* name) { return unstack(rd.read(name), g, n, path, name); };
  const auto gd = [&](const char* name) {
    const std::vector<double> v = rd.global_double_attribute(name);
    if (v.size() != 1) throw TruthCacheError(path.string() + ": attribute " + name + " is missing");
    return v.front();
  };
  if (rd.dimension_length("x") != uz(g.nx + 1) || rd.dimension_length("y") != uz(g.ny + 1) ||
      rd.dimension_length("layer") != uz(n)) {
    throw TruthCacheError(path.string() + ": its grid is not the case's coarse grid");
  }
  d.key = rd.global_string_attribute("key");
  RunRecord& r = d.record;
  r.grid = g;
  r.layers = n;
  r.steps = rd.global_int_attribute("steps");
  r.dt = gd("dt");
  r.t_end = gd("t_end");
  r.mean_start_s = gd("mean_start_s");
  r.mean_count = rd.global_int_attribute("mean_count");
  r.energy_window_start = gd("energy_window_start");
  r.energy_window_end = gd("energy_window_end");
  r.budget_integral.wind = gd("budget_wind");
  r.budget_integral.bottom_drag = gd("budget_bottom_drag");
  r.budget_integral.lateral_friction = gd("budget_lateral_friction");
  r.budget_integral.advection = gd("budget_advection");
  r.closure_integral = gd("budget_closure");
  r.mean_psi = fields("mean_psi");
  r.mean_wall_psi = rd.read("psi_wall_mean").values;
  EddyStatistics& e = d.eddy;
  e.samples = rd.global_int_attribute("eddy_samples");
  e.first_sample_t = gd("eddy_first_t");
  e.last_sample_t = gd("eddy_last_t");
  e.mean_psi = fields("eddy_mean_psi");
  e.mean_wall_psi = rd.read("eddy_psi_wall_mean").values;
  e.forcing_transient = fields("eddy_forcing_transient");
  e.forcing_subfilter = fields("eddy_forcing_subfilter");
  e.flux_x_transient = fields("eddy_flux_x_transient");
  e.flux_y_transient = fields("eddy_flux_y_transient");
  e.flux_x_subfilter = fields("eddy_flux_x_subfilter");
  e.flux_y_subfilter = fields("eddy_flux_y_subfilter");
  e.storage = fields("pv_storage");
  e.wind_forcing = fields("pv_wind_forcing");
  d.friction = fields("pv_friction");
  if (rd.has_variable("psi_snapshot")) {
    e.snapshot_t = rd.read("time").values;
    for (std::size_t m = 0; m < e.snapshot_t.size(); ++m) {
      e.snapshot_psi.push_back(
          unstack(rd.read_record("psi_snapshot", m), g, n, path, "psi_snapshot"));
    }
  }
  r.snapshot_t = e.snapshot_t;
  r.snapshot_psi = e.snapshot_psi;
  if (rd.has_variable("series_t")) {
    const auto col = [&](const char* name) { return rd.read(name).values; };
    const std::vector<double> t = col("series_t");
    const std::vector<double> tot = col("series_total");
    const std::vector<double> wi = col("series_wind");
    const std::vector<double> bd = col("series_bottom_drag");
    const std::vector<double> lf = col("series_lateral_friction");
    const std::vector<double> ad = col("series_advection");
    const std::vector<double> cl = col("series_closure");
    const std::vector<double> kin = col("series_kinetic");
    const std::vector<double> pot = n > 1 ? col("series_potential") : std::vector<double>{};
    for (std::size_t s = 0; s < t.size(); ++s) {
      SeriesSample x;
      x.t = t[s];
      x.total = tot[s];
      x.terms.wind = wi[s];
      x.terms.bottom_drag = bd[s];
      x.terms.lateral_friction = lf[s];
      x.terms.advection = ad[s];
      x.closure = cl[s];
      for (int k = 0; k < n; ++k) x.kinetic.push_back(kin.at(s * uz(n) + uz(k)));
      for (int k = 0; k + 1 < n; ++k) x.potential.push_back(pot.at(s * uz(n - 1) + uz(k)));
      r.series.push_back(std::move(x));
    }
  }
  d.truth_nx = static_cast<int>(rd.global_int_attribute("truth_nx"));
  d.truth_ny = static_cast<int>(rd.global_int_attribute("truth_ny"));
  d.wall_s = gd("wall_s");
  return d;
}

// ---- manifest -------------------------------------------------------------------------------

nlohmann::json file_entry(const fs::path& p) {
  return {{"bytes", fs::file_size(p)}, {"sha256", io::sha256_file_hex(p)}};
}

void verify_entry(const fs::path& entry, const std::string& key) {
  const fs::path m = entry / kManifest;
  if (!fs::exists(m)) {
    throw TruthCacheError("truth cache entry " + entry.string() +
                          " has no manifest.json (an interrupted or foreign entry)");
  }
  nlohmann::json j;
  try {
    j = nlohmann::json::parse(io::read_file_bytes(m));
  } catch (const nlohmann::json::exception& e) {
    throw TruthCacheError(m.string() + ": not valid JSON (" + e.what() + ")");
  }
  if (j.value("key", "") != key) {
    throw TruthCacheError(m.string() + ": key " + j.value("key", "(none)") +
                          " does not match the case's key " + key);
  }
  if (!j.contains("files") || !j["files"].is_object()) {
    throw TruthCacheError(m.string() + ": no 'files' table");
  }
  for (const char* name : {kContents, kTruthGrid}) {
    const fs::path p = entry / name;
    if (!j["files"].contains(name)) throw TruthCacheError(m.string() + ": does not list " + name);
    if (!fs::exists(p)) throw TruthCacheError(p.string() + " is missing");
    const auto want_bytes = j["files"][name].value("bytes", std::uintmax_t{0});
    const auto have_bytes = fs::file_size(p);
    if (have_bytes != want_bytes) {
      throw TruthCacheError(p.string() + " has " + std::to_string(have_bytes) +
                            " bytes, the manifest says " + std::to_string(want_bytes) +
                            (have_bytes < want_bytes ? " (truncated)" : ""));
    }
    const std::string want_hash = j["files"][name].value("sha256", "");
    const std::string have_hash = io::sha256_file_hex(p);
    if (have_hash != want_hash) {
      throw TruthCacheError(p.string() + " has SHA-256 " + have_hash + ", the manifest says " +
                            want_hash + " (the file was changed or corrupted)");
    }
  }
}

// ---- the run --------------------------------------------------------------------------------

TruthData compute_truth(const Case& c, const std::string& key, const fs::path& entry,
                        const TruthOptions& o, bool& resumed) {
  Model model = make_truth_model(c);
  const Model coarse = make_coarse_model(c);
  const double dt = model.params().dt;
  const RunSchedule schedule = case_schedule(c);
  RunSchedule run_schedule = schedule;
  run_schedule.snapshot_interval_s = 0.0;  // filtered snapshots come from the statistics hook

  EddyStatisticsOptions so;
  so.start_after_step = std::llround(c.run.spinup_s / dt);
  so.sample_every = std::max<std::int64_t>(1, std::llround(kStatisticsIntervalS / dt));
  so.snapshot_every = c.run.snapshot_interval_s > 0
                          ? std::max<std::int64_t>(1, std::llround(c.run.snapshot_interval_s / dt))
                          : 0;
  EddyStatisticsHook stats(model, coarse, so);

  std::unique_ptr<ClosureHost> host;
  std::vector<BudgetHook*> hooks;
  if (!c.truth_closure.empty()) {
    const closure::Info* info = find_registered_closure(c.truth_closure);
    if (info == nullptr) {
      throw CaseError(c.source.string() + ": truth closure '" + c.truth_closure +
                      "' is not known; allowed: " + registered_closure_names());
    }
    const closure::Params params =
        resolve_params(*info, c.find_closure(c.truth_closure), c.source, {});
    host = std::make_unique<ClosureHost>(model, make_closure(*info, params, make_setup(model)));
    hooks.push_back(host.get());
  }
  hooks.push_back(&stats);
  HookChain chain(hooks);

  RunOptions ro;
  ro.checkpoint = entry / "checkpoints" / "truth.ckpt";
  ro.checkpoint_key = key;
  ro.resume = true;
  resumed = fs::exists(ro.checkpoint);
  ro.hook = &chain;
  ro.progress = o.progress;
  ro.stop_flag = o.stop_flag;
  ro.stop_after_step = o.stop_after_step;
  if (resumed && o.notice) {
    o.notice("resuming the interrupted truth from " + ro.checkpoint.string());
  }

  const auto t0 = std::chrono::steady_clock::now();
  const RunRecord rec = run_model(model, run_schedule, ro);
  const double wall = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();

  const Grid& tg = model.grid();
  const Grid& cg = coarse.grid();
  TruthData d;
  d.key = key;
  d.eddy = stats.finish();
  d.record.grid = cg;
  d.record.layers = rec.layers;
  d.record.dt = rec.dt;
  d.record.steps = rec.steps;
  d.record.t_end = rec.t_end;
  d.record.mean_count = rec.mean_count;
  d.record.mean_start_s = rec.mean_start_s;
  d.record.mean_psi = coarse_grain(tg, cg, rec.mean_psi);
  d.record.mean_wall_psi = rec.mean_wall_psi;
  d.record.snapshot_t = d.eddy.snapshot_t;
  d.record.snapshot_psi = d.eddy.snapshot_psi;
  d.record.series = rec.series;
  d.record.energy_window_start = rec.energy_window_start;
  d.record.energy_window_end = rec.energy_window_end;
  d.record.budget_integral = rec.budget_integral;
  d.record.closure_integral = rec.closure_integral;
  d.friction = coarse_grain(tg, cg, friction_tendency(model, rec.mean_psi));
  d.wall_s = wall;
  d.truth_nx = tg.nx;
  d.truth_ny = tg.ny;

  const std::string history = "plateau truth " + c.source.string();
  write_run_netcdf(rec, model, entry / kTruthGrid,
                   {"plateau truth run of case " + c.name + " on its own grid", history,
                    std::string("plateau ") + kProjectVersion + ", model " + kModelHash});
  write_contents(d, coarse, entry / kContents, history);
  nlohmann::json m;
  m["key"] = key;
  m["key_text"] = truth_key_text(c);
  m["case"] = c.name;
  m["plateau_version"] = kProjectVersion;
  m["model_hash"] = kModelHash;
  m["wall_s"] = wall;
  m["steps"] = rec.steps;
  m["files"][kContents] = file_entry(entry / kContents);
  m["files"][kTruthGrid] = file_entry(entry / kTruthGrid);
  io::write_text_atomic(entry / kManifest, m.dump(2) + "\n");
  fs::remove(ro.checkpoint);
  std::error_code ec;
  fs::remove(entry / "checkpoints", ec);
  return d;
}

}  // namespace

fs::path truth_cache_dir(const fs::path& option) {
  if (!option.empty()) return option;
  if (const char* env = std::getenv("PLATEAU_CACHE_DIR"); env != nullptr && *env != '\0') {
    return env;
  }
  if (const char* xdg = std::getenv("XDG_CACHE_HOME"); xdg != nullptr && *xdg != '\0') {
    return fs::path(xdg) / "plateau";
  }
  if (const char* home = std::getenv("HOME"); home != nullptr && *home != '\0') {
    return fs::path(home) / ".cache" / "plateau";
  }
  return fs::path(".cache") / "plateau";
}

std::string truth_key_text(const Case& c) {
  std::ostringstream t;
  t << "cache_format = " << kTruthCacheFormat << "\n";
  t << "solver = " << kProjectVersion << " " << kModelHash << "\n";
  t << "basin = " << num(c.lx_m) << " " << num(c.ly_m) << " f0 " << num(c.f0_per_s) << " beta "
    << num(c.beta_per_m_s) << " rho0 " << num(c.rho0_kg_per_m3) << "\n";
  t << "thickness_m = " << nums(c.thickness_m) << "\n";
  t << "reduced_gravity = " << nums(c.reduced_gravity_m_per_s2) << "\n";
  t << "wind = " << wind_name(c.wind.shape) << " tau0 " << num(c.wind.tau0_n_per_m2)
    << " asymmetry " << num(c.wind.asymmetry) << " seasonal " << num(c.wind.seasonal_amplitude)
    << " period " << num(c.wind.seasonal_period_s) << " table_y " << nums(c.wind.table_y_m)
    << " table_tau " << nums(c.wind.table_tau_x_n_per_m2) << "\n";
  t << "friction = drag " << num(c.friction.bottom_drag_per_s) << " wall "
    << wall_name(c.friction.wall) << " slip " << num(c.friction.slip_length_m) << "\n";
  t << "truth = " << c.truth.nx << "x" << c.truth.ny << " dt " << num(c.truth.dt_s) << " a2 "
    << num(c.truth.viscosity_m2_per_s) << " a4 " << num(c.truth.biharmonic_m4_per_s) << "\n";
  t << "coarse_grid = " << c.coarse.nx << "x" << c.coarse.ny << "\n";
  t << "run = length " << num(c.run.length_s) << " spinup " << num(c.run.spinup_s) << " snapshot "
    << num(c.run.snapshot_interval_s) << " series " << num(c.run.series_interval_s) << " cfl "
    << num(c.run.cfl_limit) << "\n";
  t << "statistics_interval_s = " << num(kStatisticsIntervalS) << "\n";
  t << "apriori_target = " << static_cast<int>(c.scoring.apriori_target) << "\n";
  if (!c.truth_closure.empty()) {
    std::string params = "(unknown closure)";
    if (const closure::Info* info = find_registered_closure(c.truth_closure)) {
      params = canonical_text(*info,
                              resolve_params(*info, c.find_closure(c.truth_closure), c.source, {}));
    }
    t << "truth_closure = " << c.truth_closure << " " << params << "\n";
    t << "coarse_params = dt " << num(c.coarse.dt_s) << " a2 " << num(c.coarse.viscosity_m2_per_s)
      << " a4 " << num(c.coarse.biharmonic_m4_per_s) << "\n";
  }
  return t.str();
}

std::string truth_key(const Case& c) { return io::sha256_hex(truth_key_text(c)); }

Model make_truth_model(const Case& c) {
  return {make_grid(c, GridRole::truth), make_model_params(c, GridRole::truth)};
}
Model make_coarse_model(const Case& c) {
  return {make_grid(c, GridRole::coarse), make_model_params(c, GridRole::coarse)};
}
RunSchedule case_schedule(const Case& c) {
  RunSchedule s;
  s.length_s = c.run.length_s;
  s.spinup_s = c.run.spinup_s;
  s.snapshot_interval_s = c.run.snapshot_interval_s;
  s.series_interval_s = c.run.series_interval_s;
  s.checkpoint_interval_s = c.run.checkpoint_interval_s;
  s.cfl_limit = c.run.cfl_limit;
  return s;
}

TruthData load_truth_entry(const Case& c, const fs::path& entry) {
  const std::string key = truth_key(c);
  verify_entry(entry, key);
  TruthData d = read_contents(entry / kContents, make_grid(c, GridRole::coarse), c.layers());
  if (d.key != key) {
    throw TruthCacheError((entry / kContents).string() + ": key attribute " + d.key +
                          " does not match " + key);
  }
  return d;
}

TruthResult obtain_truth(const Case& c, const TruthOptions& o) {
  const std::string key = truth_key(c);
  TruthResult res;
  res.entry = o.cache_dir / key;
  const EntryLock lock(res.entry, o.notice);
  if (!o.force && fs::exists(res.entry / kManifest)) {
    try {
      res.data = load_truth_entry(c, res.entry);
      res.reused = true;
      return res;
    } catch (const TruthCacheError& e) {
      res.rejected = e.what();
    } catch (const io::IoError& e) {
      res.rejected = e.what();
    }
    if (o.notice) o.notice("rejected the cached truth: " + res.rejected + "; recomputing");
    fs::remove(res.entry / kManifest);
  }
  if (o.force) {
    fs::remove(res.entry / kManifest);
    fs::remove(res.entry / "checkpoints" / "truth.ckpt");
  }
  bool resumed = false;
  (void)compute_truth(c, key, res.entry, o, resumed);
  res.resumed = resumed;
  // Score from what the entry holds, so that a fresh and a reused truth give the same bits.
  res.data = load_truth_entry(c, res.entry);
  return res;
}

}  // namespace plateau
