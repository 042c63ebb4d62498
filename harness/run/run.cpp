#include "harness/run/run.hpp"

#include <chrono>
#include <cmath>
#include <sstream>

#include "harness/io/checkpoint.hpp"
#include "harness/io/error.hpp"

namespace plateau {
namespace {

std::size_t uz(int k) { return static_cast<std::size_t>(k); }

std::int64_t steps_for(double seconds, double dt) {
  return static_cast<std::int64_t>(std::llround(seconds / dt));
}

std::span<const double> span_of(const Field& f) {
  return {f.data(), static_cast<std::size_t>(f.size())};
}

void load_field(const io::CheckpointReader& r, const std::string& name, const Grid& g, Field& f) {
  const std::vector<double> v = r.get_doubles(name);
  f = g.zeros();
  if (v.size() != static_cast<std::size_t>(f.size())) {
    throw io::IoError(r.path(), "checkpoint " + r.path().string() + ": blob '" + name + "' has " +
                                    std::to_string(v.size()) + " values, expected " +
                                    std::to_string(f.size()) + " (another grid?)");
  }
  std::copy(v.begin(), v.end(), f.data());
}

void add_fields(io::CheckpointWriter& w, const std::string& prefix, const std::vector<Field>& fs) {
  for (std::size_t k = 0; k < fs.size(); ++k) w.add(prefix + std::to_string(k), span_of(fs[k]));
}

void load_fields(const io::CheckpointReader& r, const std::string& prefix, const Grid& g, int n,
                 std::vector<Field>& fs) {
  fs.assign(uz(n), g.zeros());
  for (int k = 0; k < n; ++k) load_field(r, prefix + std::to_string(k), g, fs[uz(k)]);
}

std::vector<double> terms_vec(const BudgetTerms& b) {
  return {b.wind, b.bottom_drag, b.lateral_friction, b.advection};
}
BudgetTerms terms_from(const std::vector<double>& v, std::size_t at = 0) {
  BudgetTerms b;
  b.wind = v.at(at);
  b.bottom_drag = v.at(at + 1);
  b.lateral_friction = v.at(at + 2);
  b.advection = v.at(at + 3);
  return b;
}

// Everything that changes during a run besides the record's fixed description.
struct LoopState {
  ModelState state;
  RunRecord record;
  BudgetTerms last_terms;  // budget at the previous evaluation (trapezoid in time)
  std::int64_t last_terms_step = 0;
  bool have_last_terms = false;
};

void write_checkpoint(const LoopState& ls, const RunOptions& opt, int n) {
  io::CheckpointWriter w(opt.checkpoint_key);
  const ModelState& s = ls.state;
  const RunRecord& r = ls.record;
  const std::vector<double> meta = {s.t, r.mean_start_s, r.energy_window_start, r.closure_integral};
  w.add("meta", meta);
  w.add("step", s.step);
  w.add("history", static_cast<std::int64_t>(s.history));
  w.add("mean_count", r.mean_count);
  add_fields(w, "q", s.q);
  add_fields(w, "psi", s.psi);
  add_fields(w, "zeta", s.zeta);
  add_fields(w, "prev1_", s.tend_prev1);
  add_fields(w, "prev2_", s.tend_prev2);
  w.add("wall_psi", s.wall_psi);
  w.add("mode_mass", s.mode_mass);
  if (r.mean_count > 0) {
    add_fields(w, "mean_psi", r.mean_psi);
    add_fields(w, "mean_q", r.mean_q);
    w.add("mean_wall_psi", r.mean_wall_psi);
  }
  w.add("budget_integral", terms_vec(r.budget_integral));
  w.add("last_terms", terms_vec(ls.last_terms));
  w.add("have_last_terms", static_cast<std::int64_t>(ls.have_last_terms ? 1 : 0));
  w.add("last_terms_step", ls.last_terms_step);
  w.add("snapshot_t", r.snapshot_t);
  for (std::size_t m = 0; m < r.snapshot_t.size(); ++m) {
    add_fields(w, "snap" + std::to_string(m) + "_psi", r.snapshot_psi[m]);
    add_fields(w, "snap" + std::to_string(m) + "_q", r.snapshot_q[m]);
  }
  std::vector<double> series;
  for (const SeriesSample& x : r.series) {
    series.push_back(x.t);
    series.insert(series.end(), x.kinetic.begin(), x.kinetic.end());
    series.insert(series.end(), x.potential.begin(), x.potential.end());
    series.push_back(x.total);
    const auto t = terms_vec(x.terms);
    series.insert(series.end(), t.begin(), t.end());
    series.push_back(x.closure);
  }
  w.add("series", series);
  (void)n;
  if (opt.hook != nullptr) opt.hook->save(w, "hook_");
  w.commit(opt.checkpoint);
}

void read_checkpoint(LoopState& ls, const RunOptions& opt, const Model& model) {
  const io::CheckpointReader r(opt.checkpoint, opt.checkpoint_key);
  const Grid& g = model.grid();
  const int n = model.n_layers();
  ModelState& s = ls.state;
  RunRecord& rec = ls.record;
  const std::vector<double> meta = r.get_doubles("meta");
  s.t = meta.at(0);
  rec.mean_start_s = meta.at(1);
  rec.energy_window_start = meta.at(2);
  rec.closure_integral = meta.at(3);
  s.step = r.get_int("step");
  s.history = static_cast<int>(r.get_int("history"));
  rec.mean_count = r.get_int("mean_count");
  load_fields(r, "q", g, n, s.q);
  load_fields(r, "psi", g, n, s.psi);
  load_fields(r, "zeta", g, n, s.zeta);
  load_fields(r, "prev1_", g, n, s.tend_prev1);
  load_fields(r, "prev2_", g, n, s.tend_prev2);
  s.wall_psi = r.get_doubles("wall_psi");
  s.mode_mass = r.get_doubles("mode_mass");
  if (rec.mean_count > 0) {
    load_fields(r, "mean_psi", g, n, rec.mean_psi);
    load_fields(r, "mean_q", g, n, rec.mean_q);
    rec.mean_wall_psi = r.get_doubles("mean_wall_psi");
  }
  rec.budget_integral = terms_from(r.get_doubles("budget_integral"));
  ls.last_terms = terms_from(r.get_doubles("last_terms"));
  ls.have_last_terms = r.get_int("have_last_terms") != 0;
  ls.last_terms_step = r.get_int("last_terms_step");
  rec.snapshot_t = r.get_doubles("snapshot_t");
  rec.snapshot_psi.clear();
  rec.snapshot_q.clear();
  for (std::size_t m = 0; m < rec.snapshot_t.size(); ++m) {
    std::vector<Field> p;
    std::vector<Field> q;
    load_fields(r, "snap" + std::to_string(m) + "_psi", g, n, p);
    load_fields(r, "snap" + std::to_string(m) + "_q", g, n, q);
    rec.snapshot_psi.push_back(std::move(p));
    rec.snapshot_q.push_back(std::move(q));
  }
  const std::vector<double> series = r.get_doubles("series");
  const std::size_t width = 1 + uz(n) + uz(n - 1) + 1 + 4 + 1;
  rec.series.clear();
  for (std::size_t at = 0; at + width <= series.size(); at += width) {
    SeriesSample x;
    std::size_t p = at;
    x.t = series[p++];
    for (int k = 0; k < n; ++k) x.kinetic.push_back(series[p++]);
    for (int k = 0; k + 1 < n; ++k) x.potential.push_back(series[p++]);
    x.total = series[p++];
    x.terms = terms_from(series, p);
    p += 4;
    x.closure = series[p];
    rec.series.push_back(std::move(x));
  }
  if (opt.hook != nullptr) opt.hook->load(r, "hook_");
}

// The first layer and node where the flow breaks the CFL limit or is not finite.
void check_health(const Model& model, const ModelState& s, double limit) {
  const Grid& g = model.grid();
  for (int k = 0; k < model.n_layers(); ++k) {
    const CflReport c = max_cfl(g, s.psi[uz(k)], model.params().dt);
    const bool bad = std::isnan(c.cfl) || std::isinf(c.cfl);
    if (bad || c.cfl > limit) {
      std::ostringstream m;
      m.precision(4);
      m << "run stopped at step " << s.step << ", model time " << s.t / 86400.0 << " days: ";
      if (bad) {
        m << "non-finite streamfunction in layer " << k + 1;
      } else {
        m << "CFL number " << c.cfl << " above the limit " << limit << " in layer " << k + 1;
      }
      m << " at grid point (i=" << c.i << ", j=" << c.j << "), x = " << g.x(c.i) / 1e3
        << " km, y = " << g.y(c.j) / 1e3 << " km";
      if (!bad) m << "; a shorter time step (or more friction) is needed";
      throw NumericalFailure(m.str());
    }
  }
}

}  // namespace

void HookChain::after_dynamics(ModelState& state) {
  for (BudgetHook* h : hooks_) h->after_dynamics(state);
}
void HookChain::after_step(const ModelState& state) {
  for (BudgetHook* h : hooks_) h->after_step(state);
}
double HookChain::last_energy_tendency() const {
  double sum = 0.0;
  for (const BudgetHook* h : hooks_) sum += h->last_energy_tendency();
  return sum;
}
void HookChain::save(io::CheckpointWriter& w, const std::string& prefix) const {
  for (std::size_t i = 0; i < hooks_.size(); ++i) {
    hooks_[i]->save(w, prefix + "hook" + std::to_string(i) + "_");
  }
}
void HookChain::load(const io::CheckpointReader& r, const std::string& prefix) {
  for (std::size_t i = 0; i < hooks_.size(); ++i) {
    hooks_[i]->load(r, prefix + "hook" + std::to_string(i) + "_");
  }
}

double RunRecord::budget_residual() const {
  return (energy_window_end - energy_window_start) - budget_integral.sum() - closure_integral;
}

RunRecord run_model(Model& model, const RunSchedule& schedule, const RunOptions& options) {
  const Grid& g = model.grid();
  const int n = model.n_layers();
  const double dt = model.params().dt;
  const std::int64_t total = steps_for(schedule.length_s, dt);
  const std::int64_t spinup = steps_for(schedule.spinup_s, dt);
  const std::int64_t snap_every =
      schedule.snapshot_interval_s > 0
          ? std::max<std::int64_t>(1, steps_for(schedule.snapshot_interval_s, dt))
          : 0;
  const std::int64_t series_every =
      schedule.series_interval_s > 0
          ? std::max<std::int64_t>(1, steps_for(schedule.series_interval_s, dt))
          : 1;
  const std::int64_t ckpt_every =
      schedule.checkpoint_interval_s > 0
          ? std::max<std::int64_t>(1, steps_for(schedule.checkpoint_interval_s, dt))
          : 0;

  const std::int64_t budget_every = std::max(1, schedule.budget_every);

  LoopState ls;
  bool resumed = false;
  if (options.resume && !options.checkpoint.empty() &&
      std::filesystem::exists(options.checkpoint)) {
    read_checkpoint(ls, options, model);
    resumed = true;
  } else {
    ls.state = model.rest_state();
  }
  RunRecord& rec = ls.record;
  ModelState& s = ls.state;
  rec.grid = g;
  rec.layers = n;
  rec.dt = dt;

  auto sample_series = [&](const BudgetTerms& terms, double closure) {
    const Energy e = model.energy(s);
    SeriesSample x;
    x.t = s.t;
    x.kinetic = e.kinetic;
    x.potential = e.potential;
    x.total = e.total();
    x.terms = terms;
    x.closure = closure;
    rec.series.push_back(std::move(x));
  };

  const auto wall_start = std::chrono::steady_clock::now();
  auto report = [&](bool force) {
    if (!options.progress) return;
    const std::int64_t every = std::max<std::int64_t>(1, total / 100);
    if (!force && s.step % every != 0) return;
    Progress p;
    p.step = s.step;
    p.total_steps = total;
    p.model_time_s = s.t;
    p.wall_s = std::chrono::duration<double>(std::chrono::steady_clock::now() - wall_start).count();
    options.progress(p);
  };

  if (!resumed) {
    // Step 0: the initial state opens the series (and the window if there is no spin-up).
    const BudgetTerms b0 = model.budget(s);
    sample_series(b0, 0.0);
    ls.last_terms = b0;
    ls.have_last_terms = true;
    if (spinup == 0) {
      rec.mean_start_s = s.t;
      rec.energy_window_start = model.energy(s).total();
    }
  }

  while (s.step < total) {
    model.step(s, options.hook);
    check_health(model, s, schedule.cfl_limit);
    if (options.hook != nullptr) options.hook->after_step(s);
    const bool in_window = s.step > spinup;
    const bool series_now = s.step % series_every == 0 || s.step == total;
    const double closure_power =
        options.hook != nullptr ? options.hook->last_energy_tendency() : 0.0;
    // The closure's fractional step is forward Euler at the step's start, so its power counts
    // once per step.
    if (in_window) rec.closure_integral += dt * closure_power;
    const bool budget_now = (in_window && (s.step - spinup) % budget_every == 0) ||
                            s.step == total || series_now || s.step == spinup;
    if (budget_now) {
      const BudgetTerms b = model.budget(s);
      if (in_window) {
        // Trapezoid in time between this evaluation and the previous one (the window's start
        // is always one, so the integral covers the window exactly).
        const double h = dt * static_cast<double>(s.step - ls.last_terms_step);
        rec.budget_integral.wind += 0.5 * h * (ls.last_terms.wind + b.wind);
        rec.budget_integral.bottom_drag += 0.5 * h * (ls.last_terms.bottom_drag + b.bottom_drag);
        rec.budget_integral.lateral_friction +=
            0.5 * h * (ls.last_terms.lateral_friction + b.lateral_friction);
        rec.budget_integral.advection += 0.5 * h * (ls.last_terms.advection + b.advection);
      }
      ls.last_terms = b;
      ls.last_terms_step = s.step;
      if (series_now) sample_series(b, closure_power);
    }
    if (s.step == spinup) {
      rec.mean_start_s = s.t;
      rec.energy_window_start = model.energy(s).total();
    }
    if (in_window) {
      if (rec.mean_count == 0) {
        rec.mean_psi.assign(uz(n), g.zeros());
        rec.mean_q.assign(uz(n), g.zeros());
        rec.mean_wall_psi.assign(uz(n), 0.0);
      }
      for (int k = 0; k < n; ++k) {
        rec.mean_psi[uz(k)] += s.psi[uz(k)];
        rec.mean_q[uz(k)] += s.q[uz(k)];
        rec.mean_wall_psi[uz(k)] += s.wall_psi[uz(k)];
      }
      ++rec.mean_count;
    }
    if (snap_every > 0 && s.step % snap_every == 0) {
      rec.snapshot_t.push_back(s.t);
      rec.snapshot_psi.push_back(s.psi);
      rec.snapshot_q.push_back(s.q);
    }
    report(false);
    const bool stop_now = (options.stop_after_step >= 0 && s.step >= options.stop_after_step) ||
                          (options.stop_flag != nullptr && options.stop_flag->load());
    const bool ckpt_now =
        !options.checkpoint.empty() && ((ckpt_every > 0 && s.step % ckpt_every == 0) || stop_now);
    if (ckpt_now) write_checkpoint(ls, options, n);
    if (stop_now) {
      throw RunInterrupted(
          "run stopped at step " + std::to_string(s.step) + " of " + std::to_string(total) +
          (options.checkpoint.empty() ? std::string(" (no checkpoint)")
                                      : "; checkpoint " + options.checkpoint.string()));
    }
  }
  report(true);

  rec.steps = s.step;
  rec.t_end = s.t;
  rec.energy_window_end = model.energy(s).total();
  if (rec.mean_count > 0) {
    const double inv = 1.0 / static_cast<double>(rec.mean_count);
    for (int k = 0; k < n; ++k) {
      rec.mean_psi[uz(k)] *= inv;
      rec.mean_q[uz(k)] *= inv;
      rec.mean_wall_psi[uz(k)] *= inv;
    }
  }
  rec.final_state = s;
  return std::move(ls.record);
}

}  // namespace plateau
