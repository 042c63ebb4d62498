#include "harness/score/energy.hpp"

#include <cmath>

namespace plateau {

EnergySplit energy_split(const Energy& time_mean, const Energy& of_mean_state) {
  EnergySplit s;
  s.total = time_mean.total();
  s.mean_flow = of_mean_state.total();
  s.eddy = s.total - s.mean_flow;
  return s;
}

Energy time_mean_energy(const EnergySeries& series, double window_start_s) {
  Energy m;
  int n = 0;
  for (std::size_t s = 0; s < series.t_s.size() && s < series.energy.size(); ++s) {
    if (series.t_s[s] <= window_start_s) continue;
    const Energy& e = series.energy[s];
    if (n == 0) {
      m.kinetic.assign(e.kinetic.size(), 0.0);
      m.potential.assign(e.potential.size(), 0.0);
    }
    for (std::size_t k = 0; k < e.kinetic.size() && k < m.kinetic.size(); ++k) {
      m.kinetic[k] += e.kinetic[k];
    }
    for (std::size_t k = 0; k < e.potential.size() && k < m.potential.size(); ++k) {
      m.potential[k] += e.potential[k];
    }
    ++n;
  }
  if (n > 0) {
    for (double& x : m.kinetic) x /= n;
    for (double& x : m.potential) x /= n;
  }
  return m;
}

EnergyTrend energy_trend(const std::vector<double>& t_s, const std::vector<double>& total,
                         double window_start_s, double limit_fraction) {
  EnergyTrend r;
  double st = 0.0;
  double se = 0.0;
  double t_first = 0.0;
  double t_last = 0.0;
  for (std::size_t s = 0; s < t_s.size() && s < total.size(); ++s) {
    if (t_s[s] < window_start_s) continue;
    if (r.samples == 0) t_first = t_s[s];
    t_last = t_s[s];
    st += t_s[s];
    se += total[s];
    ++r.samples;
  }
  if (r.samples == 0) return r;
  const double tm = st / r.samples;
  r.mean = se / r.samples;
  double stt = 0.0;
  double ste = 0.0;
  for (std::size_t s = 0; s < t_s.size() && s < total.size(); ++s) {
    if (t_s[s] < window_start_s) continue;
    const double dt = t_s[s] - tm;
    stt += dt * dt;
    ste += dt * (total[s] - r.mean);
  }
  r.slope = stt > 0.0 ? ste / stt : 0.0;
  r.window_s = t_last - t_first;
  r.fraction = r.mean != 0.0 ? std::abs(r.slope) * r.window_s / std::abs(r.mean) : 0.0;
  r.warn = r.fraction > limit_fraction;
  return r;
}

BudgetPowers budget_powers(const BudgetIntegrals& b) {
  BudgetPowers p;
  if (!(b.window_s > 0.0)) return p;
  const double inv = 1.0 / b.window_s;
  p.terms.wind = b.terms.wind * inv;
  p.terms.bottom_drag = b.terms.bottom_drag * inv;
  p.terms.lateral_friction = b.terms.lateral_friction * inv;
  p.terms.advection = b.terms.advection * inv;
  p.closure = b.closure * inv;
  p.storage = (b.energy_end - b.energy_start) * inv;
  p.residual = p.storage - p.terms.sum() - p.closure;
  return p;
}

double rossby_crossing_time(double lx_m, double beta, double ld1_m) {
  if (!(ld1_m > 0.0) || !(beta > 0.0)) return 0.0;
  return lx_m / (beta * ld1_m * ld1_m);
}

}  // namespace plateau
