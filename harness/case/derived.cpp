#include "harness/case/derived.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <numbers>
#include <sstream>

#include <Eigen/Eigenvalues>

namespace plateau {
namespace {

constexpr double kInf = std::numeric_limits<double>::infinity();
constexpr double kPi = std::numbers::pi;

// d tau_x / dy of the steady wind (N m^-3).
double wind_stress_x_slope(const WindSpec& w, double ly_m, double y_m) {
  const double a = w.asymmetry;
  switch (w.shape) {
    case WindShape::single_gyre: {
      const double k = kPi / ly_m;
      const double base = -w.tau0_n_per_m2 * std::cos(k * y_m);
      const double base_slope = w.tau0_n_per_m2 * k * std::sin(k * y_m);
      return base_slope * (1.0 + a * std::sin(k * y_m)) + base * a * k * std::cos(k * y_m);
    }
    case WindShape::double_gyre: {
      const double k = 2.0 * kPi / ly_m;
      const double base = -w.tau0_n_per_m2 * std::cos(k * y_m);
      const double base_slope = w.tau0_n_per_m2 * k * std::sin(k * y_m);
      return base_slope * (1.0 + a * (2.0 * y_m / ly_m - 1.0)) + base * 2.0 * a / ly_m;
    }
    case WindShape::table:
      break;
  }
  return 0.0;
}

std::string one_decimal(double v) {
  std::ostringstream os;
  os.setf(std::ios::fixed);
  os.precision(v < 10.0 ? 2 : 1);
  os << v;
  return os.str();
}

std::string sig3(double v) {
  std::ostringstream os;
  os.precision(3);
  os << v;
  return os.str();
}

}  // namespace

double munk_peak_factor() { return std::exp(-kPi / (3.0 * std::sqrt(3.0))); }

Eigen::MatrixXd stretching_matrix(double f0_per_s, const std::vector<double>& thickness_m,
                                  const std::vector<double>& reduced_gravity_m_per_s2) {
  const auto n = static_cast<Eigen::Index>(thickness_m.size());
  Eigen::MatrixXd s = Eigen::MatrixXd::Zero(n, n);
  const double f0_sq = f0_per_s * f0_per_s;
  for (Eigen::Index k = 0; k < n; ++k) {
    const double h = thickness_m[static_cast<std::size_t>(k)];
    if (k > 0) {
      const double c = f0_sq / (h * reduced_gravity_m_per_s2[static_cast<std::size_t>(k - 1)]);
      s(k, k - 1) += c;
      s(k, k) -= c;
    }
    if (k + 1 < n) {
      const double c = f0_sq / (h * reduced_gravity_m_per_s2[static_cast<std::size_t>(k)]);
      s(k, k + 1) += c;
      s(k, k) -= c;
    }
  }
  return s;
}

std::vector<double> baroclinic_eigenvalues_per_m2(
    double f0_per_s, const std::vector<double>& thickness_m,
    const std::vector<double>& reduced_gravity_m_per_s2) {
  const auto n = static_cast<Eigen::Index>(thickness_m.size());
  if (n < 2) return {};
  // H S is symmetric, so D S D^-1 with D = diag(sqrt H) is too: same eigenvalues, and the
  // self-adjoint solver returns them real and sorted.
  const Eigen::MatrixXd s = stretching_matrix(f0_per_s, thickness_m, reduced_gravity_m_per_s2);
  Eigen::MatrixXd sym(n, n);
  for (Eigen::Index k = 0; k < n; ++k) {
    for (Eigen::Index l = 0; l < n; ++l) {
      sym(k, l) = std::sqrt(thickness_m[static_cast<std::size_t>(k)] /
                            thickness_m[static_cast<std::size_t>(l)]) *
                  s(k, l);
    }
  }
  const Eigen::SelfAdjointEigenSolver<Eigen::MatrixXd> solver(sym, Eigen::EigenvaluesOnly);
  std::vector<double> lambda;
  for (Eigen::Index m = 0; m < n; ++m) lambda.push_back(-solver.eigenvalues()(m));
  std::sort(lambda.begin(), lambda.end());
  lambda.erase(lambda.begin());  // the barotropic mode, lambda_0 = 0 to rounding
  return lambda;
}

std::vector<double> deformation_radii_m(double f0_per_s, const std::vector<double>& thickness_m,
                                        const std::vector<double>& reduced_gravity_m_per_s2) {
  std::vector<double> radii;
  for (double lambda :
       baroclinic_eigenvalues_per_m2(f0_per_s, thickness_m, reduced_gravity_m_per_s2)) {
    radii.push_back(1.0 / std::sqrt(lambda));
  }
  return radii;  // ascending lambda gives descending radii
}

double munk_width_m(double viscosity_m2_per_s, double beta_per_m_s) {
  if (viscosity_m2_per_s <= 0.0) return 0.0;
  return beta_per_m_s > 0.0 ? std::cbrt(viscosity_m2_per_s / beta_per_m_s) : kInf;
}

double biharmonic_munk_width_m(double biharmonic_m4_per_s, double beta_per_m_s) {
  if (biharmonic_m4_per_s <= 0.0) return 0.0;
  return beta_per_m_s > 0.0 ? std::pow(biharmonic_m4_per_s / beta_per_m_s, 0.2) : kInf;
}

double stommel_width_m(double bottom_drag_per_s, double beta_per_m_s) {
  if (bottom_drag_per_s <= 0.0) return 0.0;
  return beta_per_m_s > 0.0 ? bottom_drag_per_s / beta_per_m_s : kInf;
}

double wind_stress_x(const WindSpec& w, double ly_m, double y_m) {
  const double a = w.asymmetry;
  switch (w.shape) {
    case WindShape::single_gyre: {
      const double k = kPi / ly_m;
      return -w.tau0_n_per_m2 * std::cos(k * y_m) * (1.0 + a * std::sin(k * y_m));
    }
    case WindShape::double_gyre: {
      const double k = 2.0 * kPi / ly_m;
      return -w.tau0_n_per_m2 * std::cos(k * y_m) * (1.0 + a * (2.0 * y_m / ly_m - 1.0));
    }
    case WindShape::table: {
      const auto& ys = w.table_y_m;
      const auto& taus = w.table_tau_x_n_per_m2;
      if (ys.empty()) return 0.0;
      if (y_m <= ys.front()) return taus.front();
      if (y_m >= ys.back()) return taus.back();
      const auto hi =
          static_cast<std::size_t>(std::upper_bound(ys.begin(), ys.end(), y_m) - ys.begin());
      const std::size_t lo = hi - 1;
      const double t = (y_m - ys[lo]) / (ys[hi] - ys[lo]);
      return taus[lo] + t * (taus[hi] - taus[lo]);
    }
  }
  return 0.0;
}

double max_wind_curl(const WindSpec& w, double ly_m) {
  if (w.shape == WindShape::table) {
    double best = 0.0;
    for (std::size_t i = 1; i < w.table_y_m.size(); ++i) {
      const double slope = (w.table_tau_x_n_per_m2[i] - w.table_tau_x_n_per_m2[i - 1]) /
                           (w.table_y_m[i] - w.table_y_m[i - 1]);
      best = std::max(best, std::abs(slope));
    }
    return best;
  }
  // Sampled on a grid that holds the symmetric maxima (Ly/2 and Ly/4, 3Ly/4) exactly; with an
  // asymmetry the maximum moves and is found to O(1/samples^2).
  constexpr int kSamples = 20000;
  double best = 0.0;
  for (int j = 0; j <= kSamples; ++j) {
    const double y = ly_m * static_cast<double>(j) / kSamples;
    best = std::max(best, std::abs(wind_stress_x_slope(w, ly_m, y)));
  }
  return best;
}

double friction_dt_limit_s(double viscosity_m2_per_s, double biharmonic_m4_per_s, double dx_m,
                           double dy_m) {
  const double s = 1.0 / (dx_m * dx_m) + 1.0 / (dy_m * dy_m);
  const double rate = viscosity_m2_per_s * s / kAb3LaplacianBound +
                      biharmonic_m4_per_s * s * s / kAb3BiharmonicBound;
  return rate > 0.0 ? 1.0 / rate : kInf;
}

double cfl_dt_limit_s(double speed_m_per_s, double dx_m, double dy_m, double cfl_limit) {
  const double rate = speed_m_per_s * (1.0 / dx_m + 1.0 / dy_m);
  return rate > 0.0 ? cfl_limit / rate : kInf;
}

GridNumbers derive_grid(const Case& c, const GridSpec& grid, double sverdrup_transport_m3_per_s,
                        const std::vector<double>& radii_m) {
  GridNumbers g;
  g.nx = grid.nx;
  g.ny = grid.ny;
  g.dx_m = c.lx_m / grid.nx;
  g.dy_m = c.ly_m / grid.ny;
  g.dt_s = grid.dt_s;
  const double coarser = std::max(g.dx_m, g.dy_m);
  for (double ld : radii_m) g.intervals_per_radius.push_back(ld / coarser);

  // The western boundary layer is a width in x, so it is counted in dx.
  g.munk_width_m = munk_width_m(grid.viscosity_m2_per_s, c.beta_per_m_s);
  g.munk_intervals = g.munk_width_m / g.dx_m;
  g.biharmonic_width_m = biharmonic_munk_width_m(grid.biharmonic_m4_per_s, c.beta_per_m_s);
  g.biharmonic_intervals = g.biharmonic_width_m / g.dx_m;
  g.stommel_width_m = stommel_width_m(c.friction.bottom_drag_per_s, c.beta_per_m_s);
  g.stommel_intervals = g.stommel_width_m / g.dx_m;

  double factor = 1.0;
  if (g.munk_width_m >= g.biharmonic_width_m && g.munk_width_m >= g.stommel_width_m &&
      g.munk_width_m > 0.0) {
    g.boundary_layer = "Munk";
    g.boundary_width_m = g.munk_width_m;
    factor = munk_peak_factor();
  } else if (g.biharmonic_width_m >= g.stommel_width_m && g.biharmonic_width_m > 0.0) {
    g.boundary_layer = "biharmonic Munk";
    g.boundary_width_m = g.biharmonic_width_m;
  } else if (g.stommel_width_m > 0.0) {
    g.boundary_layer = "Stommel";
    g.boundary_width_m = g.stommel_width_m;
  } else {
    g.boundary_layer = "grid";
    g.boundary_width_m = g.dx_m;
  }
  const double peak = 1.0 + c.wind.seasonal_amplitude;
  const double h1 = c.thickness_m.empty() ? 1.0 : c.thickness_m.front();
  const double transport = peak * sverdrup_transport_m3_per_s;
  g.interior_speed_m_per_s = transport / (h1 * c.lx_m);
  g.boundary_speed_m_per_s = factor * transport / (h1 * g.boundary_width_m);

  const double cfl_limit = c.run.cfl_limit;
  g.cfl_dt_interior_s = cfl_dt_limit_s(g.interior_speed_m_per_s, g.dx_m, g.dy_m, cfl_limit);
  g.cfl_dt_boundary_s = cfl_dt_limit_s(g.boundary_speed_m_per_s, g.dx_m, g.dy_m, cfl_limit);
  const double inverse_spacing = 1.0 / g.dx_m + 1.0 / g.dy_m;
  g.cfl_interior = g.interior_speed_m_per_s * inverse_spacing * g.dt_s;
  g.cfl_boundary = g.boundary_speed_m_per_s * inverse_spacing * g.dt_s;

  g.friction_dt_laplacian_s = friction_dt_limit_s(grid.viscosity_m2_per_s, 0.0, g.dx_m, g.dy_m);
  g.friction_dt_biharmonic_s = friction_dt_limit_s(0.0, grid.biharmonic_m4_per_s, g.dx_m, g.dy_m);
  g.friction_dt_s =
      friction_dt_limit_s(grid.viscosity_m2_per_s, grid.biharmonic_m4_per_s, g.dx_m, g.dy_m);
  g.friction_number = std::isfinite(g.friction_dt_s) ? g.dt_s / g.friction_dt_s : 0.0;

  const double exact_steps = c.run.length_s / g.dt_s;
  // A length that is a whole number of steps up to rounding is not rounded up to one more.
  g.steps = static_cast<long long>(std::ceil(exact_steps * (1.0 - 1e-12)));
  g.node_layer_steps = static_cast<double>(grid.nx + 1) * static_cast<double>(grid.ny + 1) *
                       static_cast<double>(c.layers()) * static_cast<double>(g.steps);
  g.estimated_wall_s = g.node_layer_steps * kCostPerNodeLayerStep_s;
  return g;
}

DerivedNumbers derive(const Case& c) {
  DerivedNumbers d;
  d.eigenvalues_per_m2 =
      baroclinic_eigenvalues_per_m2(c.f0_per_s, c.thickness_m, c.reduced_gravity_m_per_s2);
  d.deformation_radii_m =
      deformation_radii_m(c.f0_per_s, c.thickness_m, c.reduced_gravity_m_per_s2);
  d.max_wind_curl_n_per_m3 = max_wind_curl(c.wind, c.ly_m);
  d.sverdrup_transport_m3_per_s =
      c.beta_per_m_s > 0.0 ? c.lx_m * d.max_wind_curl_n_per_m3 / (c.rho0_kg_per_m3 * c.beta_per_m_s)
                           : kInf;
  if (d.deformation_radii_m.empty()) {
    d.rossby_crossing_s = kInf;
    d.spinup_crossings = 0.0;
  } else {
    const double ld1 = d.deformation_radii_m.front();
    d.rossby_crossing_s = c.lx_m / (c.beta_per_m_s * ld1 * ld1);
    d.spinup_crossings = c.run.spinup_s / d.rossby_crossing_s;
  }
  d.truth = derive_grid(c, c.truth, d.sverdrup_transport_m3_per_s, d.deformation_radii_m);
  d.coarse = derive_grid(c, c.coarse, d.sverdrup_transport_m3_per_s, d.deformation_radii_m);
  return d;
}

std::vector<Finding> assess(const Case& c, const DerivedNumbers& d) {
  std::vector<Finding> out;
  const auto add = [&](Finding::Severity severity, std::string grid, std::string message) {
    out.push_back({severity, std::move(grid), std::move(message)});
  };
  using Severity = Finding::Severity;
  const double limit = c.run.cfl_limit;

  const auto per_grid = [&](const std::string& name, const GridNumbers& g, const GridSpec& spec) {
    const std::string dt = "dt = " + sig3(g.dt_s) + " s";
    if (g.cfl_interior > limit) {
      add(Severity::failure, name,
          dt + " breaks the CFL limit even in the slow Sverdrup interior: estimated CFL " +
              one_decimal(g.cfl_interior) + " > cfl_limit " + sig3(limit) +
              "; dt <= " + sig3(g.cfl_dt_interior_s) + " s");
    } else if (g.cfl_boundary > kBadCflFactor * limit) {
      add(Severity::failure, name,
          dt + " breaks the CFL limit badly in the boundary current: estimated CFL " +
              one_decimal(g.cfl_boundary) + " > " + sig3(kBadCflFactor) + " x cfl_limit " +
              sig3(limit) + "; dt <= " + sig3(g.cfl_dt_boundary_s) + " s keeps it at the limit");
    } else if (g.cfl_boundary > limit) {
      add(Severity::warning, name,
          dt + " exceeds the boundary-current CFL estimate: CFL " + one_decimal(g.cfl_boundary) +
              " > cfl_limit " + sig3(limit) + " (dt <= " + sig3(g.cfl_dt_boundary_s) +
              " s); the run stops if the real flow breaks the limit");
    }
    if (g.friction_number > 1.0) {
      add(Severity::failure, name,
          dt + " exceeds the AB3 friction stability bound " + sig3(g.friction_dt_s) +
              " s (A2 dt s / (3/22) + A4 dt s^2 / (3/88) = " + one_decimal(g.friction_number) +
              " > 1, s = 1/dx^2 + 1/dy^2): grid-scale noise grows");
    }
    if (spec.viscosity_m2_per_s <= 0.0 && spec.biharmonic_m4_per_s <= 0.0) {
      add(Severity::warning, name,
          "no lateral friction (viscosity and biharmonic both 0): nothing removes enstrophy at "
          "the grid scale");
    }
    const double layer_intervals = std::max(g.munk_intervals, g.biharmonic_intervals);
    if (layer_intervals > 0.0 && layer_intervals < kMinBoundaryLayerIntervals) {
      add(Severity::warning, name,
          "the lateral friction layer is resolved by " + one_decimal(layer_intervals) +
              " grid intervals, fewer than " + sig3(kMinBoundaryLayerIntervals) +
              " (PHYSICS.md 3): the western boundary current will be noisy");
    }
  };
  per_grid("truth", d.truth, c.truth);
  per_grid("coarse", d.coarse, c.coarse);

  if (!d.truth.intervals_per_radius.empty() &&
      d.truth.intervals_per_radius.front() < kMinTruthIntervalsPerLd1) {
    add(Severity::warning, "truth",
        "the truth resolves Ld1 = " + sig3(d.deformation_radii_m.front() / 1000.0) + " km by " +
            one_decimal(d.truth.intervals_per_radius.front()) + " grid intervals, fewer than " +
            sig3(kMinTruthIntervalsPerLd1) + " (eddy-permitting): it may form no plateau");
  }
  if (std::isfinite(d.rossby_crossing_s) && d.spinup_crossings < kMinSpinupCrossings) {
    add(Severity::warning, "",
        "the spin-up is " + one_decimal(d.spinup_crossings) +
            " first-baroclinic Rossby crossing times Lx/(beta Ld1^2) = " +
            sig3(d.rossby_crossing_s / (365.0 * 86400.0)) +
            " years; PHYSICS.md 5 asks for "
            "several (" +
            sig3(kMinSpinupCrossings) + " or more) before time means start");
  }
  return out;
}

}  // namespace plateau
