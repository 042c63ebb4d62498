#include "harness/run/setup.hpp"

namespace plateau {

const char* role_name(GridRole role) { return role == GridRole::truth ? "truth" : "coarse"; }

const GridSpec& grid_spec(const Case& c, GridRole role) {
  return role == GridRole::truth ? c.truth : c.coarse;
}

Grid make_grid(const Case& c, GridRole role) {
  const GridSpec& g = grid_spec(c, role);
  return {g.nx, g.ny, c.lx_m, c.ly_m};
}

ModelParams make_model_params(const Case& c, GridRole role) {
  const GridSpec& g = grid_spec(c, role);
  ModelParams p;
  p.f0 = c.f0_per_s;
  p.beta = c.beta_per_m_s;
  p.rho0 = c.rho0_kg_per_m3;
  p.thickness_m = c.thickness_m;
  p.reduced_gravity = c.reduced_gravity_m_per_s2;
  switch (c.wind.shape) {
    case WindShape::single_gyre:
      p.wind.profile = WindProfile::single_gyre;
      break;
    case WindShape::double_gyre:
      p.wind.profile = WindProfile::double_gyre;
      break;
    case WindShape::table:
      p.wind.profile = WindProfile::table;
      break;
  }
  p.wind.tau0 = c.wind.tau0_n_per_m2;
  p.wind.asymmetry = c.wind.asymmetry;
  p.wind.seasonal_amplitude = c.wind.seasonal_amplitude;
  p.wind.seasonal_period_s = c.wind.seasonal_period_s;
  p.wind.table_y_m = c.wind.table_y_m;
  p.wind.table_tau_x = c.wind.table_tau_x_n_per_m2;
  p.a2 = g.viscosity_m2_per_s;
  p.a4 = g.biharmonic_m4_per_s;
  p.bottom_drag = c.friction.bottom_drag_per_s;
  switch (c.friction.wall) {
    case WallCondition::free_slip:
      p.wall = WallKind::free_slip;
      break;
    case WallCondition::no_slip:
      p.wall = WallKind::no_slip;
      break;
    case WallCondition::partial_slip:
      p.wall = WallKind::partial_slip;
      break;
  }
  p.slip_length_m = c.friction.slip_length_m;
  p.dt = g.dt_s;
  return p;
}

}  // namespace plateau
