#pragma once
// Gyre transport metrics (SCORING.md, gyre transport). Every transport uses psi_k - c_k.
//
//   barotropic transport streamfunction  T = sum_k H_k (psi_k - c_k), m^3 s^-1, zero on the walls
//   gyre transport                        the extremum of T (or of H_k (psi_k - c_k)) over the gyre
//   western boundary current              along the row of the gyre's extremum of T, the value of
//                                         T at its first local extremum (of the gyre's sign)
//                                         eastward from the western wall: the meridional
//                                         transport between the wall and the first reversal of
//                                         v = T_x, i.e. the boundary current itself
//   jet penetration (double gyre)         along the row between the two gyres' extremum rows
//                                         whose zonal mean of T is closest to zero (the latitude
//                                         of zero mean barotropic transport), the eastward
//                                         distance from the western wall to where the top-layer
//                                         u = -psi_y (centred), going east from its maximum,
//                                         first falls below fraction * max (linear
//                                         interpolation between the nodes); 0 without an
//                                         eastward jet

#include <vector>

#include "harness/model/grid.hpp"
#include "harness/score/regions.hpp"

namespace plateau {

inline constexpr double kSverdrup = 1.0e6;  // m^3 s^-1

Field barotropic_transport(const std::vector<Field>& psi, const std::vector<double>& wall_psi,
                           const std::vector<double>& thickness_m);

// T at the first local extremum of the gyre's sign eastward from the western wall, along the
// row of the gyre's extremum; 0 when the field has no such gyre. m^3 s^-1.
double western_boundary_transport(const Grid& g, const Field& transport, Gyre gyre);

// The row of zero mean barotropic transport between the two gyres, or -1 when the field does not
// hold both gyres.
int zero_transport_row(const Grid& g, const Field& transport);

// Jet penetration length in m (see the header comment).
double jet_penetration(const Grid& g, const Field& transport, const Field& psi_top,
                       double fraction);

}  // namespace plateau
