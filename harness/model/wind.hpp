#pragma once
// Zonal wind stress profiles and their curl (PHYSICS.md section 3). tau_x depends on y only; the
// forcing of the top layer is W_1 = curl_z(tau) / (rho0 H_1) with curl_z tau = -d(tau_x)/dy.

#include <vector>

namespace plateau {

enum class WindProfile { single_gyre, double_gyre, table };

struct Wind {
  WindProfile profile = WindProfile::double_gyre;
  double tau0 = 0.0;       // N m^-2
  double asymmetry = 0.0;  // dimensionless, see wind_stress_x
  double seasonal_amplitude = 0.0;
  double seasonal_period_s = 365.0 * 86400.0;
  std::vector<double> table_y_m;
  std::vector<double> table_tau_x;  // N m^-2

  // tau_x(y) at amplitude 1 of the seasonal factor:
  //   single gyre: -tau0 cos(pi y/Ly) (1 + a sin(pi y/Ly))
  //   double gyre: -tau0 cos(2 pi y/Ly) (1 + a (2 y/Ly - 1))
  //   table: linear interpolation, constant beyond the ends.
  [[nodiscard]] double stress_x(double y, double ly) const;
  // curl_z tau = -d(tau_x)/dy, analytic for the formulas; for a table the centred difference
  // of the interpolant over +-dy/2 (dy the grid spacing that samples it).
  [[nodiscard]] double curl(double y, double ly, double dy) const;
  // (1 + s sin(2 pi t / period)).
  [[nodiscard]] double seasonal_factor(double t_s) const;
};

}  // namespace plateau
