#pragma once
// Coarse-graining of truth fields onto the candidate's grid (SCORING.md, coarse-graining).
//
// The coarse spacing is r truth spacings in both directions, r even (or r = 1: identical grids,
// the field is copied). Each interior coarse node (I, J) sits on truth node (r I, r J) and gets
// the top-hat average of width r dx_truth over the (r+1) x (r+1) truth nodes centred on it, with
// trapezoid weights (1/2 on the stencil's edges, 1/4 at its corners) normalised by r^2:
//
//   f_c(I, J) = (1/r^2) sum_{a,b = -r/2..r/2} w_a w_b f(r I + a, r J + b)
//   w_a = 1/2 at a = +-r/2, else 1
//
// Wall nodes take the truth value of the wall node they sit on (for psi: the wall value c_k).
//
// Known damping: a sine mode sin(k x) comes through multiplied, per direction, by
//   D(theta) = (1/r) sum_a w_a cos(a theta) = sin(r theta / 2) cot(theta / 2) / r,
// theta = k dx_truth (D(0) = 1); the odd part of the stencil cancels, so the phase is unchanged.
//
// Preserved integral: adjacent stencils share their edge nodes at half weight each, so the plain
// sum over the interior coarse nodes times DX DY equals exactly the truth's trapezoid integral
// over the inner rectangle [DX/2, Lx - DX/2] x [DY/2, Ly - DY/2]. Against the whole basin the
// difference is the integral over the walls' half cells, bounded by max |f - c| there times their
// area (Lx DY + Ly DX - DX DY) for a field f that equals c on the walls.
//
// Truth q, u, v and energy on the coarse grid come from the filtered psi with the coarse model's
// own operators (Model::state_from_psi, Model::energy), so truth and candidate share one ruler.

#include <vector>

#include "harness/model/grid.hpp"
#include "harness/model/model.hpp"

namespace plateau {

// r with truth.nx = r coarse.nx and truth.ny = r coarse.ny over the same basin; throws
// std::invalid_argument naming the grids when they are not an exact, even multiple (r = 1 is
// accepted: identical grids).
int coarse_ratio(const Grid& truth, const Grid& coarse);

// The top-hat filter of one truth field onto the coarse grid (see the header comment).
Field coarse_grain(const Grid& truth, const Grid& coarse, const Field& f);
std::vector<Field> coarse_grain(const Grid& truth, const Grid& coarse, const std::vector<Field>& f);

// The per-direction damping of a sine mode, sin(r theta / 2) cot(theta / 2) / r with
// theta = k dx_truth in radians; 1 at theta = 0 (and for r = 1, where nothing is filtered).
double filter_damping(int r, double theta);
// The same for a wavenumber k (rad m^-1) on a truth grid of spacing dx_truth (m).
double filter_damping_wavenumber(int r, double k_per_m, double dx_truth_m);

// Centred velocities u = -psi_y, v = psi_x at the interior nodes (the differences max_cfl uses).
// On the walls the normal component is 0 and the tangential one is the one-sided second-order
// difference (-3 psi_0 + 4 psi_1 - psi_2) / (2 dn) along the normal; corners are 0.
void velocities(const Grid& g, const Field& psi, Field& u, Field& v);

// Fields of one coarse state measured with the coarse model's operators.
struct CoarseFields {
  ModelState state;      // psi, q (walls from the model's wall rules), zeta, wall_psi c_k
  std::vector<Field> u;  // m s^-1, per layer
  std::vector<Field> v;  // m s^-1, per layer
  Energy energy;         // m^5 s^-2
};

// q, u, v and energy of coarse-grid layer streamfunctions (constant on each wall, as filtered
// psi is) with the coarse model's own operators.
CoarseFields coarse_fields(const Model& coarse, const std::vector<Field>& coarse_psi);

// Truth layer streamfunctions on the truth grid -> filtered psi -> coarse_fields.
CoarseFields coarse_grain_truth(const Model& coarse, const Grid& truth,
                                const std::vector<Field>& truth_psi);

}  // namespace plateau
