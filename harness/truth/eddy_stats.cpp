#include "harness/truth/eddy_stats.hpp"

#include <stdexcept>

#include "harness/coarse/coarse_grain.hpp"
#include "harness/model/operators.hpp"

namespace plateau {
namespace {

std::size_t uz(int k) { return static_cast<std::size_t>(k); }

std::span<const double> span_of(const Field& f) {
  return {f.data(), static_cast<std::size_t>(f.size())};
}

void save_fields(io::CheckpointWriter& w, const std::string& name, const std::vector<Field>& fs) {
  for (std::size_t k = 0; k < fs.size(); ++k) w.add(name + std::to_string(k), span_of(fs[k]));
}

void load_fields(const io::CheckpointReader& r, const std::string& name, const Grid& g, int n,
                 std::vector<Field>& fs) {
  fs.assign(uz(n), g.zeros());
  for (int k = 0; k < n; ++k) {
    const std::string blob = name + std::to_string(k);
    const std::vector<double> v = r.get_doubles(blob);
    if (v.size() != static_cast<std::size_t>(fs[uz(k)].size())) {
      throw std::runtime_error("checkpoint " + r.path().string() + ": blob '" + blob + "' has " +
                               std::to_string(v.size()) + " values, expected " +
                               std::to_string(fs[uz(k)].size()));
    }
    std::copy(v.begin(), v.end(), fs[uz(k)].data());
  }
}

std::vector<Field> scaled(const std::vector<Field>& fs, double a) {
  std::vector<Field> out;
  out.reserve(fs.size());
  for (const Field& f : fs) out.emplace_back(f * a);
  return out;
}

}  // namespace

EddyStatisticsHook::EddyStatisticsHook(const Model& run, const Model& coarse,
                                       EddyStatisticsOptions options)
    : run_(run), coarse_(coarse), options_(options), layers_(run.n_layers()) {
  if (coarse.n_layers() != layers_) {
    throw std::invalid_argument("eddy statistics: the run has " + std::to_string(layers_) +
                                " layers, the coarse model " + std::to_string(coarse.n_layers()));
  }
  (void)coarse_ratio(run.grid(), coarse.grid());  // throws unless the grids nest
  options_.sample_every = std::max<std::int64_t>(1, options_.sample_every);
  const Grid& cg = coarse.grid();
  for (auto* v : {&sum_fj_, &sum_jc_, &sum_fuq_, &sum_fvq_, &sum_uq_, &sum_vq_, &sum_psi_}) {
    v->assign(uz(layers_), cg.zeros());
  }
  sum_wall_.assign(uz(layers_), 0.0);
  sum_w_ = cg.zeros();
  work_ = run.grid().zeros();
  u_ = run.grid().zeros();
  v_ = run.grid().zeros();
}

void EddyStatisticsHook::after_step(const ModelState& state) {
  if (options_.snapshot_every > 0 && state.step % options_.snapshot_every == 0) {
    snapshot_t_.push_back(state.t);
    snapshot_psi_.push_back(coarse_grain(run_.grid(), coarse_.grid(), state.psi));
  }
  const std::int64_t since = state.step - options_.start_after_step;
  if (since > 0 && since % options_.sample_every == 0) sample(state);
}

void EddyStatisticsHook::sample(const ModelState& state) {
  const Grid& g = run_.grid();
  const Grid& cg = coarse_.grid();
  const std::vector<Field> psi_c = coarse_grain(g, cg, state.psi);
  const CoarseFields cf = coarse_fields(coarse_, psi_c);
  Field jc = cg.zeros();
  for (int k = 0; k < layers_; ++k) {
    const std::size_t kk = uz(k);
    arakawa_jacobian(g, state.psi[kk], state.q[kk], work_);
    sum_fj_[kk] += coarse_grain(g, cg, work_);
    velocities(g, state.psi[kk], u_, v_);
    sum_fuq_[kk] += coarse_grain(g, cg, Field(u_ * state.q[kk]));
    sum_fvq_[kk] += coarse_grain(g, cg, Field(v_ * state.q[kk]));
    arakawa_jacobian(cg, cf.state.psi[kk], cf.state.q[kk], jc);
    sum_jc_[kk] += jc;
    sum_uq_[kk] += cf.u[kk] * cf.state.q[kk];
    sum_vq_[kk] += cf.v[kk] * cf.state.q[kk];
    sum_psi_[kk] += psi_c[kk];
    sum_wall_[kk] += cf.state.wall_psi[kk];
  }
  for (int j = 1; j < cg.ny; ++j) {
    const double w = coarse_.wind_forcing(j, state.t);
    for (int i = 1; i < cg.nx; ++i) sum_w_(i, j) += w;
  }
  if (samples_ == 0) {
    first_t_ = state.t;
    first_q_ = cf.state.q;
  }
  last_t_ = state.t;
  last_q_ = cf.state.q;
  ++samples_;
}

EddyStatistics EddyStatisticsHook::finish() const {
  if (samples_ == 0) {
    throw std::logic_error("eddy statistics: no sample was taken (the run ended in its spin-up)");
  }
  const Grid& cg = coarse_.grid();
  const double inv = 1.0 / static_cast<double>(samples_);
  EddyStatistics s;
  s.samples = samples_;
  s.first_sample_t = first_t_;
  s.last_sample_t = last_t_;
  s.mean_psi = scaled(sum_psi_, inv);
  for (double c : sum_wall_) s.mean_wall_psi.push_back(c * inv);
  const CoarseFields mean = coarse_fields(coarse_, s.mean_psi);
  const double span = last_t_ - first_t_;
  Field jbar = cg.zeros();
  for (int k = 0; k < layers_; ++k) {
    const std::size_t kk = uz(k);
    const Field fj = sum_fj_[kk] * inv;
    arakawa_jacobian(cg, mean.state.psi[kk], mean.state.q[kk], jbar);
    s.forcing_transient.emplace_back(fj - jbar);
    s.forcing_subfilter.emplace_back(fj - sum_jc_[kk] * inv);
    const Field fuq = sum_fuq_[kk] * inv;
    const Field fvq = sum_fvq_[kk] * inv;
    s.flux_x_transient.emplace_back(fuq - mean.u[kk] * mean.state.q[kk]);
    s.flux_y_transient.emplace_back(fvq - mean.v[kk] * mean.state.q[kk]);
    s.flux_x_subfilter.emplace_back(fuq - sum_uq_[kk] * inv);
    s.flux_y_subfilter.emplace_back(fvq - sum_vq_[kk] * inv);
    Field st = cg.zeros();
    if (span > 0) {
      for (int j = 1; j < cg.ny; ++j) {
        for (int i = 1; i < cg.nx; ++i) st(i, j) = (last_q_[kk](i, j) - first_q_[kk](i, j)) / span;
      }
    }
    s.storage.push_back(std::move(st));
    s.wind_forcing.emplace_back(k == 0 ? Field(sum_w_ * inv) : cg.zeros());
  }
  s.snapshot_t = snapshot_t_;
  s.snapshot_psi = snapshot_psi_;
  return s;
}

void EddyStatisticsHook::save(io::CheckpointWriter& w, const std::string& p) const {
  w.add(p + "samples", samples_);
  const std::vector<double> times = {first_t_, last_t_};
  w.add(p + "times", times);
  save_fields(w, p + "fj", sum_fj_);
  save_fields(w, p + "jc", sum_jc_);
  save_fields(w, p + "fuq", sum_fuq_);
  save_fields(w, p + "fvq", sum_fvq_);
  save_fields(w, p + "uq", sum_uq_);
  save_fields(w, p + "vq", sum_vq_);
  save_fields(w, p + "psi", sum_psi_);
  w.add(p + "wall", sum_wall_);
  w.add(p + "w", span_of(sum_w_));
  if (samples_ > 0) {
    save_fields(w, p + "first_q", first_q_);
    save_fields(w, p + "last_q", last_q_);
  }
  w.add(p + "snapshot_t", snapshot_t_);
  for (std::size_t m = 0; m < snapshot_psi_.size(); ++m) {
    save_fields(w, p + "snap" + std::to_string(m) + "_", snapshot_psi_[m]);
  }
}

void EddyStatisticsHook::load(const io::CheckpointReader& r, const std::string& p) {
  const Grid& cg = coarse_.grid();
  samples_ = r.get_int(p + "samples");
  const std::vector<double> times = r.get_doubles(p + "times");
  first_t_ = times.at(0);
  last_t_ = times.at(1);
  load_fields(r, p + "fj", cg, layers_, sum_fj_);
  load_fields(r, p + "jc", cg, layers_, sum_jc_);
  load_fields(r, p + "fuq", cg, layers_, sum_fuq_);
  load_fields(r, p + "fvq", cg, layers_, sum_fvq_);
  load_fields(r, p + "uq", cg, layers_, sum_uq_);
  load_fields(r, p + "vq", cg, layers_, sum_vq_);
  load_fields(r, p + "psi", cg, layers_, sum_psi_);
  sum_wall_ = r.get_doubles(p + "wall");
  const std::vector<double> wv = r.get_doubles(p + "w");
  sum_w_ = cg.zeros();
  if (wv.size() != static_cast<std::size_t>(sum_w_.size())) {
    throw std::runtime_error("checkpoint " + r.path().string() + ": blob '" + p +
                             "w' has the wrong size (another grid?)");
  }
  std::copy(wv.begin(), wv.end(), sum_w_.data());
  if (samples_ > 0) {
    load_fields(r, p + "first_q", cg, layers_, first_q_);
    load_fields(r, p + "last_q", cg, layers_, last_q_);
  }
  snapshot_t_ = r.get_doubles(p + "snapshot_t");
  snapshot_psi_.clear();
  for (std::size_t m = 0; m < snapshot_t_.size(); ++m) {
    std::vector<Field> fs;
    load_fields(r, p + "snap" + std::to_string(m) + "_", cg, layers_, fs);
    snapshot_psi_.push_back(std::move(fs));
  }
}

std::vector<Field> friction_tendency(const Model& model, const std::vector<Field>& psi) {
  ModelParams p = model.params();
  p.advection = Advection::off;
  p.wind.tau0 = 0.0;
  p.wind.table_tau_x.assign(p.wind.table_tau_x.size(), 0.0);
  const Model friction_only(model.grid(), p);
  const ModelState s = friction_only.state_from_psi(psi);
  std::vector<Field> out;
  friction_only.tendency(s, out);
  return out;
}

}  // namespace plateau
