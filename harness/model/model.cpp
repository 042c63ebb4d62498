#include "harness/model/model.hpp"

#include <numeric>
#include <stdexcept>
#include <utility>

namespace plateau {
namespace {

std::size_t uz(int k) { return static_cast<std::size_t>(k); }

// Row j of a field: node (i, j) is col(f, j)[i]. The hot loops below run on these plain
// pointers, row by row (x fastest in memory).
const double* col(const Field& f, int j) {
  return f.data() + static_cast<Eigen::Index>(j) * f.rows();
}
double* col(Field& f, int j) { return f.data() + static_cast<Eigen::Index>(j) * f.rows(); }

// The 5-point Laplacian of f on the interior nodes of row j (as laplacian() in operators.cpp,
// the same expression, so the same rounding).
void laplacian_row(const Grid& g, const Field& f, int j, Field& out) {
  const double ax = 1.0 / (g.dx * g.dx);
  const double ay = 1.0 / (g.dy * g.dy);
  const double* fs = col(f, j - 1);
  const double* fc = col(f, j);
  const double* fn = col(f, j + 1);
  double* o = col(out, j);
#pragma omp simd
  for (int i = 1; i < g.nx; ++i) {
    o[i] = ax * (fc[i + 1] - 2.0 * fc[i] + fc[i - 1]) + ay * (fn[i] - 2.0 * fc[i] + fs[i]);
  }
}

}  // namespace

double Energy::total() const {
  return std::accumulate(kinetic.begin(), kinetic.end(), 0.0) +
         std::accumulate(potential.begin(), potential.end(), 0.0);
}

Model::Model(const Grid& grid, ModelParams params)
    : grid_(grid),
      params_(std::move(params)),
      layers_(params_.f0, params_.thickness_m, params_.reduced_gravity),
      inversion_(grid_, layers_, params_.beta) {
  if (params_.dt <= 0.0) throw std::invalid_argument("Model: dt must be positive");
  wind_curl_.resize(uz(grid_.ny + 1));
  for (int j = 0; j <= grid_.ny; ++j) {
    wind_curl_[uz(j)] = params_.wind.curl(grid_.y(j), grid_.ly_m, grid_.dy) /
                        (params_.rho0 * params_.thickness_m.front());
  }
  scratch_.assign(uz(layers_.n), grid_.zeros());
  tend_.assign(uz(layers_.n), grid_.zeros());
}

double Model::wind_forcing(int j, double t) const {
  return wind_curl_[uz(j)] * params_.wind.seasonal_factor(t);
}

ModelState Model::rest_state() const {
  std::vector<Field> psi(uz(layers_.n), grid_.zeros());
  return state_from_psi(psi);
}

ModelState Model::state_from_psi(const std::vector<Field>& psi) const {
  ModelState s;
  const int n = layers_.n;
  s.psi = psi;
  s.zeta.assign(uz(n), grid_.zeros());
  s.q.assign(uz(n), grid_.zeros());
  s.wall_psi.resize(uz(n));
  for (int k = 0; k < n; ++k) s.wall_psi[uz(k)] = psi[uz(k)](0, 0);
  for (int k = 0; k < n; ++k) {
    laplacian(grid_, s.psi[uz(k)], s.zeta[uz(k)]);
    wall_vorticity(grid_, s.psi[uz(k)], s.wall_psi[uz(k)], params_.wall, params_.slip_length_m,
                   s.zeta[uz(k)]);
  }
  for (int k = 0; k < n; ++k) {
    Field& q = s.q[uz(k)];
    for (int j = 1; j < grid_.ny; ++j) {
      const double by = params_.beta * (grid_.y(j) - grid_.y0);
      for (int i = 1; i < grid_.nx; ++i) {
        double st = 0.0;
        for (int l = 0; l < n; ++l) st += layers_.s(k, l) * s.psi[uz(l)](i, j);
        q(i, j) = s.zeta[uz(k)](i, j) + by + st;
      }
    }
  }
  s.mode_mass = inversion_.mode_masses(s.psi);
  wall_q(s);
  s.tend_prev1.assign(uz(n), grid_.zeros());
  s.tend_prev2.assign(uz(n), grid_.zeros());
  return s;
}

void Model::wall_q(ModelState& s) const {
  const int n = layers_.n;
  const int nx = grid_.nx;
  const int ny = grid_.ny;
  for (int k = 0; k < n; ++k) {
    double st = 0.0;
    for (int l = 0; l < n; ++l) st += layers_.s(k, l) * s.wall_psi[uz(l)];
    Field& q = s.q[uz(k)];
    const Field& z = s.zeta[uz(k)];
    auto set = [&](int i, int j) {
      q(i, j) = z(i, j) + params_.beta * (grid_.y(j) - grid_.y0) + st;
    };
    for (int i = 0; i <= nx; ++i) {
      set(i, 0);
      set(i, ny);
    }
    for (int j = 1; j < ny; ++j) {
      set(0, j);
      set(nx, j);
    }
  }
}

void Model::diagnose(ModelState& s) const {
  if (params_.prescribed_flow) return;
  const int n = layers_.n;
  inversion_.invert(s.q, s.mode_mass, s.psi, s.wall_psi);
  if (s.zeta.size() != uz(n)) s.zeta.assign(uz(n), grid_.zeros());
  for (int k = 0; k < n; ++k) {
    Field& z = s.zeta[uz(k)];
    if (z.rows() != grid_.nx + 1 || z.cols() != grid_.ny + 1) z = grid_.zeros();
  }
  // zeta = lap(psi) inside, all layers in one parallel loop over (layer, row).
  const int rows = grid_.ny - 1;
#pragma omp parallel for schedule(static) if (threaded(grid_))
  for (int r = 0; r < n * rows; ++r) {
    const int k = r / rows;
    laplacian_row(grid_, s.psi[uz(k)], 1 + r % rows, s.zeta[uz(k)]);
  }
  for (int k = 0; k < n; ++k) {
    wall_vorticity(grid_, s.psi[uz(k)], s.wall_psi[uz(k)], params_.wall, params_.slip_length_m,
                   s.zeta[uz(k)]);
  }
  if (!params_.fixed_wall_q) wall_q(s);
}

// out += weight * (A2 lap zeta - A4 lap^2 zeta) at the interior nodes.
void Model::lateral_friction_into(const ModelState& s, int k, Field& out, double weight) const {
  const Field& z = s.zeta[uz(k)];
  const double ax = 1.0 / (grid_.dx * grid_.dx);
  const double ay = 1.0 / (grid_.dy * grid_.dy);
  const int nx = grid_.nx;
  const int ny = grid_.ny;
  const double a2 = params_.a2 * weight;
  if (params_.a2 != 0.0) {
#pragma omp parallel for schedule(static) if (threaded(grid_))
    for (int j = 1; j < ny; ++j) {
      for (int i = 1; i < nx; ++i) {
        out(i, j) += a2 * (ax * (z(i + 1, j) - 2.0 * z(i, j) + z(i - 1, j)) +
                           ay * (z(i, j + 1) - 2.0 * z(i, j) + z(i, j - 1)));
      }
    }
  }
  if (params_.a4 != 0.0) {
    Field& lz = scratch_[uz(k)];
    laplacian(grid_, z, lz);
    // Second wall condition of the biharmonic term: lap(zeta) = 0 on the walls.
    lz.row(0).setZero();
    lz.row(nx).setZero();
    lz.col(0).setZero();
    lz.col(ny).setZero();
    const double a4 = params_.a4 * weight;
#pragma omp parallel for schedule(static) if (threaded(grid_))
    for (int j = 1; j < ny; ++j) {
      for (int i = 1; i < nx; ++i) {
        out(i, j) -= a4 * (ax * (lz(i + 1, j) - 2.0 * lz(i, j) + lz(i - 1, j)) +
                           ay * (lz(i, j + 1) - 2.0 * lz(i, j) + lz(i, j - 1)));
      }
    }
  }
}

void Model::tendency(const ModelState& s, std::vector<Field>& out) const {
  prepare_tendency(out);
#pragma omp parallel if (threaded(grid_))
  tendency_sweep(s, out);
}

void Model::prepare_tendency(std::vector<Field>& out) const {
  const int n = layers_.n;
  if (out.size() != uz(n)) out.assign(uz(n), grid_.zeros());
  for (auto& o : out) {
    if (o.rows() != grid_.nx + 1 || o.cols() != grid_.ny + 1) o = grid_.zeros();
  }
}

// The tendency's work-sharing loops over (layer, row), static blocks: called inside a parallel
// region (or outside any, then on one thread). Each interior row of each layer is done in one
// sweep while it is in cache: advection, then wind, bottom drag and lateral friction, with the
// expressions of arakawa_jacobian, ddx_centred and lateral_friction_into in the same order.
void Model::tendency_sweep(const ModelState& s, std::vector<Field>& out) const {
  const int n = layers_.n;
  const int nx = grid_.nx;
  const int ny = grid_.ny;
  const int rows = ny - 1;
  const double ax = 1.0 / (grid_.dx * grid_.dx);
  const double ay = 1.0 / (grid_.dy * grid_.dy);
  const double cj = 1.0 / (12.0 * grid_.dx * grid_.dy);
  const double cx = 1.0 / (2.0 * grid_.dx);
  const double beta = params_.beta;
  const double a2 = params_.a2;
  const double a4 = params_.a4;
  const double season = params_.wind.seasonal_factor(s.t);
  if (a4 != 0.0) {
    // lap(zeta) for the biharmonic term, with its wall condition lap(zeta) = 0 on the walls.
#pragma omp for schedule(static)
    for (int r = 0; r < n * rows; ++r) {
      const int k = r / rows;
      const int j = 1 + r % rows;
      Field& lz = scratch_[uz(k)];
      laplacian_row(grid_, s.zeta[uz(k)], j, lz);
      double* l = col(lz, j);
      l[0] = 0.0;
      l[nx] = 0.0;
      if (j == 1) lz.col(0).setZero();
      if (j == ny - 1) lz.col(ny).setZero();
    }
  }
#pragma omp for schedule(static)
  for (int r = 0; r < n * rows; ++r) {
    const int k = r / rows;
    const int j = 1 + r % rows;
    double* o = col(out[uz(k)], j);
    const Field& psi = s.psi[uz(k)];
    switch (params_.advection) {
      case Advection::arakawa: {
        const double* as = col(psi, j - 1);
        const double* ac = col(psi, j);
        const double* an = col(psi, j + 1);
        const Field& q = s.q[uz(k)];
        const double* bs = col(q, j - 1);
        const double* bc = col(q, j);
        const double* bn = col(q, j + 1);
#pragma omp simd
        for (int i = 1; i < nx; ++i) {
          const double a_e = ac[i + 1], a_w = ac[i - 1], a_n = an[i], a_s = as[i];
          const double a_ne = an[i + 1], a_nw = an[i - 1];
          const double a_se = as[i + 1], a_sw = as[i - 1];
          const double b_e = bc[i + 1], b_w = bc[i - 1], b_n = bn[i], b_s = bs[i];
          const double b_ne = bn[i + 1], b_nw = bn[i - 1];
          const double b_se = bs[i + 1], b_sw = bs[i - 1];
          const double jpp = (a_e - a_w) * (b_n - b_s) - (a_n - a_s) * (b_e - b_w);
          const double jpx =
              a_e * (b_ne - b_se) - a_w * (b_nw - b_sw) - a_n * (b_ne - b_nw) + a_s * (b_se - b_sw);
          const double jxp =
              b_n * (a_ne - a_nw) - b_s * (a_se - a_sw) - b_e * (a_ne - a_se) + b_w * (a_nw - a_sw);
          o[i] = cj * (jpp + jpx + jxp);
        }
        break;
      }
      case Advection::linear: {
        const double* ac = col(psi, j);
#pragma omp simd
        for (int i = 1; i < nx; ++i) o[i] = (cx * (ac[i + 1] - ac[i - 1])) * beta;
        break;
      }
      case Advection::off:
        for (int i = 1; i < nx; ++i) o[i] = 0.0;
        break;
    }
    const double drag = (k == n - 1) ? params_.bottom_drag : 0.0;
    const double w = (k == 0) ? wind_curl_[uz(j)] * season : 0.0;
    const Field& zeta = s.zeta[uz(k)];
    const double* zs = col(zeta, j - 1);
    const double* zc = col(zeta, j);
    const double* zn = col(zeta, j + 1);
#pragma omp simd
    for (int i = 1; i < nx; ++i) o[i] = -o[i] + w - drag * zc[i];
    if (a2 != 0.0) {
#pragma omp simd
      for (int i = 1; i < nx; ++i) {
        o[i] +=
            a2 * (ax * (zc[i + 1] - 2.0 * zc[i] + zc[i - 1]) + ay * (zn[i] - 2.0 * zc[i] + zs[i]));
      }
    }
    if (a4 != 0.0) {
      const Field& lz = scratch_[uz(k)];
      const double* ls = col(lz, j - 1);
      const double* lc = col(lz, j);
      const double* ln = col(lz, j + 1);
#pragma omp simd
      for (int i = 1; i < nx; ++i) {
        o[i] -=
            a4 * (ax * (lc[i + 1] - 2.0 * lc[i] + lc[i - 1]) + ay * (ln[i] - 2.0 * lc[i] + ls[i]));
      }
    }
  }
}

double Model::energy_tendency(const ModelState& s, const std::vector<Field>& dq) const {
  // -sum_k H_k sum_interior (psi_k - c_k) dq_k dx dy. Each row's sum runs in four fixed
  // partial sums (nodes i = 1, 5, 9, .. in the first, 2, 6, .. in the second, ..), added as
  // (s0 + s1) + (s2 + s3): four independent chains instead of one, so the sum is not bound by
  // the latency of an addition, and the order, hence the bits, is fixed (no threads, no
  // reassociation by the compiler).
  double total = 0.0;
  const int nx = grid_.nx;
  for (int k = 0; k < layers_.n; ++k) {
    const Field& psi = s.psi[uz(k)];
    const Field& d = dq[uz(k)];
    const double c = s.wall_psi[uz(k)];
    double acc = 0.0;
    for (int j = 1; j < grid_.ny; ++j) {
      const double* p = col(psi, j);
      const double* t = col(d, j);
      double s0 = 0.0;
      double s1 = 0.0;
      double s2 = 0.0;
      double s3 = 0.0;
      int i = 1;
      for (; i + 3 < nx; i += 4) {
        s0 += (p[i] - c) * t[i];
        s1 += (p[i + 1] - c) * t[i + 1];
        s2 += (p[i + 2] - c) * t[i + 2];
        s3 += (p[i + 3] - c) * t[i + 3];
      }
      for (; i < nx; ++i) s0 += (p[i] - c) * t[i];
      acc += (s0 + s1) + (s2 + s3);
    }
    total -= layers_.h[uz(k)] * acc * grid_.cell_area();
  }
  return total;
}

BudgetTerms Model::budget(const ModelState& s) const {
  const int n = layers_.n;
  std::vector<Field> term(uz(n), grid_.zeros());
  BudgetTerms b;
  // Wind
  for (int j = 1; j < grid_.ny; ++j) {
    const double w = wind_forcing(j, s.t);
    for (int i = 1; i < grid_.nx; ++i) term[0](i, j) = w;
  }
  b.wind = energy_tendency(s, term);
  // Bottom drag
  for (auto& f : term) f.setZero();
  for (int j = 1; j < grid_.ny; ++j) {
    for (int i = 1; i < grid_.nx; ++i) {
      term[uz(n - 1)](i, j) = -params_.bottom_drag * s.zeta[uz(n - 1)](i, j);
    }
  }
  b.bottom_drag = energy_tendency(s, term);
  // Lateral friction
  for (auto& f : term) f.setZero();
  for (int k = 0; k < n; ++k) lateral_friction_into(s, k, term[uz(k)], 1.0);
  b.lateral_friction = energy_tendency(s, term);
  // Advection
  for (int k = 0; k < n; ++k) {
    term[uz(k)].setZero();
    if (params_.advection == Advection::arakawa) {
      arakawa_jacobian(grid_, s.psi[uz(k)], s.q[uz(k)], term[uz(k)]);
      term[uz(k)] *= -1.0;
    } else if (params_.advection == Advection::linear) {
      ddx_centred(grid_, s.psi[uz(k)], term[uz(k)]);
      term[uz(k)] *= -params_.beta;
    }
  }
  b.advection = energy_tendency(s, term);
  return b;
}

Energy Model::energy(const ModelState& s) const {
  Energy e;
  const int n = layers_.n;
  const int nx = grid_.nx;
  const int ny = grid_.ny;
  const double ax = 1.0 / (grid_.dx * grid_.dx);
  const double ay = 1.0 / (grid_.dy * grid_.dy);
  for (int k = 0; k < n; ++k) {
    const Field& p = s.psi[uz(k)];
    double sx = 0.0;
    for (int j = 1; j < ny; ++j) {
      for (int i = 0; i < nx; ++i) {
        const double d = p(i + 1, j) - p(i, j);
        sx += d * d;
      }
    }
    double sy = 0.0;
    for (int j = 0; j < ny; ++j) {
      for (int i = 1; i < nx; ++i) {
        const double d = p(i, j + 1) - p(i, j);
        sy += d * d;
      }
    }
    e.kinetic.push_back(0.5 * layers_.h[uz(k)] * (ax * sx + ay * sy) * grid_.cell_area());
  }
  for (int k = 0; k + 1 < n; ++k) {
    const Field d = s.psi[uz(k)] - s.psi[uz(k + 1)];
    const double c = layers_.f0 * layers_.f0 / layers_.gprime[uz(k)];
    e.potential.push_back(0.5 * c * trapezoid_integral(grid_, d * d));
  }
  return e;
}

void Model::step(ModelState& s, StepHook* hook) {
  const int n = layers_.n;
  const int nx = grid_.nx;
  const int ny = grid_.ny;
  prepare_tendency(tend_);
  if (s.tend_prev1.size() != uz(n)) s.tend_prev1.assign(uz(n), grid_.zeros());
  if (s.tend_prev2.size() != uz(n)) s.tend_prev2.assign(uz(n), grid_.zeros());
  const double dt = params_.dt;
  double c0 = 1.0;
  double c1 = 0.0;
  double c2 = 0.0;
  if (s.history == 1) {
    c0 = 1.5;
    c1 = -0.5;
  } else if (s.history >= 2) {
    c0 = 23.0 / 12.0;
    c1 = -16.0 / 12.0;
    c2 = 5.0 / 12.0;
  }
  // One parallel region for the tendency and the update (the update of a row may only start
  // once every tendency row has been computed from the old q: the loop's barrier).
  const int rows = ny - 1;
#pragma omp parallel if (threaded(grid_))
  {
    tendency_sweep(s, tend_);
#pragma omp for schedule(static)
    for (int r = 0; r < n * rows; ++r) {
      const int k = r / rows;
      const int j = 1 + r % rows;
      double* q = col(s.q[uz(k)], j);
      const double* f0 = col(tend_[uz(k)], j);
      const double* f1 = col(s.tend_prev1[uz(k)], j);
      const double* f2 = col(s.tend_prev2[uz(k)], j);
#pragma omp simd
      for (int i = 1; i < nx; ++i) q[i] += dt * (c0 * f0[i] + c1 * f1[i] + c2 * f2[i]);
    }
  }
  // Rotate the memory without copying: prev2 <- prev1 <- current.
  for (int k = 0; k < n; ++k) {
    std::swap(s.tend_prev2[uz(k)], s.tend_prev1[uz(k)]);
    std::swap(s.tend_prev1[uz(k)], tend_[uz(k)]);
  }
  if (s.history < 2) ++s.history;
  if (hook != nullptr) hook->after_dynamics(s);
  s.t += dt;
  ++s.step;
  diagnose(s);
}

Field Model::barotropic_transport(const ModelState& s) const {
  Field out = grid_.zeros();
  for (int k = 0; k < layers_.n; ++k) {
    out += layers_.h[uz(k)] * (s.psi[uz(k)] - s.wall_psi[uz(k)]);
  }
  return out;
}

}  // namespace plateau
