#pragma once
// The closure contract (CLOSURES.md): the one project header a built-in closure includes.
//
// A closure maps the resolved state of the coarse layered QG model to an eddy PV flux on the
// cell faces of every layer. The harness, not the closure, takes the conservative divergence,
// sets the flux on the faces between a wall node and the first interior node to zero (so the
// interior sum of q dx dy is unchanged by the closure), applies the result as a forward-Euler
// fractional step after the dynamics step with psi frozen at the step's start, sub-steps it
// when a full-PV diffusivity demands it, steps the closure's own prognostic fields, computes
// its energy tendency and writes its diagnostic fields.
//
// Grid (the model's): nodes i = 0..nx, j = 0..ny, spacing dx, dy; the walls are the boundary
// nodes. A node Field is (nx+1) x (ny+1), x fastest, Field(i, j) at (x_i, y_j).
// Faces:
//   fx: nx x (ny+1); fx(i, j) is the flux in +x through the face between nodes (i, j) and
//       (i+1, j). Rows j = 1..ny-1 matter; fx(0, j) and fx(nx-1, j) touch the walls (zeroed).
//   fy: (nx+1) x ny; fy(i, j) is the flux in +y through the face between (i, j) and (i, j+1).
//       Columns i = 1..nx-1 matter; fy(i, 0) and fy(i, ny-1) touch the walls (zeroed).
// The closure's tendency at an interior node is
//   dq/dt = -[(fx(i, j) - fx(i-1, j)) / dx + (fy(i, j) - fy(i, j-1)) / dy].
//
// Units: SI. psi m^2 s^-1, q s^-1, PV flux m s^-2, diffusivity m^2 s^-1.
//
// A closure is const after construction: fluxes(), step_prognostic() and diagnostics() must
// give the same bits for the same input whatever the thread count, and must not keep state
// between calls (its prognostic fields belong to the harness and are passed in). Scratch
// arrays come from the caller's Scratch.
//
// Registration: a closure file defines one static Registrar; the name is then known to
// `plateau closures`, case files and `-c NAME`. External closures in shared libraries use the
// C interface of closures/plugin_abi.h instead.

#include <cmath>
#include <cstddef>
#include <deque>
#include <functional>
#include <map>
#include <memory>
#include <span>
#include <string>
#include <string_view>
#include <utility>
#include <vector>
#include <Eigen/Core>

namespace plateau::closure {

using Field = Eigen::ArrayXXd;

// ---- the constants of one run ----------------------------------------------------------------

struct Setup {
  int nx = 0;
  int ny = 0;
  double dx = 0.0;    // m
  double dy = 0.0;    // m
  double y0 = 0.0;    // reference latitude of f = f0 + beta (y - y0), m from the southern wall
  double f0 = 0.0;    // s^-1
  double beta = 0.0;  // m^-1 s^-1
  std::vector<double> thickness_m;          // H_k, layers from the top
  std::vector<double> reduced_gravity;      // g'_j at the interface below layer j, m s^-2
  std::vector<double> deformation_radii_m;  // Ld_1 >= Ld_2 >= ... (one per baroclinic mode)
  double dt_s = 0.0;                        // the model's time step
  double viscosity_m2_per_s = 0.0;          // the grid's Laplacian viscosity A2 (Munk width)

  [[nodiscard]] int layers() const { return static_cast<int>(thickness_m.size()); }
  [[nodiscard]] int interfaces() const { return layers() - 1; }
  [[nodiscard]] double x(int i) const { return dx * i; }
  [[nodiscard]] double y(int j) const { return dy * j; }
  [[nodiscard]] double lx() const { return dx * nx; }
  [[nodiscard]] double ly() const { return dy * ny; }
  [[nodiscard]] double h(int k) const { return thickness_m[static_cast<std::size_t>(k)]; }
  [[nodiscard]] double gprime(int j) const { return reduced_gravity[static_cast<std::size_t>(j)]; }
  // Mean thickness of the two layers beside interface j, m.
  [[nodiscard]] double h_interface(int j) const { return 0.5 * (h(j) + h(j + 1)); }
  [[nodiscard]] double total_depth() const {
    double s = 0.0;
    for (double v : thickness_m) s += v;
    return s;
  }
  // First deformation radius (0 for one layer), m.
  [[nodiscard]] double ld1() const {
    return deformation_radii_m.empty() ? 0.0 : deformation_radii_m.front();
  }
  [[nodiscard]] double ld_min() const {
    return deformation_radii_m.empty() ? 0.0 : deformation_radii_m.back();
  }
  // Munk width (A2 / beta)^(1/3), m (0 without viscosity).
  [[nodiscard]] double munk_width_m() const {
    return viscosity_m2_per_s > 0.0 && beta > 0.0 ? std::cbrt(viscosity_m2_per_s / beta) : 0.0;
  }
  [[nodiscard]] Field nodes() const { return Field::Zero(nx + 1, ny + 1); }
  [[nodiscard]] Field x_faces() const { return Field::Zero(nx, ny + 1); }
  [[nodiscard]] Field y_faces() const { return Field::Zero(nx + 1, ny); }
};

// ---- input: a read-only view of the resolved state ------------------------------------------

struct StateView {
  const Setup* setup = nullptr;
  std::span<const Field> psi;         // per layer, every node (constant c_k on the walls)
  std::span<const Field> q;           // per layer, full PV, every node (walls from the wall q)
  std::span<const double> wall_psi;   // c_k, per layer
  std::span<const Field> prognostic;  // the closure's own fields, as it declares them
  double t = 0.0;                     // model time, s
};

// ---- output ----------------------------------------------------------------------------------

struct Fluxes {
  std::vector<Field> fx;  // per layer, nx x (ny+1)
  std::vector<Field> fy;  // per layer, (nx+1) x ny
  // The largest face diffusivity the evaluation used, m^2 s^-1 (before any limiter): the
  // harness sub-steps full-PV closures so that k_max dt_sub (1/dx^2 + 1/dy^2) <= 1/4.
  double k_max = 0.0;

  // Zeroed arrays of the right shapes for `s`.
  [[nodiscard]] static Fluxes zeros(const Setup& s) {
    Fluxes f;
    f.fx.assign(static_cast<std::size_t>(s.layers()), s.x_faces());
    f.fy.assign(static_cast<std::size_t>(s.layers()), s.y_faces());
    return f;
  }
  void set_zero() {
    for (Field& a : fx) a.setZero();
    for (Field& a : fy) a.setZero();
    k_max = 0.0;
  }
};

// What a closure diffuses: the full PV q, or only its stretching part (S psi)_k, whose fluxes
// put the diffusivity on the interfaces (Gent and McWilliams 1990, layered form) and sum to
// zero over the column (sum_k H_k F_k = 0).
enum class Target { full_pv, stretching };

// Where a prognostic or diagnostic field lives in the vertical.
enum class Placement {
  layer,      // one Field per layer
  interface,  // one Field per interface (N - 1)
  column,     // one Field for the whole column (a depth-integrated quantity)
};

struct FieldInfo {
  std::string name;       // NetCDF variable name, e.g. "closure_k"
  std::string units;      // UDUNITS text, e.g. "m2 s-1"
  std::string long_name;  // a description for people
  Placement placement = Placement::layer;
};

[[nodiscard]] inline int count_of(Placement p, const Setup& s) {
  switch (p) {
    case Placement::layer:
      return s.layers();
    case Placement::interface:
      return s.interfaces();
    case Placement::column:
      return 1;
  }
  return 0;
}

// Reusable arrays for one evaluation at a time (the caller keeps one per thread of work).
// References to slots stay valid while other slots are added.
class Scratch {
 public:
  // Slot `slot` resized to rows x cols (contents unspecified unless `zero`).
  Field& get(std::size_t slot, Eigen::Index rows, Eigen::Index cols, bool zero = false) {
    if (slot >= fields_.size()) fields_.resize(slot + 1);
    Field& f = fields_[slot];
    if (f.rows() != rows || f.cols() != cols) {
      f = Field::Zero(rows, cols);
    } else if (zero) {
      f.setZero();
    }
    return f;
  }
  // Group `id`: `count` contiguous arrays of rows x cols (contents unspecified), for routines
  // that take one array per layer or interface.
  std::span<Field> group(std::size_t id, std::size_t count, Eigen::Index rows, Eigen::Index cols) {
    if (id >= groups_.size()) groups_.resize(id + 1);
    std::vector<Field>& g = groups_[id];
    if (g.size() != count) g.resize(count);
    for (Field& f : g) {
      if (f.rows() != rows || f.cols() != cols) f = Field::Zero(rows, cols);
    }
    return {g.data(), g.size()};
  }

 private:
  std::deque<Field> fields_;
  std::deque<std::vector<Field>> groups_;
};

// ---- the closure interface -------------------------------------------------------------------

class Closure {
 public:
  virtual ~Closure() = default;

  [[nodiscard]] virtual Target target() const = 0;

  // The PV fluxes of state `s` for a (sub-)step of `dt_s` seconds (flux limiters need it).
  // `out` arrives sized and zeroed; the closure writes its faces and out.k_max. Stateless:
  // the harness calls this for a-priori scoring and tests on any view as well.
  virtual void fluxes(const StateView& s, double dt_s, Fluxes& out, Scratch& scratch) const = 0;

  // The largest diffusivity this closure can produce (its constant, or its cap), m^2 s^-1;
  // `plateau check` turns it into the worst-case sub-step count.
  [[nodiscard]] virtual double diffusivity_bound() const = 0;

  // Full-PV closures taper K to zero toward the walls over this width (m); 0: no taper.
  [[nodiscard]] virtual double wall_taper_width_m() const { return 0.0; }

  // Prognostic fields (an eddy energy, say), owned and stored by the harness.
  [[nodiscard]] virtual std::vector<FieldInfo> prognostic_fields() const { return {}; }
  // Their values at the start of a run (one Field per count_of(placement), node-shaped).
  virtual void initial_prognostic(std::span<Field> fields) const { (void)fields; }
  // One step of length dt_s with psi, u, v frozen at the step's start. `applied` holds the
  // fluxes the harness applied over the step (their time mean, wall faces zero). `fields` holds
  // the values at the step's start on entry (frozen.prognostic refers to the same arrays) and
  // the values at its end on return.
  virtual void step_prognostic(const StateView& frozen, const Fluxes& applied, double dt_s,
                               std::span<Field> fields, Scratch& scratch) const {
    (void)frozen;
    (void)applied;
    (void)dt_s;
    (void)fields;
    (void)scratch;
  }

  // Diagnostic fields for the output (the K map, say): declared here, computed from a state
  // and the fluxes applied to it.
  [[nodiscard]] virtual std::vector<FieldInfo> diagnostic_fields() const { return {}; }
  virtual void diagnostics(const StateView& s, const Fluxes& applied, std::span<Field> out,
                           Scratch& scratch) const {
    (void)s;
    (void)applied;
    (void)out;
    (void)scratch;
  }
};

// ---- parameters ------------------------------------------------------------------------------

enum class ParamKind { real, integer, boolean, choice };

// One declared parameter. Ranges are closed unless an end is marked open.
struct Param {
  std::string name;
  std::string unit;  // UDUNITS-like text; "1" for a dimensionless number, "" for bool/choice
  ParamKind kind = ParamKind::real;
  double default_value = 0.0;  // real and integer; boolean as 0/1
  double min = 0.0;
  double max = 0.0;
  bool min_open = false;
  bool max_open = false;
  std::vector<std::string> choices;  // choice
  std::string default_choice;        // choice
  std::string meaning;               // one line
  bool is_tunable = false;           // `tune` may vary it, within [min, max]
  bool is_log_scale = false;         // `tune` searches it in log space

  static Param real(std::string name, std::string unit, double def, double lo, double hi,
                    std::string meaning) {
    Param p;
    p.name = std::move(name);
    p.unit = std::move(unit);
    p.kind = ParamKind::real;
    p.default_value = def;
    p.min = lo;
    p.max = hi;
    p.meaning = std::move(meaning);
    return p;
  }
  static Param integer(std::string name, std::string unit, int def, int lo, int hi,
                       std::string meaning) {
    Param p = real(std::move(name), std::move(unit), def, lo, hi, std::move(meaning));
    p.kind = ParamKind::integer;
    return p;
  }
  static Param boolean(std::string name, bool def, std::string meaning) {
    Param p;
    p.name = std::move(name);
    p.kind = ParamKind::boolean;
    p.default_value = def ? 1.0 : 0.0;
    p.min = 0.0;
    p.max = 1.0;
    p.meaning = std::move(meaning);
    return p;
  }
  static Param choice(std::string name, std::vector<std::string> choices, std::string def,
                      std::string meaning) {
    Param p;
    p.name = std::move(name);
    p.kind = ParamKind::choice;
    p.choices = std::move(choices);
    p.default_choice = std::move(def);
    p.meaning = std::move(meaning);
    return p;
  }
  Param& open_min() {
    min_open = true;
    return *this;
  }
  Param& open_max() {
    max_open = true;
    return *this;
  }
  Param& tunable(bool log_scale = false) {
    is_tunable = true;
    is_log_scale = log_scale;
    return *this;
  }

  [[nodiscard]] bool contains(double v) const {
    return (min_open ? v > min : v >= min) && (max_open ? v < max : v <= max);
  }
};

// Validated parameter values of one closure, every declared parameter present.
class Params {
 public:
  struct Value {
    double number = 0.0;  // real, integer, boolean (0/1)
    std::string text;     // choice
  };

  void set(const std::string& name, Value v) { values_[name] = std::move(v); }
  [[nodiscard]] bool has(std::string_view name) const {
    return values_.find(std::string(name)) != values_.end();
  }
  [[nodiscard]] double real(std::string_view name) const { return at(name).number; }
  [[nodiscard]] int integer(std::string_view name) const {
    return static_cast<int>(at(name).number);
  }
  [[nodiscard]] bool flag(std::string_view name) const { return at(name).number != 0.0; }
  [[nodiscard]] const std::string& choice(std::string_view name) const { return at(name).text; }
  [[nodiscard]] const std::map<std::string, Value>& all() const { return values_; }

 private:
  [[nodiscard]] const Value& at(std::string_view name) const;  // throws std::out_of_range
  std::map<std::string, Value> values_;
};

// ---- registration ----------------------------------------------------------------------------

struct Info {
  std::string name;     // registry key: letters, digits, '_', '-'
  std::string summary;  // one line: the formula
  std::string source;   // the published source (or "plug-in FILE")
  std::vector<Param> params;
  // A down-gradient closure never raises the interior sum of q~^2 (sum of F . grad q~ <= 0);
  // the generic tests check this promise.
  bool down_gradient = true;
  std::function<std::unique_ptr<Closure>(const Params&, const Setup&)> make;
};

// Adds `info` to the registry at static-initialisation time; a second closure of the same
// name is a programming error reported when the registry is first listed.
class Registrar {
 public:
  explicit Registrar(Info info);
};

}  // namespace plateau::closure
