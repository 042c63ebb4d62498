#include "harness/model/wind.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>

namespace plateau {

double Wind::stress_x(double y, double ly) const {
  const double pi = std::numbers::pi;
  switch (profile) {
    case WindProfile::single_gyre:
      return -tau0 * std::cos(pi * y / ly) * (1.0 + asymmetry * std::sin(pi * y / ly));
    case WindProfile::double_gyre:
      return -tau0 * std::cos(2.0 * pi * y / ly) * (1.0 + asymmetry * (2.0 * y / ly - 1.0));
    case WindProfile::table: {
      if (table_y_m.empty()) return 0.0;
      if (y <= table_y_m.front()) return table_tau_x.front();
      if (y >= table_y_m.back()) return table_tau_x.back();
      const auto it = std::upper_bound(table_y_m.begin(), table_y_m.end(), y);
      const auto k = static_cast<std::size_t>(it - table_y_m.begin());
      const double w = (y - table_y_m[k - 1]) / (table_y_m[k] - table_y_m[k - 1]);
      return (1.0 - w) * table_tau_x[k - 1] + w * table_tau_x[k];
    }
  }
  return 0.0;
}

double Wind::curl(double y, double ly, double dy) const {
  const double pi = std::numbers::pi;
  switch (profile) {
    case WindProfile::single_gyre: {
      const double th = pi * y / ly;
      // d/dy tau_x = tau0 (pi/Ly) [sin th - a cos 2 th]
      return -tau0 * (pi / ly) * (std::sin(th) - asymmetry * std::cos(2.0 * th));
    }
    case WindProfile::double_gyre: {
      const double th = 2.0 * pi * y / ly;
      const double dtau =
          tau0 * (2.0 * pi / ly) * std::sin(th) * (1.0 + asymmetry * (2.0 * y / ly - 1.0)) -
          tau0 * std::cos(th) * (2.0 * asymmetry / ly);
      return -dtau;
    }
    case WindProfile::table:
      return -(stress_x(y + 0.5 * dy, ly) - stress_x(y - 0.5 * dy, ly)) / dy;
  }
  return 0.0;
}

double Wind::seasonal_factor(double t_s) const {
  if (seasonal_amplitude == 0.0) return 1.0;
  return 1.0 + seasonal_amplitude * std::sin(2.0 * std::numbers::pi * t_s / seasonal_period_s);
}

}  // namespace plateau
