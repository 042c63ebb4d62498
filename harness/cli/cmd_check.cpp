// plateau check CASE: validate a case and print the numbers a modeller looks at first. The
// numbers come from harness/case/derived.hpp; this file only prints them.

#include <cmath>
#include <iomanip>
#include <iostream>
#include <memory>
#include <sstream>
#include <string>
#include <vector>

#include <CLI/CLI.hpp>
#include <nlohmann/json.hpp>

#include "harness/case/case.hpp"
#include "harness/case/derived.hpp"
#include "harness/cli/cli.hpp"
#include "harness/closure_host/host.hpp"
#include "harness/closure_host/parameters.hpp"
#include "harness/closure_host/registry.hpp"
#include "harness/io/atomic_file.hpp"
#include "harness/run/setup.hpp"

namespace plateau::cli {
namespace {

constexpr double kKm = 1000.0;
constexpr double kSv = 1e6;                // m^3 s^-1
constexpr double kYear = 365.0 * 86400.0;  // model year, s (case.cpp)

// Three significant digits, no exponent between 1e-3 and 1e6, "-" for a quantity that does not
// apply (infinite or undefined).
std::string num(double v) {
  if (!std::isfinite(v)) return "-";
  if (v == 0.0) return "0";
  const double a = std::abs(v);
  std::ostringstream os;
  if (a >= 1e-3 && a < 1e6) {
    const int digits = std::max(0, 2 - static_cast<int>(std::floor(std::log10(a))));
    os << std::fixed << std::setprecision(digits) << v;
    return os.str();
  }
  const int exponent = static_cast<int>(std::floor(std::log10(a)));
  double mantissa = v / std::pow(10.0, exponent);
  os << std::fixed << std::setprecision(2) << mantissa << "e" << exponent;
  return os.str();
}

std::string duration(double seconds) {
  if (!std::isfinite(seconds)) return "-";
  if (seconds < 120.0) return num(seconds) + " s";
  if (seconds < 7200.0) return num(seconds) + " s (" + num(seconds / 60.0) + " min)";
  return num(seconds) + " s (" + num(seconds / 3600.0) + " h)";
}

std::string wind_name(WindShape s) {
  switch (s) {
    case WindShape::single_gyre:
      return "single-gyre";
    case WindShape::double_gyre:
      return "double-gyre";
    case WindShape::table:
      return "tabulated";
  }
  return "?";
}

std::string wall_name(WallCondition w) {
  switch (w) {
    case WallCondition::free_slip:
      return "free slip";
    case WallCondition::no_slip:
      return "no slip";
    case WallCondition::partial_slip:
      return "partial slip";
  }
  return "?";
}

// An aligned table: label, value columns, unit, note.
class Table {
 public:
  explicit Table(std::vector<std::string> header) : header_(std::move(header)) {}
  void row(std::vector<std::string> cells) { rows_.push_back(std::move(cells)); }
  void print(std::ostream& out) const {
    std::vector<std::size_t> width(header_.size(), 0);
    const auto measure = [&](const std::vector<std::string>& cells) {
      for (std::size_t i = 0; i < cells.size() && i < width.size(); ++i) {
        width[i] = std::max(width[i], cells[i].size());
      }
    };
    measure(header_);
    for (const auto& r : rows_) measure(r);
    const auto line = [&](const std::vector<std::string>& cells) {
      std::string s = "  ";
      for (std::size_t i = 0; i < cells.size(); ++i) {
        std::string cell = cells[i];
        if (i + 1 < cells.size()) cell.resize(width[i], ' ');
        s += cell;
        if (i + 1 < cells.size()) s += "  ";
      }
      while (!s.empty() && s.back() == ' ') s.pop_back();
      out << s << '\n';
    };
    line(header_);
    for (const auto& r : rows_) line(r);
  }

 private:
  std::vector<std::string> header_;
  std::vector<std::vector<std::string>> rows_;
};

// A closure the case names, with the numbers of its fractional step on the coarse grid at its
// diffusivity bound (harness/closure_host/host.hpp), or why they could not be computed.
struct ClosureNumbers {
  std::string name;
  bool known = false;
  ClosureStepNumbers step;
};

std::vector<ClosureNumbers> closure_numbers(const Case& c) {
  std::vector<ClosureNumbers> out;
  if (c.closures.empty()) return out;
  const closure::Setup setup =
      make_setup(make_grid(c, GridRole::coarse), make_model_params(c, GridRole::coarse));
  for (const ClosureChoice& choice : c.closures) {
    ClosureNumbers n;
    n.name = choice.name;
    const closure::Info* info = find_registered_closure(choice.name);
    if (info != nullptr) {
      const closure::Params params = resolve_params(*info, &choice, c.source, {});
      const auto instance = make_closure(*info, params, setup);
      n.known = true;
      n.step = closure_step_numbers(*instance, setup);
    }
    out.push_back(std::move(n));
  }
  return out;
}

void print_closures(const std::vector<ClosureNumbers>& closures, std::ostream& out) {
  if (closures.empty()) return;
  Table t(
      {"Closures (coarse grid)", "diffused", "K bound", "K dt s", "sub-steps", "K dt / Ld_min^2"});
  for (const ClosureNumbers& n : closures) {
    if (!n.known) {
      t.row({n.name, "not built in", "", "", "", ""});
      continue;
    }
    const ClosureStepNumbers& s = n.step;
    t.row({n.name, s.full_pv ? "full PV" : "stretching", num(s.k_bound_m2_per_s) + " m2/s",
           num(s.diffusion_number), std::to_string(s.substeps),
           s.full_pv ? "-" : num(s.stretching_stiffness)});
  }
  t.print(out);
  out << "  K dt s = K dt (1/dx^2 + 1/dy^2): a full-PV closure is sub-stepped to keep it <= 1/4;\n"
         "  a stretching closure takes one step, and its stiffness K dt / Ld_min^2 should stay "
         "below 1.\n\n";
}

void print_report(const Case& c, const DerivedNumbers& d, const std::vector<Finding>& findings,
                  std::ostream& out) {
  out << "plateau check: " << c.name << " (" << c.source.string() << ")\n";
  if (!c.description.empty()) out << "  " << c.description << '\n';
  std::string layers;
  for (std::size_t k = 0; k < c.thickness_m.size(); ++k) {
    layers += (k > 0 ? " / " : "") + num(c.thickness_m[k]);
  }
  out << "  " << (c.basin_name.empty() ? std::string("basin") : c.basin_name) << ": "
      << num(c.lx_m / kKm) << " x " << num(c.ly_m / kKm) << " km, " << c.layers()
      << (c.layers() == 1 ? " layer (" : " layers (") << layers << " m), "
      << wind_name(c.wind.shape) << " wind, " << wall_name(c.friction.wall) << " walls\n\n";

  Table basin({"Basin", "value", "unit", "formula"});
  basin.row({"f0", num(c.f0_per_s), "s^-1", ""});
  basin.row({"beta", num(c.beta_per_m_s), "m^-1 s^-1", ""});
  for (std::size_t m = 0; m < d.deformation_radii_m.size(); ++m) {
    basin.row({"deformation radius Ld" + std::to_string(m + 1), num(d.deformation_radii_m[m] / kKm),
               "km", m == 0 ? "1/sqrt(lambda_m), eigenvalues of the stretching matrix S" : ""});
  }
  if (d.deformation_radii_m.empty()) basin.row({"deformation radius", "-", "", "one layer"});
  basin.row({"max |curl tau|", num(d.max_wind_curl_n_per_m3), "N m^-3", "max_y |d tau_x/dy|"});
  basin.row({"Sverdrup transport", num(d.sverdrup_transport_m3_per_s / kSv), "Sv",
             "Lx max|curl tau| / (rho0 beta), mean wind"});
  basin.row({"Rossby crossing time", num(d.rossby_crossing_s / kYear), "years",
             "Lx / (beta Ld1^2), first baroclinic long wave"});
  basin.row({"spin-up", num(c.run.spinup_s / kYear), "years",
             std::isfinite(d.rossby_crossing_s) ? "= " + num(d.spinup_crossings) + " crossing times"
                                                : std::string("")});
  basin.row({"run length", num(c.run.length_s / kYear), "years", "model year = 365 days"});
  basin.print(out);
  out << '\n';

  const GridNumbers& t = d.truth;
  const GridNumbers& k = d.coarse;
  Table grid({"Grids", "truth", "coarse", "unit", "formula"});
  const auto both = [&](std::string label, auto value, std::string unit, std::string note) {
    grid.row({std::move(label), value(t), value(k), std::move(unit), std::move(note)});
  };
  both(
      "nx x ny",
      [](const GridNumbers& g) { return std::to_string(g.nx) + " x " + std::to_string(g.ny); }, "",
      "intervals; r = " + std::to_string(c.grid_ratio()));
  both(
      "dx, dy", [](const GridNumbers& g) { return num(g.dx_m / kKm) + ", " + num(g.dy_m / kKm); },
      "km", "");
  for (std::size_t m = 0; m < d.deformation_radii_m.size(); ++m) {
    both(
        "intervals per Ld" + std::to_string(m + 1),
        [m](const GridNumbers& g) { return num(g.intervals_per_radius[m]); }, "",
        m == 0 ? "Ld / max(dx, dy)" : "");
  }
  both(
      "Munk width", [](const GridNumbers& g) { return num(g.munk_width_m / kKm); }, "km",
      "(A2/beta)^(1/3)");
  both(
      "  intervals", [](const GridNumbers& g) { return num(g.munk_intervals); }, "",
      "Munk width / dx");
  if (c.truth.biharmonic_m4_per_s > 0.0 || c.coarse.biharmonic_m4_per_s > 0.0) {
    both(
        "biharmonic width", [](const GridNumbers& g) { return num(g.biharmonic_width_m / kKm); },
        "km", "(A4/beta)^(1/5)");
    both(
        "  intervals", [](const GridNumbers& g) { return num(g.biharmonic_intervals); }, "",
        "biharmonic width / dx");
  }
  both(
      "Stommel width", [](const GridNumbers& g) { return num(g.stommel_width_m / kKm); }, "km",
      "r/beta");
  both(
      "  intervals", [](const GridNumbers& g) { return num(g.stommel_intervals); }, "",
      "Stommel width / dx");
  both(
      "dt", [](const GridNumbers& g) { return num(g.dt_s); }, "s", "");
  both(
      "interior speed U_i", [](const GridNumbers& g) { return num(g.interior_speed_m_per_s); },
      "m/s", "Sverdrup interior: (1+s) T / (H1 Lx)");
  both(
      "boundary layer for U_b", [](const GridNumbers& g) { return g.boundary_layer; }, "",
      "widest friction layer d");
  both(
      "boundary speed U_b", [](const GridNumbers& g) { return num(g.boundary_speed_m_per_s); },
      "m/s", "c (1+s) T / (H1 d), c = " + num(munk_peak_factor()) + " for Munk (peak), else 1");
  both(
      "CFL dt limit, interior", [](const GridNumbers& g) { return num(g.cfl_dt_interior_s); }, "s",
      "cfl_limit / (U (1/dx + 1/dy)), cfl_limit = " + num(c.run.cfl_limit));
  both(
      "CFL dt limit, boundary", [](const GridNumbers& g) { return num(g.cfl_dt_boundary_s); }, "s",
      "the same with U_b");
  both(
      "CFL at dt, interior", [](const GridNumbers& g) { return num(g.cfl_interior); }, "",
      "U_i (1/dx + 1/dy) dt");
  both(
      "CFL at dt, boundary", [](const GridNumbers& g) { return num(g.cfl_boundary); }, "",
      "U_b (1/dx + 1/dy) dt");
  both(
      "friction dt limit", [](const GridNumbers& g) { return num(g.friction_dt_s); }, "s",
      "AB3: dt (A2 s/(3/22) + A4 s^2/(3/88)) <= 1, s = 1/dx^2 + 1/dy^2");
  both(
      "  dt / limit", [](const GridNumbers& g) { return num(g.friction_number); }, "", "");
  both(
      "steps", [](const GridNumbers& g) { return std::to_string(g.steps); }, "",
      "ceil(run length / dt)");
  both(
      "nodes x layers x steps", [](const GridNumbers& g) { return num(g.node_layer_steps); }, "",
      "(nx+1)(ny+1) x layers x steps");
  both(
      "estimated wall time", [](const GridNumbers& g) { return duration(g.estimated_wall_s); }, "",
      "estimate: " + num(kCostPerNodeLayerStep_s * 1e9) +
          " ns per node, layer and step, one thread");
  grid.print(out);
  out << '\n';
  print_closures(closure_numbers(c), out);

  int failures = 0;
  for (const auto& f : findings) {
    const bool failure = f.severity == Finding::Severity::failure;
    failures += failure ? 1 : 0;
    out << (failure ? "FAIL" : "warning") << (f.grid.empty() ? "" : " [" + f.grid + "]") << ": "
        << f.message << '\n';
  }
  const auto warnings = static_cast<int>(findings.size()) - failures;
  if (failures > 0) {
    out << "result: failed (" << failures << (failures == 1 ? " failure" : " failures") << ", "
        << warnings << (warnings == 1 ? " warning)" : " warnings)") << '\n';
  } else {
    out << "result: ok (" << warnings << (warnings == 1 ? " warning)" : " warnings)") << '\n';
  }
}

nlohmann::json finite_or_null(double v) {
  return std::isfinite(v) ? nlohmann::json(v) : nlohmann::json(nullptr);
}

nlohmann::json grid_json(const GridNumbers& g) {
  nlohmann::json j;
  j["nx"] = g.nx;
  j["ny"] = g.ny;
  j["dx_m"] = g.dx_m;
  j["dy_m"] = g.dy_m;
  j["dt_s"] = g.dt_s;
  j["intervals_per_deformation_radius"] = g.intervals_per_radius;
  j["munk_width_m"] = finite_or_null(g.munk_width_m);
  j["munk_intervals"] = finite_or_null(g.munk_intervals);
  j["biharmonic_width_m"] = finite_or_null(g.biharmonic_width_m);
  j["biharmonic_intervals"] = finite_or_null(g.biharmonic_intervals);
  j["stommel_width_m"] = finite_or_null(g.stommel_width_m);
  j["stommel_intervals"] = finite_or_null(g.stommel_intervals);
  j["boundary_layer"] = g.boundary_layer;
  j["boundary_width_m"] = finite_or_null(g.boundary_width_m);
  j["interior_speed_m_per_s"] = finite_or_null(g.interior_speed_m_per_s);
  j["boundary_speed_m_per_s"] = finite_or_null(g.boundary_speed_m_per_s);
  j["cfl_dt_interior_s"] = finite_or_null(g.cfl_dt_interior_s);
  j["cfl_dt_boundary_s"] = finite_or_null(g.cfl_dt_boundary_s);
  j["cfl_interior"] = finite_or_null(g.cfl_interior);
  j["cfl_boundary"] = finite_or_null(g.cfl_boundary);
  j["friction_dt_laplacian_s"] = finite_or_null(g.friction_dt_laplacian_s);
  j["friction_dt_biharmonic_s"] = finite_or_null(g.friction_dt_biharmonic_s);
  j["friction_dt_s"] = finite_or_null(g.friction_dt_s);
  j["friction_number"] = finite_or_null(g.friction_number);
  j["steps"] = g.steps;
  j["node_layer_steps"] = g.node_layer_steps;
  j["estimated_wall_s"] = g.estimated_wall_s;
  return j;
}

nlohmann::json report_json(const Case& c, const DerivedNumbers& d,
                           const std::vector<Finding>& findings) {
  nlohmann::json j;
  j["case"] = c.name;
  j["source"] = c.source.string();
  j["basin"] = {{"name", c.basin_name},
                {"lx_m", c.lx_m},
                {"ly_m", c.ly_m},
                {"f0_per_s", c.f0_per_s},
                {"beta_per_m_s", c.beta_per_m_s},
                {"rho0_kg_per_m3", c.rho0_kg_per_m3},
                {"layers", c.layers()},
                {"thickness_m", c.thickness_m},
                {"reduced_gravity_m_per_s2", c.reduced_gravity_m_per_s2}};
  j["modes"] = {{"eigenvalues_per_m2", d.eigenvalues_per_m2},
                {"deformation_radii_m", d.deformation_radii_m}};
  j["wind"] = {{"max_curl_n_per_m3", d.max_wind_curl_n_per_m3},
               {"sverdrup_transport_m3_per_s", finite_or_null(d.sverdrup_transport_m3_per_s)},
               {"sverdrup_transport_sv", finite_or_null(d.sverdrup_transport_m3_per_s / kSv)}};
  j["spinup"] = {{"spinup_s", c.run.spinup_s},
                 {"run_length_s", c.run.length_s},
                 {"rossby_crossing_s", finite_or_null(d.rossby_crossing_s)},
                 {"spinup_crossings", d.spinup_crossings}};
  j["grids"] = {{"truth", grid_json(d.truth)}, {"coarse", grid_json(d.coarse)}};
  j["grid_ratio"] = c.grid_ratio();
  j["cfl_limit"] = c.run.cfl_limit;
  j["cost_per_node_layer_step_s"] = kCostPerNodeLayerStep_s;
  j["cost_is_estimate"] = true;
  nlohmann::json list = nlohmann::json::array();
  bool failed = false;
  for (const auto& f : findings) {
    const bool failure = f.severity == Finding::Severity::failure;
    failed = failed || failure;
    list.push_back(
        {{"severity", failure ? "failure" : "warning"}, {"grid", f.grid}, {"message", f.message}});
  }
  j["findings"] = list;
  nlohmann::json closures = nlohmann::json::array();
  for (const ClosureNumbers& n : closure_numbers(c)) {
    nlohmann::json e = {{"name", n.name}, {"registered", n.known}};
    if (n.known) {
      e["target"] = n.step.full_pv ? "full_pv" : "stretching";
      e["k_bound_m2_per_s"] = finite_or_null(n.step.k_bound_m2_per_s);
      e["diffusion_number"] = finite_or_null(n.step.diffusion_number);
      e["substeps"] = n.step.substeps;
      e["stretching_stiffness"] = finite_or_null(n.step.stretching_stiffness);
    }
    closures.push_back(e);
  }
  j["closures"] = closures;
  j["result"] = failed ? "failed" : "ok";
  return j;
}

}  // namespace

int run_check(const CheckOptions& options, const GlobalOptions& global, std::ostream& out,
              std::ostream& err) {
  const Case c = load_case(options.case_path);
  const DerivedNumbers d = derive(c);
  const std::vector<Finding> findings = assess(c, d);
  bool failed = false;
  for (const auto& f : findings) failed = failed || f.severity == Finding::Severity::failure;

  if (global.quiet) {
    for (const auto& f : findings) {
      const std::string where = f.grid.empty() ? "" : "[" + f.grid + "] ";
      if (f.severity == Finding::Severity::failure) {
        print_error(err, "check failed: " + where + f.message);
      } else {
        print_warning(err, where + f.message);
      }
    }
  } else {
    print_report(c, d, findings, out);
  }
  if (!options.json_path.empty()) {
    io::write_text_atomic(options.json_path, report_json(c, d, findings).dump(2) + "\n");
    if (!global.quiet) out << "\n  wrote   " << options.json_path.string() << '\n';
  }
  return failed ? kExitFailedCheck : kExitOk;
}

void add_check_command(CLI::App& app, Invocation& invocation) {
  CLI::App* sub = app.add_subcommand(
      "check",
      "validate a case and print its derived numbers: deformation radii and grid intervals per "
      "radius, Munk and Stommel widths, CFL and friction dt limits, spin-up, expected cost");
  // Strings, not paths: CLI11 would take std::filesystem::path for a container of parts.
  auto case_path = std::make_shared<std::string>();
  auto json_path = std::make_shared<std::string>();
  sub->add_option("case", *case_path, "case file (TOML)")->required();
  sub->add_option("--json", *json_path, "also write the numbers as JSON to this file");
  sub->callback([case_path, json_path, &invocation] {
    CheckOptions options;
    options.case_path = *case_path;
    options.json_path = *json_path;
    invocation.exit_code = run_check(options, invocation.global, std::cout, std::cerr);
  });
}

}  // namespace plateau::cli
