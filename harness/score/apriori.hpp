#pragma once
// A priori skill of a closure against the truth's eddy forcing, on the coarse grid (SCORING.md,
// a priori skill). Tendencies are PV tendencies -div F (s^-2); fluxes are node-centred eddy PV
// flux vectors (m s^-2). Closure face fluxes are averaged to the nodes by the caller.
//
//   correlation  Pearson correlation of the closure's tendency with the truth's over the
//                interior nodes; 0 when either is uniform (a `none` closure: 0 by definition)
//   slope        least-squares slope of the closure's tendency on the truth's (1 is right,
//                0 for `none`)
//   K_eff        -F . grad q / |grad q|^2 (m^2 s^-1) at the interior nodes where
//                |grad q| > min_gradient (it blows up on a plateau), and its median there
//   K(psi)       contour form over closed mean-psi contours s (psi - c) = L of one gyre:
//                  K(L) = -sigma (outflow of F across the contour) / (integral of |grad q| along
//                  it)
//                with the contour taken as the boundary of the node region R(L) inside it (the
//                faces between a node of R and a 4-neighbour outside). The outflow is the area
//                integral of div F over R (divergence theorem); the line integral sums over those
//                faces |grad q| |n_f . grad psi| / |grad psi| times the face length, which counts
//                each face by its projection on the contour so that a staircase adds up to the
//                contour's length rather than its Manhattan length (face values: the mean of the
//                two nodes' centred gradients, n_f . grad psi the face's own difference); sigma is
//                the sign of the outward flux of grad q through those faces, so that a
//                down-gradient flux gives K > 0 whichever way q increases. A level whose region
//                is empty, or whose line integral is 0, gives K = 0.

#include <optional>
#include <vector>

#include "harness/model/grid.hpp"
#include "harness/score/regions.hpp"

namespace plateau {

struct TendencyRegression {
  double correlation = 0.0;
  double slope = 0.0;
};
TendencyRegression tendency_regression(const Grid& g, const Field& truth, const Field& closure);

struct KeffMap {
  Field k;                       // m^2 s^-1, 0 where not valid
  Mask valid;                    // |grad q| > min_gradient
  std::optional<double> median;  // nothing when no node is valid
};
KeffMap k_eff(const Grid& g, const Field& fx, const Field& fy, const Field& q, double min_gradient);

// Median of the values (mean of the two middle values for an even count); nothing when empty.
std::optional<double> median(std::vector<double> values);

struct ContourDiffusivity {
  std::vector<double> levels;             // L, m^2 s^-1 (s (psi - c) on the contour)
  std::vector<double> k;                  // m^2 s^-1
  std::vector<double> outflow;            // area integral of div F inside, m^2 s^-2
  std::vector<double> gradient_integral;  // integral of |grad q| along the contour, s^-1
};
ContourDiffusivity contour_diffusivity(const Grid& g, const Field& psi, double c, Gyre gyre,
                                       const Field& flux_divergence, const Field& q,
                                       const std::vector<double>& levels);

}  // namespace plateau
