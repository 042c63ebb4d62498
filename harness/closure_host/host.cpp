#include "harness/closure_host/host.hpp"

#include <algorithm>
#include <cmath>
#include <exception>
#include <functional>
#include <utility>

#include "closures/flux_kit.hpp"
#include "harness/case/case.hpp"
#include "harness/io/error.hpp"

namespace plateau {
namespace {

std::size_t uz(int k) { return static_cast<std::size_t>(k); }

// The closures' threshold (closure::kit::parallel: 96^2 nodes and more than one thread, as the
// model's loops), so that a test that lowers it runs the host's threaded loops too.
bool parallel(const closure::Setup& s) { return closure::kit::parallel(s); }
using closure::kit::for_rows;

// Row j of a field (i contiguous): the hot loops run on plain pointers (no bounds checks).
const double* col(const Field& f, int j) {
  return f.data() + static_cast<Eigen::Index>(j) * f.rows();
}
double* col(Field& f, int j) { return f.data() + static_cast<Eigen::Index>(j) * f.rows(); }

std::vector<Field> fields_for(const std::vector<closure::FieldInfo>& info,
                              const closure::Setup& s) {
  std::vector<Field> out;
  for (const closure::FieldInfo& f : info) {
    for (int m = 0; m < closure::count_of(f.placement, s); ++m) out.push_back(s.nodes());
  }
  return out;
}

}  // namespace

closure::Setup make_setup(const Grid& g, const ModelParams& p) {
  closure::Setup s;
  s.nx = g.nx;
  s.ny = g.ny;
  s.dx = g.dx;
  s.dy = g.dy;
  s.y0 = g.y0;
  s.f0 = p.f0;
  s.beta = p.beta;
  s.thickness_m = p.thickness_m;
  s.reduced_gravity = p.reduced_gravity;
  s.deformation_radii_m = LayerStack(p.f0, p.thickness_m, p.reduced_gravity).deformation_radii();
  std::sort(s.deformation_radii_m.begin(), s.deformation_radii_m.end(), std::greater<>());
  s.dt_s = p.dt;
  s.viscosity_m2_per_s = p.a2;
  return s;
}

closure::Setup make_setup(const Model& model) { return make_setup(model.grid(), model.params()); }

std::unique_ptr<closure::Closure> make_closure(const closure::Info& info,
                                               const closure::Params& params,
                                               const closure::Setup& setup) {
  try {
    return info.make(params, setup);
  } catch (const CaseError&) {
    throw;
  } catch (const std::exception& e) {
    throw CaseError("closure '" + info.name + "' cannot start with these parameters: " + e.what());
  }
}

int substeps_for(double k_max, const closure::Setup& s, double limit) {
  const double number = k_max * s.dt_s * (1.0 / (s.dx * s.dx) + 1.0 / (s.dy * s.dy));
  if (!(number > limit)) return 1;
  return static_cast<int>(std::ceil(number / limit));
}

ClosureStepNumbers closure_step_numbers(const closure::Closure& c, const closure::Setup& s) {
  ClosureStepNumbers n;
  n.full_pv = c.target() == closure::Target::full_pv;
  n.k_bound_m2_per_s = c.diffusivity_bound();
  n.diffusion_number = n.k_bound_m2_per_s * s.dt_s * (1.0 / (s.dx * s.dx) + 1.0 / (s.dy * s.dy));
  n.substeps = n.full_pv ? substeps_for(n.k_bound_m2_per_s, s) : 1;
  const double ld = s.ld_min();
  n.stretching_stiffness = (!n.full_pv && ld > 0.0) ? n.k_bound_m2_per_s * s.dt_s / (ld * ld) : 0.0;
  return n;
}

void zero_wall_faces(const closure::Setup& s, closure::Fluxes& f) {
  for (Field& fx : f.fx) {
    fx.row(0).setZero();
    fx.row(s.nx - 1).setZero();
    fx.col(0).setZero();
    fx.col(s.ny).setZero();
  }
  for (Field& fy : f.fy) {
    fy.col(0).setZero();
    fy.col(s.ny - 1).setZero();
    fy.row(0).setZero();
    fy.row(s.nx).setZero();
  }
}

void flux_divergence(const closure::Setup& s, const closure::Fluxes& f, std::vector<Field>& out) {
  const int n = s.layers();
  if (out.size() != uz(n)) out.assign(uz(n), s.nodes());
  const double ix = 1.0 / s.dx;
  const double iy = 1.0 / s.dy;
  const int nx = s.nx;
  for (int k = 0; k < n; ++k) {
    const Field& fx = f.fx[uz(k)];
    const Field& fy = f.fy[uz(k)];
    Field& o = out[uz(k)];
    for_rows(parallel(s), 1, s.ny, [&](int j) {
      const double* fxc = col(fx, j);
      const double* fyc = col(fy, j);
      const double* fys = col(fy, j - 1);
      double* oc = col(o, j);
#pragma omp simd
      for (int i = 1; i < nx; ++i) {
        oc[i] = -((fxc[i] - fxc[i - 1]) * ix + (fyc[i] - fys[i]) * iy);
      }
    });
  }
}

ClosureHost::ClosureHost(const Model& model, std::unique_ptr<closure::Closure> closure,
                         HostOptions options)
    : model_(model), closure_(std::move(closure)), options_(options), setup_(make_setup(model)) {
  work_ = closure::Fluxes::zeros(setup_);
  applied_ = closure::Fluxes::zeros(setup_);
  tendency_.assign(uz(setup_.layers()), setup_.nodes());
  divergence_.assign(uz(setup_.layers()), setup_.nodes());
  prognostic_info_ = closure_->prognostic_fields();
  diagnostic_info_ = closure_->diagnostic_fields();
  prognostic_ = fields_for(prognostic_info_, setup_);
  diagnostics_ = fields_for(diagnostic_info_, setup_);
  closure_->initial_prognostic(prognostic_);
}

closure::StateView ClosureHost::view(const ModelState& state) const {
  closure::StateView v;
  v.setup = &setup_;
  v.psi = state.psi;
  v.q = state.q;
  v.wall_psi = state.wall_psi;
  v.prognostic = prognostic_;
  v.t = state.t;
  return v;
}

void ClosureHost::apply(ModelState& state) {
  const double dt = setup_.dt_s;
  const int n = setup_.layers();
  const int nx = setup_.nx;
  const int ny = setup_.ny;
  const closure::StateView v = view(state);

  applied_.set_zero();
  closure_->fluxes(v, dt, applied_, scratch_);
  zero_wall_faces(setup_, applied_);
  int steps = 1;
  if (closure_->target() == closure::Target::full_pv && options_.substepping) {
    steps = substeps_for(applied_.k_max, setup_, options_.substep_limit);
  }
  const bool par = parallel(setup_);
  if (steps == 1) {
    // flux_divergence into tendency_ and the update of q in one pass (the same operations).
    const double ix = 1.0 / setup_.dx;
    const double iy = 1.0 / setup_.dy;
    for (int k = 0; k < n; ++k) {
      Field& q = state.q[uz(k)];
      Field& d = tendency_[uz(k)];
      const Field& fx = applied_.fx[uz(k)];
      const Field& fy = applied_.fy[uz(k)];
      for_rows(par, 1, ny, [&](int j) {
        const double* fxc = col(fx, j);
        const double* fyc = col(fy, j);
        const double* fys = col(fy, j - 1);
        double* dc = col(d, j);
        double* qc = col(q, j);
#pragma omp simd
        for (int i = 1; i < nx; ++i) {
          const double t = -((fxc[i] - fxc[i - 1]) * ix + (fyc[i] - fys[i]) * iy);
          dc[i] = t;
          qc[i] += dt * t;
        }
      });
    }
  } else {
    // Each sub-step sees the q its predecessor left; the applied flux is their time mean.
    const double h = dt / steps;
    const double w = 1.0 / steps;
    const double k_max = applied_.k_max;
    applied_.set_zero();
    for (Field& t : tendency_) t.setZero();
    for (int m = 0; m < steps; ++m) {
      work_.set_zero();
      closure_->fluxes(v, h, work_, scratch_);
      zero_wall_faces(setup_, work_);
      flux_divergence(setup_, work_, divergence_);
      for (int k = 0; k < n; ++k) {
        Field& q = state.q[uz(k)];
        const Field& d = divergence_[uz(k)];
        Field& t = tendency_[uz(k)];
        for_rows(par, 1, ny, [&](int j) {
          double* qc = col(q, j);
          double* tc = col(t, j);
          const double* dc = col(d, j);
#pragma omp simd
          for (int i = 1; i < nx; ++i) {
            qc[i] += h * dc[i];
            tc[i] += w * dc[i];
          }
        });
        applied_.fx[uz(k)] += w * work_.fx[uz(k)];
        applied_.fy[uz(k)] += w * work_.fy[uz(k)];
      }
    }
    applied_.k_max = k_max;
  }
  last_substeps_ = steps;
  max_substeps_ = std::max(max_substeps_, steps);
  energy_tendency_ = model_.energy_tendency(state, tendency_);

  // The run's means count the steps that end after the spin-up (state.step is this step's
  // start index here; it ends as step + 1).
  const std::int64_t end = state.step + 1;
  const bool mean_now = options_.means_after_step >= 0 && end > options_.means_after_step &&
                        end % std::max<std::int64_t>(1, options_.means_every) == 0;
  if (mean_now) accumulate_means(state, v);
  if (!prognostic_.empty()) {
    closure_->step_prognostic(v, applied_, dt, prognostic_, scratch_);
    // Averaged at the step's end, as the run averages its end-of-step states.
    if (mean_now) {
      for (std::size_t m = 0; m < prognostic_.size(); ++m) mean_prognostic_[m] += prognostic_[m];
    }
  }
}

namespace {

std::span<const double> span_of(const Field& f) {
  return {f.data(), static_cast<std::size_t>(f.size())};
}

void save_fields(io::CheckpointWriter& w, const std::string& name, const std::vector<Field>& fs) {
  w.add(name + "count", static_cast<std::int64_t>(fs.size()));
  for (std::size_t k = 0; k < fs.size(); ++k) w.add(name + std::to_string(k), span_of(fs[k]));
}

// Reads fields saved by save_fields into `fs`, which must already have the expected count and
// shapes (the same closure on the same grid); anything else is an IoError naming the blob.
void load_fields(const io::CheckpointReader& r, const std::string& name, std::vector<Field>& fs) {
  const std::int64_t count = r.get_int(name + "count");
  if (count != static_cast<std::int64_t>(fs.size())) {
    throw io::IoError(r.path(), "checkpoint " + r.path().string() + ": '" + name + "' holds " +
                                    std::to_string(count) + " closure fields, expected " +
                                    std::to_string(fs.size()));
  }
  for (std::size_t k = 0; k < fs.size(); ++k) {
    const std::string blob = name + std::to_string(k);
    const std::vector<double> v = r.get_doubles(blob);
    if (v.size() != static_cast<std::size_t>(fs[k].size())) {
      throw io::IoError(r.path(), "checkpoint " + r.path().string() + ": blob '" + blob + "' has " +
                                      std::to_string(v.size()) + " values, expected " +
                                      std::to_string(fs[k].size()));
    }
    std::copy(v.begin(), v.end(), fs[k].data());
  }
}

// The closure's prognostic and diagnostic field names, "prog1,prog2;diag1": identifies the
// closure's checkpoint layout.
std::string field_names(const std::vector<closure::FieldInfo>& prognostic,
                        const std::vector<closure::FieldInfo>& diagnostic) {
  std::string s;
  for (const closure::FieldInfo& f : prognostic) s += (s.empty() ? "" : ",") + f.name;
  s += ";";
  for (const closure::FieldInfo& f : diagnostic) s += f.name + ",";
  return s;
}

}  // namespace

void ClosureHost::save(io::CheckpointWriter& w, const std::string& prefix) const {
  w.add(prefix + "fields", field_names(prognostic_info_, diagnostic_info_));
  save_fields(w, prefix + "prognostic", prognostic_);
  w.add(prefix + "max_substeps", static_cast<std::int64_t>(max_substeps_));
  w.add(prefix + "last_substeps", static_cast<std::int64_t>(last_substeps_));
  const std::vector<double> energy = {energy_tendency_};
  w.add(prefix + "energy_tendency", energy);
  w.add(prefix + "mean_count", mean_count_);
  if (mean_count_ > 0) {
    save_fields(w, prefix + "mean_prognostic", mean_prognostic_);
    save_fields(w, prefix + "mean_diagnostics", mean_diagnostics_);
    save_fields(w, prefix + "mean_tendency", mean_tendency_);
  }
}

void ClosureHost::load(const io::CheckpointReader& r, const std::string& prefix) {
  const std::string names = r.get_string(prefix + "fields");
  const std::string expected = field_names(prognostic_info_, diagnostic_info_);
  if (names != expected) {
    throw io::IoError(r.path(), "checkpoint " + r.path().string() +
                                    " holds a closure with the fields '" + names +
                                    "', not this closure's '" + expected + "'");
  }
  load_fields(r, prefix + "prognostic", prognostic_);
  max_substeps_ = static_cast<int>(r.get_int(prefix + "max_substeps"));
  last_substeps_ = static_cast<int>(r.get_int(prefix + "last_substeps"));
  energy_tendency_ = r.get_doubles(prefix + "energy_tendency").at(0);
  mean_count_ = r.get_int(prefix + "mean_count");
  if (mean_count_ > 0) {
    mean_prognostic_ = fields_for(prognostic_info_, setup_);
    mean_diagnostics_ = fields_for(diagnostic_info_, setup_);
    mean_tendency_.assign(uz(setup_.layers()), setup_.nodes());
    load_fields(r, prefix + "mean_prognostic", mean_prognostic_);
    load_fields(r, prefix + "mean_diagnostics", mean_diagnostics_);
    load_fields(r, prefix + "mean_tendency", mean_tendency_);
  }
}

void ClosureHost::accumulate_means(const ModelState& /*state*/, const closure::StateView& v) {
  if (mean_count_ == 0) {
    mean_prognostic_ = fields_for(prognostic_info_, setup_);
    mean_diagnostics_ = fields_for(diagnostic_info_, setup_);
    mean_tendency_.assign(uz(setup_.layers()), setup_.nodes());
  }
  if (!diagnostics_.empty()) {
    closure_->diagnostics(v, applied_, diagnostics_, scratch_);
    for (std::size_t m = 0; m < diagnostics_.size(); ++m) mean_diagnostics_[m] += diagnostics_[m];
  }
  for (std::size_t k = 0; k < tendency_.size(); ++k) mean_tendency_[k] += tendency_[k];
  ++mean_count_;
}

std::vector<ClosureMeanField> ClosureHost::mean_fields() const {
  std::vector<ClosureMeanField> out;
  if (mean_count_ == 0) return out;
  const double inv = 1.0 / static_cast<double>(mean_count_);
  auto take = [&](const std::vector<closure::FieldInfo>& info, const std::vector<Field>& sums) {
    std::size_t at = 0;
    for (const closure::FieldInfo& f : info) {
      ClosureMeanField m;
      m.info = f;
      for (int c = 0; c < closure::count_of(f.placement, setup_); ++c) {
        m.values.emplace_back(sums[at++] * inv);
      }
      out.push_back(std::move(m));
    }
  };
  take(prognostic_info_, mean_prognostic_);
  take(diagnostic_info_, mean_diagnostics_);
  ClosureMeanField t;
  t.info = {"closure_pv_tendency", "s-2", "PV tendency of the closure, -div F",
            closure::Placement::layer};
  for (const Field& f : mean_tendency_) t.values.emplace_back(f * inv);
  out.push_back(std::move(t));
  return out;
}

}  // namespace plateau
