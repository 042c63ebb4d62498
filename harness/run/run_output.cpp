#include "harness/run/run_output.hpp"

namespace plateau {
namespace {

std::size_t uz(int k) { return static_cast<std::size_t>(k); }

std::vector<double> stack(const std::vector<Field>& fields) {
  std::vector<double> out;
  for (const Field& f : fields) out.insert(out.end(), f.data(), f.data() + f.size());
  return out;
}

}  // namespace

void write_run_netcdf(const RunRecord& r, const Model& model, const std::filesystem::path& path,
                      const io::FileDescription& description,
                      const std::vector<ExtraField>& extra) {
  const Grid& g = model.grid();
  const int n = model.n_layers();
  const double rho0 = model.params().rho0;
  io::NetcdfWriter w(path, description);

  std::vector<double> xs(uz(g.nx + 1));
  std::vector<double> ys(uz(g.ny + 1));
  for (int i = 0; i <= g.nx; ++i) xs[uz(i)] = g.x(i);
  for (int j = 0; j <= g.ny; ++j) ys[uz(j)] = g.y(j);
  w.add_x_coordinate(xs);
  w.add_y_coordinate(ys);
  w.add_layer_coordinate(n);
  if (n > 1) w.add_dimension("interface", uz(n - 1));
  w.add_time_dimension();
  w.add_dimension("series_time", r.series.size());

  w.define_variable({"layer_thickness", {"layer"}, "m", "layer thickness at rest", "", false});
  if (n > 1) {
    w.define_variable({"reduced_gravity",
                       {"interface"},
                       "m s-2",
                       "reduced gravity at the interface below the layer",
                       "",
                       false});
  }
  w.define_variable({"psi",
                     {"layer", "y", "x"},
                     "m2 s-1",
                     "time-mean layer streamfunction (u = -dpsi/dy, v = dpsi/dx)",
                     "",
                     true});
  w.define_variable({"q",
                     {"layer", "y", "x"},
                     "s-1",
                     "time-mean quasi-geostrophic potential vorticity",
                     "",
                     true});
  w.define_variable({"psi_wall",
                     {"layer"},
                     "m2 s-1",
                     "time-mean wall value c_k of the layer streamfunction (mass constraint)",
                     "",
                     false});
  w.define_variable({"barotropic_streamfunction",
                     {"y", "x"},
                     "m3 s-1",
                     "time-mean barotropic transport streamfunction sum_k H_k (psi_k - c_k)",
                     "ocean_barotropic_streamfunction",
                     true});
  w.define_variable({"psi_snapshot",
                     {"time", "layer", "y", "x"},
                     "m2 s-1",
                     "layer streamfunction, instantaneous",
                     "",
                     true});
  w.define_variable({"q_snapshot",
                     {"time", "layer", "y", "x"},
                     "s-1",
                     "potential vorticity, instantaneous",
                     "",
                     true});
  w.define_variable({"series_t",
                     {"series_time"},
                     std::string(io::kTimeUnits),
                     "time of the energy series samples",
                     "",
                     false});
  w.put_attribute("series_t", "calendar", io::kTimeCalendar);
  w.define_variable({"kinetic_energy",
                     {"series_time", "layer"},
                     "J",
                     "basin-integrated kinetic energy of the layer (times rho0)",
                     "",
                     false});
  if (n > 1) {
    w.define_variable({"potential_energy",
                       {"series_time", "interface"},
                       "J",
                       "basin-integrated available potential energy of the interface",
                       "",
                       false});
  }
  w.define_variable({"total_energy", {"series_time"}, "J", "total energy", "", false});
  const char* terms[] = {"wind_work", "bottom_drag_work", "lateral_friction_work", "advection_work",
                         "closure_work"};
  const char* term_names[] = {
      "energy input by the wind", "energy tendency of bottom drag",
      "energy tendency of lateral friction",
      "energy tendency of advection (zero to rounding with the Arakawa Jacobian)",
      "energy tendency of the eddy closure"};
  for (int t = 0; t < 5; ++t) {
    w.define_variable({terms[t], {"series_time"}, "W", term_names[t], "", false});
  }
  for (const ExtraField& e : extra) {
    w.define_variable({e.name,
                       {e.on_interfaces ? "interface" : "layer", "y", "x"},
                       e.units,
                       e.long_name,
                       "",
                       true});
  }

  w.put_global_attribute("model_time_end_s", r.t_end);
  w.put_global_attribute("time_step_s", r.dt);
  w.put_global_attribute("steps", r.steps);
  w.put_global_attribute("mean_window_start_s", r.mean_start_s);
  w.put_global_attribute("mean_count", r.mean_count);
  w.put_global_attribute("rho0_kg_m-3", rho0);
  w.put_global_attribute("f0_s-1", model.params().f0);
  w.put_global_attribute("beta_m-1_s-1", model.params().beta);
  w.put_global_attribute("budget_window_energy_change_J",
                         rho0 * (r.energy_window_end - r.energy_window_start));
  w.put_global_attribute("budget_window_wind_J", rho0 * r.budget_integral.wind);
  w.put_global_attribute("budget_window_bottom_drag_J", rho0 * r.budget_integral.bottom_drag);
  w.put_global_attribute("budget_window_lateral_friction_J",
                         rho0 * r.budget_integral.lateral_friction);
  w.put_global_attribute("budget_window_advection_J", rho0 * r.budget_integral.advection);
  w.put_global_attribute("budget_window_closure_J", rho0 * r.closure_integral);
  w.put_global_attribute("budget_window_residual_J", rho0 * r.budget_residual());

  w.write("layer_thickness", model.params().thickness_m);
  if (n > 1) w.write("reduced_gravity", model.params().reduced_gravity);
  if (r.mean_count > 0) {
    w.write("psi", stack(r.mean_psi));
    w.write("q", stack(r.mean_q));
    w.write("psi_wall", r.mean_wall_psi);
    Field bt = g.zeros();
    for (int k = 0; k < n; ++k) {
      bt += model.params().thickness_m[uz(k)] * (r.mean_psi[uz(k)] - r.mean_wall_psi[uz(k)]);
    }
    w.write("barotropic_streamfunction", {bt.data(), static_cast<std::size_t>(bt.size())});
  }
  for (std::size_t m = 0; m < r.snapshot_t.size(); ++m) {
    w.write_time(m, r.snapshot_t[m]);
    w.write_record("psi_snapshot", m, stack(r.snapshot_psi[m]));
    w.write_record("q_snapshot", m, stack(r.snapshot_q[m]));
  }
  std::vector<double> st;
  std::vector<double> ke;
  std::vector<double> pe;
  std::vector<double> tot;
  std::vector<std::vector<double>> work(5);
  for (const SeriesSample& x : r.series) {
    st.push_back(x.t);
    for (double v : x.kinetic) ke.push_back(rho0 * v);
    for (double v : x.potential) pe.push_back(rho0 * v);
    tot.push_back(rho0 * x.total);
    work[0].push_back(rho0 * x.terms.wind);
    work[1].push_back(rho0 * x.terms.bottom_drag);
    work[2].push_back(rho0 * x.terms.lateral_friction);
    work[3].push_back(rho0 * x.terms.advection);
    work[4].push_back(rho0 * x.closure);
  }
  if (!r.series.empty()) {
    w.write("series_t", st);
    w.write("kinetic_energy", ke);
    if (n > 1) w.write("potential_energy", pe);
    w.write("total_energy", tot);
    for (std::size_t t = 0; t < 5; ++t) w.write(terms[t], work[t]);
  }
  for (const ExtraField& e : extra) w.write(e.name, stack(e.per_layer));
  w.close();
}

}  // namespace plateau
