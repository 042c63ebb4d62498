#pragma once
// Shared by the closure tests: small basins, synthetic states, and the property checks that
// every closure must pass (CLOSURES.md, "Properties every closure is tested for"). The checks
// use the stateless evaluation (Closure::fluxes on a view) and the harness's fractional step;
// none needs an inversion. Each returns an AssertionResult that carries the measured numbers.

#include <gtest/gtest.h>
#include <omp.h>

#include <algorithm>
#include <cmath>
#include <cstring>
#include <memory>
#include <numbers>
#include <random>
#include <sstream>
#include <string>
#include <vector>

#include "closures/closure.hpp"
#include "closures/flux_kit.hpp"
#include "harness/closure_host/host.hpp"
#include "harness/closure_host/parameters.hpp"
#include "harness/closure_host/registry.hpp"
#include "harness/model/model.hpp"

namespace plateau::testing_closures {

using closure::Fluxes;
using closure::Setup;
using closure::StateView;
using closure::Target;

inline std::size_t uz(int k) { return static_cast<std::size_t>(k); }

// The test bay of cases/tiny_2layer.toml at a small grid: 1000 km square, f0 = 8e-5 s^-1,
// beta = 2e-11 m^-1 s^-1, H = 1000/3000 m, g' = 0.02 m s^-2 (Ld about 48 km), A2 = 2e4 m^2/s
// (Munk width 100 km), dt = 2 h. Three layers: 600/1000/2400 m, g' = 0.025/0.0125.
inline ModelParams bay_params(int layers, double dt = 7200.0) {
  ModelParams p;
  p.f0 = 8e-5;
  p.beta = 2e-11;
  if (layers == 1) {
    p.thickness_m = {4000.0};
  } else if (layers == 2) {
    p.thickness_m = {1000.0, 3000.0};
    p.reduced_gravity = {0.02};
  } else {
    p.thickness_m = {600.0, 1000.0, 2400.0};
    p.reduced_gravity = {0.025, 0.0125};
  }
  p.wind.profile = WindProfile::double_gyre;
  p.wind.tau0 = 0.1;
  p.a2 = 2e4;
  p.bottom_drag = 1e-7;
  p.dt = dt;
  return p;
}

inline Grid bay_grid(int n = 32) { return {n, n, 1e6, 1e6}; }

// A smooth random streamfunction per layer (low sine modes, speeds of order 0.1 m/s), zero on
// the walls, with a different structure in each layer so that there is shear.
inline std::vector<Field> random_psi(const Grid& g, int layers, unsigned seed) {
  std::mt19937 rng(seed);
  std::uniform_real_distribution<double> amp(-1.0, 1.0);
  std::vector<Field> psi(uz(layers), g.zeros());
  for (int k = 0; k < layers; ++k) {
    const double scale = 1e4 / (1.0 + k);  // m^2 s^-1
    for (int m = 1; m <= 4; ++m) {
      for (int l = 1; l <= 4; ++l) {
        const double a = scale * amp(rng) / (m * l);
        for (int j = 0; j <= g.ny; ++j) {
          for (int i = 0; i <= g.nx; ++i) {
            psi[uz(k)](i, j) += a * std::sin(m * std::numbers::pi * i / g.nx) *
                                std::sin(l * std::numbers::pi * j / g.ny);
          }
        }
      }
    }
  }
  return psi;
}

// One closure with one set of parameter values.
struct Variant {
  std::string closure;
  std::vector<std::pair<std::string, std::string>> sets;  // key, value
  std::string label;
};

inline std::ostream& operator<<(std::ostream& os, const Variant& v) { return os << v.label; }

// Every registered closure with its defaults, and with each other choice value and each
// flipped boolean, one at a time.
inline std::vector<Variant> all_variants() {
  std::vector<Variant> out;
  for (const closure::Info* info : registered_closures()) {
    out.push_back({info->name, {}, info->name});
    for (const closure::Param& p : info->params) {
      if (p.kind == closure::ParamKind::choice) {
        for (const std::string& c : p.choices) {
          if (c != p.default_choice)
            out.push_back({info->name, {{p.name, c}}, info->name + "_" + p.name + "_" + c});
        }
      } else if (p.kind == closure::ParamKind::boolean) {
        const std::string v = p.default_value != 0.0 ? "false" : "true";
        out.push_back({info->name, {{p.name, v}}, info->name + "_" + p.name + "_" + v});
      }
    }
  }
  return out;
}

inline closure::Params params_of(const Variant& v) {
  const closure::Info* info = find_registered_closure(v.closure);
  std::vector<ParamOverride> o;
  for (const auto& [k, val] : v.sets) o.push_back({v.closure, k, val, "test " + v.label});
  return resolve_params(*info, nullptr, "test", o);
}

inline std::unique_ptr<closure::Closure> make_variant(const Variant& v, const Model& model) {
  const closure::Info* info = find_registered_closure(v.closure);
  return make_closure(*info, params_of(v), make_setup(model));
}

// A view of `s` with prognostic fields `prog`.
inline StateView view_of(const Setup& setup, const ModelState& s, std::span<const Field> prog) {
  StateView v;
  v.setup = &setup;
  v.psi = s.psi;
  v.q = s.q;
  v.wall_psi = s.wall_psi;
  v.prognostic = prog;
  v.t = s.t;
  return v;
}

// q~ of layer k of a view: the full PV, or the stretching part.
inline Field diffused_of(const closure::Closure& c, const Setup& s, const StateView& v, int k) {
  if (c.target() == Target::full_pv) return v.q[uz(k)];
  Field out;
  closure::kit::stretching_pv(s, v.psi, k, out);
  return out;
}

// Sum over the interior-interior faces of F . grad q~ (x and y), times dx dy.
inline double flux_dot_gradient(const Setup& s, const Fluxes& f, const Field& qt, int k,
                                double* magnitude = nullptr) {
  double sum = 0.0;
  double mag = 0.0;
  for (int j = 1; j < s.ny; ++j) {
    for (int i = 1; i < s.nx - 1; ++i) {
      const double t = f.fx[uz(k)](i, j) * (qt(i + 1, j) - qt(i, j)) / s.dx;
      sum += t;
      mag += std::abs(t);
    }
  }
  for (int j = 1; j < s.ny - 1; ++j) {
    for (int i = 1; i < s.nx; ++i) {
      const double t = f.fy[uz(k)](i, j) * (qt(i, j + 1) - qt(i, j)) / s.dy;
      sum += t;
      mag += std::abs(t);
    }
  }
  if (magnitude != nullptr) *magnitude = mag * s.dx * s.dy;
  return sum * s.dx * s.dy;
}

inline double max_abs(const Fluxes& f) {
  double m = 0.0;
  for (const Field& a : f.fx) m = std::max(m, a.abs().maxCoeff());
  for (const Field& a : f.fy) m = std::max(m, a.abs().maxCoeff());
  return m;
}

inline bool same_bits(const Field& a, const Field& b) {
  return a.rows() == b.rows() && a.cols() == b.cols() &&
         std::memcmp(a.data(), b.data(), sizeof(double) * static_cast<std::size_t>(a.size())) == 0;
}

inline Fluxes evaluate(const closure::Closure& c, const Setup& s, const StateView& v, double dt) {
  Fluxes f = Fluxes::zeros(s);
  closure::Scratch scratch;
  c.fluxes(v, dt, f, scratch);
  zero_wall_faces(s, f);
  return f;
}

// Modulates the host's prognostic fields so that they vary in space (E > 0 kept).
inline void vary(std::span<Field> prog, const Setup& s) {
  for (Field& f : prog) {
    for (int j = 1; j < s.ny; ++j) {
      for (int i = 1; i < s.nx; ++i) {
        f(i, j) *= 1.0 + 0.5 * std::sin(3.0 * i / s.nx) * std::cos(2.0 * j / s.ny);
      }
    }
  }
}

}  // namespace plateau::testing_closures
