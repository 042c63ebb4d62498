#include "harness/model/model.hpp"

#include <numeric>
#include <stdexcept>
#include <utility>

namespace plateau {
namespace {

std::size_t uz(int k) { return static_cast<std::size_t>(k); }

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
    laplacian(grid_, s.psi[uz(k)], s.zeta[uz(k)]);
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
  const int n = layers_.n;
  const int nx = grid_.nx;
  const int ny = grid_.ny;
  if (out.size() != uz(n)) out.assign(uz(n), grid_.zeros());
  for (int k = 0; k < n; ++k) {
    Field& o = out[uz(k)];
    if (o.rows() != nx + 1 || o.cols() != ny + 1) o = grid_.zeros();
    const Field& psi = s.psi[uz(k)];
    switch (params_.advection) {
      case Advection::arakawa:
        arakawa_jacobian(grid_, psi, s.q[uz(k)], o);
        break;
      case Advection::linear: {
        ddx_centred(grid_, psi, o);
        const double b = params_.beta;
#pragma omp parallel for schedule(static) if (threaded(grid_))
        for (int j = 1; j < ny; ++j) {
          for (int i = 1; i < nx; ++i) o(i, j) *= b;
        }
        break;
      }
      case Advection::off:
        o.setZero();
        break;
    }
    const double drag = (k == n - 1) ? params_.bottom_drag : 0.0;
    const Field& z = s.zeta[uz(k)];
    const double season = params_.wind.seasonal_factor(s.t);
    const bool top = (k == 0);
#pragma omp parallel for schedule(static) if (threaded(grid_))
    for (int j = 1; j < ny; ++j) {
      const double w = top ? wind_curl_[uz(j)] * season : 0.0;
      for (int i = 1; i < nx; ++i) o(i, j) = -o(i, j) + w - drag * z(i, j);
    }
    lateral_friction_into(s, k, o, 1.0);
  }
}

double Model::energy_tendency(const ModelState& s, const std::vector<Field>& dq) const {
  double total = 0.0;
  for (int k = 0; k < layers_.n; ++k) {
    const Field& psi = s.psi[uz(k)];
    const Field& d = dq[uz(k)];
    const double c = s.wall_psi[uz(k)];
    double acc = 0.0;
    for (int j = 1; j < grid_.ny; ++j) {
      for (int i = 1; i < grid_.nx; ++i) acc += (psi(i, j) - c) * d(i, j);
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
  tendency(s, tend_);
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
  for (int k = 0; k < n; ++k) {
    Field& q = s.q[uz(k)];
    const Field& f0 = tend_[uz(k)];
    const Field& f1 = s.tend_prev1[uz(k)];
    const Field& f2 = s.tend_prev2[uz(k)];
#pragma omp parallel for schedule(static) if (threaded(grid_))
    for (int j = 1; j < ny; ++j) {
      for (int i = 1; i < nx; ++i) {
        q(i, j) += dt * (c0 * f0(i, j) + c1 * f1(i, j) + c2 * f2(i, j));
      }
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
