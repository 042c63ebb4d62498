#pragma once
// Energy metrics (SCORING.md, energy). Energies in m^5 s^-2, powers in m^5 s^-3 (times rho0:
// joules and watts), as Model::energy and Model::budget give them.
//
//   mean/eddy split   eddy = (time mean of the total energy) - (energy of the time-mean state);
//                     for a quadratic energy this is the energy of the fluctuations exactly
//   budget            time-mean power of each term = its integral over the window / window
//                     length; residual = (E_end - E_start) - sum of the integrals
//   equilibration     least-squares linear trend of the total energy over the averaging window;
//                     warn when |trend| * window length > fraction * mean energy

#include <vector>

#include "harness/model/model.hpp"

namespace plateau {

struct EnergySplit {
  double total = 0.0;      // time mean of the total energy
  double mean_flow = 0.0;  // energy of the time-mean state
  double eddy = 0.0;       // total - mean_flow
};
EnergySplit energy_split(const Energy& time_mean, const Energy& of_mean_state);

// One energy series over a run: times (s) and values sampled together.
struct EnergySeries {
  std::vector<double> t_s;
  std::vector<Energy> energy;
};

// Time mean of each part of the energy over the samples with t > window_start_s (equal weights
// per sample; like the run's time means, which take the steps after the spin-up). Empty energies
// when no sample is in the window.
Energy time_mean_energy(const EnergySeries& series, double window_start_s);

struct EnergyTrend {
  int samples = 0;
  double slope = 0.0;     // m^5 s^-3
  double mean = 0.0;      // m^5 s^-2
  double window_s = 0.0;  // last sample time - first sample time in the window
  double fraction = 0.0;  // |slope| window_s / mean (0 when the mean is 0)
  bool warn = false;      // fraction > limit
};
EnergyTrend energy_trend(const std::vector<double>& t_s, const std::vector<double>& total,
                         double window_start_s, double limit_fraction);

struct BudgetIntegrals {
  BudgetTerms terms;          // m^5 s^-2: time integrals over the window
  double closure = 0.0;       // m^5 s^-2
  double energy_start = 0.0;  // m^5 s^-2
  double energy_end = 0.0;    // m^5 s^-2
  double window_s = 0.0;      // s
};

struct BudgetPowers {
  BudgetTerms terms;      // m^5 s^-3
  double closure = 0.0;   // m^5 s^-3
  double storage = 0.0;   // (E_end - E_start) / window, m^5 s^-3
  double residual = 0.0;  // storage - sum of the terms, m^5 s^-3
};
BudgetPowers budget_powers(const BudgetIntegrals& b);

// The baroclinic Rossby-wave crossing time Lx / (beta Ld1^2), s (0 without a deformation radius).
double rossby_crossing_time(double lx_m, double beta, double ld1_m);

}  // namespace plateau
