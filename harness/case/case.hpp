#pragma once
// A case: one closed, wind-driven basin, its layers, forcing and friction, and the two grids
// (eddy-resolving truth and coarse candidate) it is run on. Loaded from TOML by load_case();
// every field below is validated there, so the model may trust it. SI units throughout; the
// unit of each member is in its name or its comment.

#include <filesystem>
#include <map>
#include <stdexcept>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

namespace plateau {

enum class WindShape { single_gyre, double_gyre, table };
enum class WallCondition { free_slip, no_slip, partial_slip };

struct WindSpec {
  WindShape shape = WindShape::double_gyre;
  double tau0_n_per_m2 = 0.1;  // peak zonal wind stress amplitude, N m^-2
  // Asymmetry a in [-0.9, 0.9]: tau_x(y) = base(y) * (1 + a * sin(pi y / Ly)) for the single
  // gyre and tau_x(y) = base(y) * (1 + a * (2 y / Ly - 1)) for the double gyre (a > 0 strengthens
  // the northern half).
  double asymmetry = 0.0;
  // Seasonal cycle: amplitude factor (1 + s sin(2 pi t / period)); s in [0, 1).
  double seasonal_amplitude = 0.0;
  double seasonal_period_s = 365.0 * 86400.0;
  // User table (shape == table): y in m from the southern wall, tau_x in N m^-2, y increasing.
  // Between points tau_x is interpolated linearly; beyond the first and last point it is held
  // at the end value. tau0 and asymmetry do not apply to a table.
  std::vector<double> table_y_m;
  std::vector<double> table_tau_x_n_per_m2;
};

struct FrictionSpec {
  double bottom_drag_per_s = 1e-7;  // r, linear bottom drag on the bottom layer, s^-1
  WallCondition wall = WallCondition::free_slip;
  double slip_length_m = 0.0;  // partial slip only: zeta_w = -(dpsi/dn)/slip_length form
};

// One grid on which the basin is run. nx, ny count intervals (nodes 0..nx).
struct GridSpec {
  int nx = 0;
  int ny = 0;
  double dt_s = 0.0;
  double viscosity_m2_per_s = 0.0;   // A2, Laplacian
  double biharmonic_m4_per_s = 0.0;  // A4, biharmonic
};

struct RunSpec {
  double length_s = 0.0;               // total model time
  double spinup_s = 0.0;               // time means start after this
  double snapshot_interval_s = 0.0;    // 0: no snapshots
  double series_interval_s = 0.0;      // energy and budget time series sampling
  double checkpoint_interval_s = 0.0;  // 0: only at the end
  double cfl_limit = 0.5;
};

// A closure selected in a case: its name and the raw parameter table as written (validated
// against the closure's declaration by the closure registry, which knows the declaration).
struct ClosureChoice {
  std::string name;
  // Where the name was written: its entry in [compare] closures, else its [closure.NAME] table.
  int line = 0;
  int column = 0;
  // true: listed in [compare] closures (compare runs it). false: only a [closure.NAME] table was
  // given, for `run`/`tune -c NAME` or for the truth's own closure.
  bool compared = true;
  // Parameter values as strings with their TOML source position for error messages.
  struct Value {
    std::string text;  // the value as written (numbers in round-trip form, booleans true/false,
                       // strings as their content without quotes)
    int line = 0;
    int column = 0;
  };
  std::map<std::string, Value> params;
};

enum class AprioriTarget { automatic, subfilter, transient_subfilter };

// Scoring choices a case may override (SCORING.md gives each default and its reason).
struct ScoringSpec {
  double gyre_threshold = 0.3;              // theta: gyre region |psi - c| >= theta |extremum|
  double plateau_gradient_fraction = 0.25;  // epsilon: plateau where |grad q| < epsilon beta
  double jet_fraction = 0.25;               // jet penetration: u above this fraction of its max
  double energy_trend_fraction = 0.05;      // warn when the energy trend over the window exceeds it
  AprioriTarget apriori_target = AprioriTarget::automatic;  // automatic: SCORING.md's rule
  // Category weights of the overall skill (>= 0, not all zero).
  double weight_plateau = 1.0;
  double weight_transport = 1.0;
  double weight_energy = 1.0;
  double weight_a_priori = 1.0;
};

struct Case {
  std::filesystem::path source;  // the file it came from
  std::string name;              // [case] name, or the file stem
  std::string description;       // [case] description, free text (may be empty)
  std::string basin_name;        // [basin] name, free text (may be empty)

  // Basin
  double lx_m = 0.0;
  double ly_m = 0.0;
  double f0_per_s = 0.0;
  double beta_per_m_s = 0.0;  // m^-1 s^-1
  double rho0_kg_per_m3 = 1025.0;

  // Layers from the top: thickness H_k (m), reduced gravity g'_k at the interface below layer k
  // (m s^-2, one fewer than layers).
  std::vector<double> thickness_m;
  std::vector<double> reduced_gravity_m_per_s2;

  WindSpec wind;
  FrictionSpec friction;
  GridSpec truth;
  GridSpec coarse;
  RunSpec run;

  // Identical-twin studies (STUDIES.md): the truth is itself a run of this closure on the coarse
  // grid (truth grid == coarse grid). Empty: the truth is the eddy-resolving run without closure.
  std::string truth_closure;

  // Closures the case lists for compare, and the parameter tables given under [closure.NAME].
  std::vector<ClosureChoice> closures;

  // Layers (0-based) the scoring treats as sheltered; empty means the default rule.
  std::vector<int> sheltered_layers;

  ScoringSpec scoring;

  [[nodiscard]] int layers() const { return static_cast<int>(thickness_m.size()); }
  // r = truth.nx / coarse.nx (= truth.ny / coarse.ny; validated even, or 1 for equal grids).
  [[nodiscard]] int grid_ratio() const { return coarse.nx > 0 ? truth.nx / coarse.nx : 0; }
  // The closure of that name (listed for compare or given a [closure.NAME] table), or nullptr.
  [[nodiscard]] const ClosureChoice* find_closure(std::string_view closure_name) const;
};

// A case file that cannot be used. what() is the full message; exit code 2 at the CLI.
class CaseError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

// Loads and validates a case file. Throws CaseError naming file:line:column, the key, the value
// and what is allowed.
Case load_case(const std::filesystem::path& path);
// The same from text already in memory (tests); `path` is only used in messages.
Case parse_case(std::string_view text, const std::filesystem::path& path);

}  // namespace plateau
