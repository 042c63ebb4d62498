#include "harness/coarse/coarse_grain.hpp"

#include <algorithm>
#include <cmath>
#include <sstream>
#include <stdexcept>
#include <string>

namespace plateau {
namespace {

std::size_t uz(int k) { return static_cast<std::size_t>(k); }

std::string describe(const Grid& g) {
  std::ostringstream m;
  m << g.nx << " x " << g.ny << " intervals over " << g.lx_m << " m x " << g.ly_m << " m";
  return m.str();
}

bool same_length(double a, double b) { return std::abs(a - b) <= 1e-12 * std::max(a, b); }

void check_shape(const Grid& g, const Field& f, const char* what) {
  if (f.rows() != g.nx + 1 || f.cols() != g.ny + 1) {
    std::ostringstream m;
    m << what << ": field of " << f.rows() << " x " << f.cols() << " nodes on a grid of "
      << g.nx + 1 << " x " << g.ny + 1 << " nodes";
    throw std::invalid_argument(m.str());
  }
}

}  // namespace

int coarse_ratio(const Grid& truth, const Grid& coarse) {
  const auto fail = [&](const std::string& why) {
    throw std::invalid_argument("coarse-graining from " + describe(truth) + " to " +
                                describe(coarse) + ": " + why);
  };
  if (coarse.nx <= 0 || coarse.ny <= 0) fail("empty coarse grid");
  if (!same_length(truth.lx_m, coarse.lx_m) || !same_length(truth.ly_m, coarse.ly_m)) {
    fail("the basins differ");
  }
  if (truth.nx % coarse.nx != 0 || truth.ny % coarse.ny != 0) fail("not an exact multiple");
  const int r = truth.nx / coarse.nx;
  if (truth.ny / coarse.ny != r) fail("different ratios in x and y");
  if (r != 1 && r % 2 != 0) fail("the ratio " + std::to_string(r) + " is odd (must be even)");
  return r;
}

Field coarse_grain(const Grid& truth, const Grid& coarse, const Field& f) {
  const int r = coarse_ratio(truth, coarse);
  check_shape(truth, f, "coarse_grain");
  if (r == 1) return f;
  const int nx = coarse.nx;
  const int ny = coarse.ny;
  Field out = coarse.zeros();
  const int east = r * nx;  // the coarse walls' truth indices
  const int north = r * ny;
  for (int i = 0; i <= nx; ++i) {
    const int ti = r * i;
    out(i, 0) = f(ti, 0);
    out(i, ny) = f(ti, north);
  }
  for (int j = 1; j < ny; ++j) {
    const int tj = r * j;
    out(0, j) = f(0, tj);
    out(nx, j) = f(east, tj);
  }
  const int h = r / 2;
  const double norm = 1.0 / (static_cast<double>(r) * static_cast<double>(r));
  for (int j = 1; j < ny; ++j) {
    for (int i = 1; i < nx; ++i) {
      double s = 0.0;
      for (int b = -h; b <= h; ++b) {
        const double wb = (b == -h || b == h) ? 0.5 : 1.0;
        double row = 0.0;
        for (int a = -h; a <= h; ++a) {
          const double wa = (a == -h || a == h) ? 0.5 : 1.0;
          row += wa * f(r * i + a, r * j + b);
        }
        s += wb * row;
      }
      out(i, j) = s * norm;
    }
  }
  return out;
}

std::vector<Field> coarse_grain(const Grid& truth, const Grid& coarse,
                                const std::vector<Field>& f) {
  std::vector<Field> out;
  out.reserve(f.size());
  for (const Field& x : f) out.push_back(coarse_grain(truth, coarse, x));
  return out;
}

double filter_damping(int r, double theta) {
  if (r <= 1) return 1.0;
  const double half = 0.5 * theta;
  if (std::abs(std::sin(half)) < 1e-12) {
    // theta a multiple of 2 pi: every stencil node sees cos(a theta) = 1.
    return 1.0;
  }
  return std::sin(0.5 * r * theta) * std::cos(half) / (std::sin(half) * r);
}

double filter_damping_wavenumber(int r, double k_per_m, double dx_truth_m) {
  return filter_damping(r, k_per_m * dx_truth_m);
}

void velocities(const Grid& g, const Field& psi, Field& u, Field& v) {
  const int nx = g.nx;
  const int ny = g.ny;
  u = g.zeros();
  v = g.zeros();
  const double cx = 0.5 / g.dx;
  const double cy = 0.5 / g.dy;
  for (int j = 1; j < ny; ++j) {
    for (int i = 1; i < nx; ++i) {
      u(i, j) = -cy * (psi(i, j + 1) - psi(i, j - 1));
      v(i, j) = cx * (psi(i + 1, j) - psi(i - 1, j));
    }
  }
  if (nx < 2 || ny < 2) return;
  // Tangential velocity on the walls, one-sided second order along the inward normal.
  for (int i = 1; i < nx; ++i) {
    u(i, 0) = -cy * (-3.0 * psi(i, 0) + 4.0 * psi(i, 1) - psi(i, 2));
    u(i, ny) = cy * (-3.0 * psi(i, ny) + 4.0 * psi(i, ny - 1) - psi(i, ny - 2));
  }
  for (int j = 1; j < ny; ++j) {
    v(0, j) = cx * (-3.0 * psi(0, j) + 4.0 * psi(1, j) - psi(2, j));
    v(nx, j) = -cx * (-3.0 * psi(nx, j) + 4.0 * psi(nx - 1, j) - psi(nx - 2, j));
  }
}

CoarseFields coarse_fields(const Model& coarse, const std::vector<Field>& coarse_psi) {
  const Grid& g = coarse.grid();
  if (coarse_psi.size() != uz(coarse.n_layers())) {
    throw std::invalid_argument("coarse_fields: " + std::to_string(coarse_psi.size()) +
                                " layers of psi for a model of " +
                                std::to_string(coarse.n_layers()));
  }
  for (const Field& p : coarse_psi) check_shape(g, p, "coarse_fields");
  CoarseFields out;
  out.state = coarse.state_from_psi(coarse_psi);
  out.u.resize(coarse_psi.size());
  out.v.resize(coarse_psi.size());
  for (std::size_t k = 0; k < coarse_psi.size(); ++k) {
    velocities(g, coarse_psi[k], out.u[k], out.v[k]);
  }
  out.energy = coarse.energy(out.state);
  return out;
}

CoarseFields coarse_grain_truth(const Model& coarse, const Grid& truth,
                                const std::vector<Field>& truth_psi) {
  return coarse_fields(coarse, coarse_grain(truth, coarse.grid(), truth_psi));
}

}  // namespace plateau
