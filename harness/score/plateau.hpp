#pragma once
// PV plateau metrics inside a gyre region G (SCORING.md, PV plateau). Pure functions of the mean
// fields; statistics over the nodes of G weigh each node equally (a uniform grid).
//
//   homogeneity     1 - std_G(q) / std_G(beta (y - y0)): 0 when q varies as much as the planetary
//                   gradient alone, 1 when uniform (0 for a region without meridional extent)
//   plateau mask P  nodes of G where |grad q| < epsilon beta (centred differences)
//   area fraction   |P| / |G|
//   overlap         |P_t & P_c| / |P_t | P_c| (0 when both are empty)
//   plateau level   mean q over P (undefined for an empty P)
//   q-psi slope     least-squares dq/dpsi over G times (max_G psi - min_G psi) /
//                   (beta (y_max - y_min) of G): dimensionless, near 0 on a plateau
//   RMS difference  sqrt(mean over the interior nodes of (a - b)^2)

#include <optional>

#include "harness/model/grid.hpp"
#include "harness/score/regions.hpp"

namespace plateau {

double homogeneity(const Grid& g, const Field& q, const Mask& region, double beta);

Mask plateau_mask(const Grid& g, const Field& q, const Mask& region, double max_gradient);

double area_fraction(const Mask& part, const Mask& whole);

double overlap(const Mask& a, const Mask& b);

// Mean of f over the nodes of m; nothing for an empty mask.
std::optional<double> mean_over(const Field& f, const Mask& m);

// Population standard deviation of f over the nodes of m (0 for fewer than two nodes).
double std_over(const Field& f, const Mask& m);

double q_psi_slope(const Grid& g, const Field& q, const Field& psi, const Mask& region,
                   double beta);

// Basin-wide RMS of a - b over the interior nodes.
double rms_difference(const Grid& g, const Field& a, const Field& b);

}  // namespace plateau
