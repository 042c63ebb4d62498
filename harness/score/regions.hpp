#pragma once
// Gyre regions, masks and the finite differences the metrics share (SCORING.md, metrics).
//
// A gyre is anticyclonic where psi - c > 0 (clockwise in the northern hemisphere: the
// subtropical gyre) and cyclonic where psi - c < 0. Its region at a level L > 0 is the connected
// set (4-neighbour, interior nodes) around the gyre's extremum of mean psi - c where
// s (psi - c) >= L, with s = +1 (anticyclonic) or -1 (cyclonic). The gyre region G of the plateau
// metrics takes L = theta |extremum| (theta = 0.3 by default).

#include <string>

#include <Eigen/Core>

#include "harness/model/grid.hpp"

namespace plateau {

// One flag per node, laid out like a Field.
using Mask = Eigen::Array<bool, Eigen::Dynamic, Eigen::Dynamic>;

enum class Gyre { anticyclonic, cyclonic };

// "anticyclonic" or "cyclonic": the word used in metric ids.
std::string gyre_name(Gyre g);
// +1 for anticyclonic, -1 for cyclonic.
double gyre_sign(Gyre g);

// The interior node where s (f - c) is largest, if it is positive there.
struct Extremum {
  bool found = false;
  int i = 0;
  int j = 0;
  double value = 0.0;  // f - c at that node (signed)
};
Extremum gyre_extremum(const Grid& g, const Field& f, double c, Gyre gyre);

// The connected interior region around (i0, j0) where s (f - c) >= level; empty when the seed
// itself is below the level.
Mask connected_region(const Grid& g, const Field& f, double c, Gyre gyre, double level, int i0,
                      int j0);

struct GyreRegion {
  Gyre gyre = Gyre::anticyclonic;
  Extremum extremum;
  double level = 0.0;  // theta |extremum|, m^2 s^-1
  Mask mask;           // empty mask (all false) when the field has no such gyre
  [[nodiscard]] int size() const { return static_cast<int>(mask.count()); }
  [[nodiscard]] bool empty() const { return size() == 0; }
};
// The gyre region at threshold theta (a fraction of |extremum|) of field f with wall value c.
GyreRegion gyre_region(const Grid& g, const Field& f, double c, Gyre gyre, double theta);

[[nodiscard]] Mask empty_mask(const Grid& g);

// Sum of f over the nodes of m times dx dy (each node stands for its dx dy cell).
double region_integral(const Grid& g, const Field& f, const Mask& m);

// Centred first differences at the interior nodes; wall nodes of fx and fy are 0.
void centred_gradient(const Grid& g, const Field& f, Field& fx, Field& fy);
// |grad f| from centred_gradient.
Field gradient_magnitude(const Grid& g, const Field& f);

}  // namespace plateau
