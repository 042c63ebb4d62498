#pragma once
// The closed-contour PV budget of one layer's gyre (SCORING.md, closed-contour budget).
//
// For each level L > 0, R(L) is the connected region around the gyre's extremum where
// s (psi - c) >= L (s = +1 anticyclonic, -1 cyclonic): the inside of a closed mean-psi contour,
// since psi - c = 0 on the walls. Its time-mean PV budget, as area integrals over the nodes of R
// (each node its dx dy cell), in m^2 s^-2:
//   outflow   integral of div F_eddy     (= flux of the eddy PV flux out across the contour)
//   forcing   integral of the wind forcing W
//   friction  integral of the friction D (lateral friction and bottom drag)
//   storage   integral of the mean dq/dt over the window
//   residual  storage - (forcing + friction - outflow)
// The mean advection drops out: J(psi_bar, q_bar) integrates to zero inside a contour of psi_bar,
// so what the eddies carry out is what forcing and friction put in, less what is stored. The
// candidate's eddy flux is its closure flux plus the transient flux it resolves itself.

#include <vector>

#include "harness/model/grid.hpp"
#include "harness/score/regions.hpp"

namespace plateau {

// Time-mean PV budget fields of one layer, s^-2 on the interior nodes.
struct BudgetFields {
  Field eddy_divergence;  // div F_eddy
  Field forcing;          // W
  Field friction;         // D
  Field storage;          // (q_end - q_start) / window
};

struct ContourBudget {
  std::vector<double> levels;  // L, m^2 s^-1
  std::vector<double> area;    // m^2
  std::vector<double> outflow;
  std::vector<double> forcing;
  std::vector<double> friction;
  std::vector<double> storage;
  std::vector<double> residual;
};

ContourBudget contour_budget(const Grid& g, const Field& psi, double c, Gyre gyre,
                             const BudgetFields& fields, const std::vector<double>& levels);

}  // namespace plateau
