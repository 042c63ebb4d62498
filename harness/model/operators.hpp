#pragma once
// Finite-difference operators on the node grid. Each writes the interior nodes of its output
// (1..nx-1, 1..ny-1) unless it says otherwise; rows are split over threads, never reductions.

#include "harness/model/grid.hpp"

namespace plateau {

enum class WallKind { free_slip, no_slip, partial_slip };

// 5-point Laplacian at the interior nodes; wall nodes of out are left untouched.
void laplacian(const Grid& g, const Field& f, Field& out);

// Relative vorticity on the wall nodes from the wall condition, given psi with its constant
// wall value psi_w (PHYSICS.md section 3):
//   free slip     zeta_w = 0
//   no slip       zeta_w = 2 (psi_1 - psi_w) / dn^2           (Thom 1933; first order at the wall)
//   partial slip  zeta_w = 2 (psi_1 - psi_w) / (dn^2 (1 + 2 l / dn)), slip length l in m: from
//                 psi_1 = psi_w + dn psi_n + dn^2/2 psi_nn with psi_nn = zeta_w and the Navier
//                 condition psi_n = l zeta_w; l -> 0 gives no slip, l -> infinity free slip.
// psi_1 is the first interior node along the wall normal. Corners get 0.
void wall_vorticity(const Grid& g, const Field& psi, double psi_wall, WallKind wall,
                    double slip_length_m, Field& zeta);

// Arakawa (1966) Jacobian J(a, b) = a_x b_y - a_y b_x at the interior nodes: the mean of the
// three second-order forms J++, J+x, Jx+, which conserves energy and enstrophy in the interior.
void arakawa_jacobian(const Grid& g, const Field& a, const Field& b, Field& out);

// Centred d/dx at the interior nodes (the linear beta term beta psi_x).
void ddx_centred(const Grid& g, const Field& f, Field& out);

// Maximum advective CFL number max (|u|/dx + |v|/dy) dt over the interior with centred
// velocities u = -psi_y, v = psi_x; reports where.
struct CflReport {
  double cfl = 0.0;
  int i = 0;
  int j = 0;
};
CflReport max_cfl(const Grid& g, const Field& psi, double dt);

}  // namespace plateau
