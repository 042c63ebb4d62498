#include "harness/score/contour_budget.hpp"

namespace plateau {

ContourBudget contour_budget(const Grid& g, const Field& psi, double c, Gyre gyre,
                             const BudgetFields& fields, const std::vector<double>& levels) {
  ContourBudget b;
  b.levels = levels;
  const Extremum e = gyre_extremum(g, psi, c, gyre);
  for (const double level : levels) {
    const Mask inside =
        e.found ? connected_region(g, psi, c, gyre, level, e.i, e.j) : empty_mask(g);
    const double out = region_integral(g, fields.eddy_divergence, inside);
    const double w = region_integral(g, fields.forcing, inside);
    const double d = region_integral(g, fields.friction, inside);
    const double st = region_integral(g, fields.storage, inside);
    b.area.push_back(static_cast<double>(inside.count()) * g.cell_area());
    b.outflow.push_back(out);
    b.forcing.push_back(w);
    b.friction.push_back(d);
    b.storage.push_back(st);
    b.residual.push_back(st - (w + d - out));
  }
  return b;
}

}  // namespace plateau
