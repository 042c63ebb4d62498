// The case-file layout: which sections and keys exist, their units, defaults and ranges, and the
// conversion to SI. README.md lists the same keys for users; keep the two in step.
//
// Units in the file are the ones a modeller writes (km, days, years); the Case holds SI only.
// A model year is 365 days (no leap years, no calendar): run lengths, spin-up and the default
// seasonal period use it.

#include "harness/case/case.hpp"

#include <algorithm>
#include <cmath>
#include <fstream>
#include <iterator>
#include <numeric>
#include <sstream>
#include <system_error>

#include "harness/case/toml_reader.hpp"

namespace plateau {
namespace {

using case_detail::Document;
using case_detail::format_number;
using case_detail::format_value;
using case_detail::Range;
using case_detail::Section;

constexpr double kMetresPerKm = 1000.0;
constexpr double kSecondsPerDay = 86400.0;
constexpr double kDaysPerYear = 365.0;  // model year: 365 days, see the header comment
constexpr double kSecondsPerYear = kDaysPerYear * kSecondsPerDay;

constexpr int kMaxLayers = 8;
constexpr std::int64_t kMinGrid = 4;     // fewer intervals cannot hold a boundary layer
constexpr std::int64_t kMaxGrid = 4096;  // beyond this one field no longer fits a workstation

constexpr double kMaxBasinKm = 20000.0;  // half the Earth's circumference
constexpr double kMaxRunYears = 1000.0;
constexpr double kMaxDtS = 30.0 * kSecondsPerDay;
constexpr double kMaxWindStress = 2.0;  // N m^-2, beyond a hurricane's mean stress
constexpr double kMaxAsymmetry = 0.9;   // keeps tau_x's sign pattern (the gyre count)

const Range kFraction{0.0, 1.0, true, true};  // (0, 1)

// Case and closure names become folder and file names (results/CASE-NAME/, run-CLOSURE.nc).
bool is_file_name_safe(std::string_view s) {
  if (s.empty() || s.front() == '.') return false;
  return std::all_of(s.begin(), s.end(), [](char c) {
    return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '_' ||
           c == '-' || c == '.';
  });
}
constexpr const char* kNameAllowed =
    "a non-empty name of letters, digits, '_', '-' and '.', not starting with '.' (it names "
    "result folders and files)";

void read_case_section(const Document& doc, Case& c) {
  const Section s(doc, "case", doc.root().get("case"), {"name", "description"},
                  doc.root().source());
  if (const auto name = s.string("name", kNameAllowed)) {
    if (!is_file_name_safe(*name)) s.fail("name", "not usable as a name", kNameAllowed);
    c.name = *name;
  } else {
    c.name = doc.path().stem().string();
  }
  c.description = s.string("description", "a string").value_or("");
}

void read_basin(const Document& doc, Case& c) {
  const Section s(doc, "basin", doc.root().get("basin"),
                  {"name", "lx_km", "ly_km", "f0_per_s", "beta_per_m_per_s", "rho0_kg_per_m3"},
                  doc.root().source());
  c.basin_name = s.string("name", "a string").value_or("");
  c.lx_m = s.required_number("lx_km", Range::positive(kMaxBasinKm), "km") * kMetresPerKm;
  c.ly_m = s.required_number("ly_km", Range::positive(kMaxBasinKm), "km") * kMetresPerKm;
  // Northern-hemisphere convention (f0 > 0); mirror a southern basin in y.
  c.f0_per_s = s.required_number("f0_per_s", Range::positive(1e-3), "s^-1");
  // beta > 0: plateaus are measured against the planetary gradient (SCORING.md normalises by it).
  c.beta_per_m_s = s.required_number("beta_per_m_per_s", Range::positive(1e-9), "m^-1 s^-1");
  c.rho0_kg_per_m3 = s.number_or("rho0_kg_per_m3", Range::closed(900.0, 1100.0), "kg m^-3", 1025.0);
}

void read_layers(const Document& doc, Case& c) {
  const Section s(doc, "layers", doc.root().get("layers"),
                  {"thickness_m", "reduced_gravity_m_per_s2"}, doc.root().source());
  const Range thickness = Range::positive(12000.0);
  const auto h = s.number_array("thickness_m", thickness, "m", 1, kMaxLayers);
  if (!h) {
    s.fail_missing("thickness_m", "an array of 1 to 8 numbers from the top, each " +
                                      thickness.describe() + ", unit m");
  }
  c.thickness_m = *h;
  const std::size_t interfaces = h->size() - 1;
  const std::string allowed = std::to_string(interfaces) +
                              " numbers (one per interface, layers - 1), each > 0 and <= 10, "
                              "unit m s^-2";
  const auto g =
      s.number_array("reduced_gravity_m_per_s2", Range::positive(10.0), "m s^-2", 0, kMaxLayers);
  if (!g) {
    if (interfaces > 0) s.fail_missing("reduced_gravity_m_per_s2", allowed);
    return;
  }
  if (g->size() != interfaces) {
    s.fail(
        "reduced_gravity_m_per_s2",
        "has " + std::to_string(g->size()) + " values for " + std::to_string(h->size()) + " layers",
        allowed);
  }
  c.reduced_gravity_m_per_s2 = *g;
}

void read_wind(const Document& doc, Case& c) {
  const Section s(doc, "wind", doc.root().get("wind"),
                  {"shape", "tau0_n_per_m2", "asymmetry", "seasonal_amplitude",
                   "seasonal_period_days", "table_y_km", "table_tau_x_n_per_m2"},
                  doc.root().source());
  WindSpec& w = c.wind;
  const std::string shape =
      s.choice("shape", {"single_gyre", "double_gyre", "table"}, "double_gyre");
  w.shape = shape == "single_gyre"   ? WindShape::single_gyre
            : shape == "double_gyre" ? WindShape::double_gyre
                                     : WindShape::table;
  const Range stress = Range::closed(-kMaxWindStress, kMaxWindStress);
  if (w.shape == WindShape::table) {
    for (const char* analytic : {"tau0_n_per_m2", "asymmetry"}) {
      if (s.has(analytic)) {
        s.fail(analytic, "does not apply to shape = \"table\"",
               "this key only with shape = \"single_gyre\" or \"double_gyre\"");
      }
    }
    const double ly_km = c.ly_m / kMetresPerKm;
    const Range inside = Range::closed(0.0, ly_km);
    const std::size_t max_points = 100000;
    const auto y = s.number_array("table_y_km", inside, "km", 2, max_points);
    if (!y) {
      s.fail_missing("table_y_km",
                     "at least 2 increasing values, each " + inside.describe() + ", unit km");
    }
    const auto tau = s.number_array("table_tau_x_n_per_m2", stress, "N m^-2", 2, max_points);
    if (!tau) {
      s.fail_missing("table_tau_x_n_per_m2",
                     "one value per table_y_km entry, each " + stress.describe());
    }
    if (tau->size() != y->size()) {
      s.fail("table_tau_x_n_per_m2",
             "has " + std::to_string(tau->size()) + " values but table_y_km has " +
                 std::to_string(y->size()),
             "as many values as table_y_km");
    }
    for (std::size_t i = 1; i < y->size(); ++i) {
      if (!((*y)[i] > (*y)[i - 1])) {
        s.fail_at(*s.node("table_y_km")->as_array()->get(i), "table_y_km",
                  "element " + std::to_string(i + 1) + " = " + format_number((*y)[i]) +
                      " does not increase",
                  "strictly increasing values in [0, Ly]");
      }
    }
    w.table_y_m.clear();
    for (double v : *y) w.table_y_m.push_back(v * kMetresPerKm);
    w.table_tau_x_n_per_m2 = *tau;
  } else {
    for (const char* table_key : {"table_y_km", "table_tau_x_n_per_m2"}) {
      if (s.has(table_key)) {
        s.fail(table_key, "applies only to shape = \"table\"",
               "this key only with shape = \"table\"");
      }
    }
    w.tau0_n_per_m2 =
        s.number_or("tau0_n_per_m2", Range::non_negative(kMaxWindStress), "N m^-2", 0.1);
    w.asymmetry = s.number_or("asymmetry", Range::closed(-kMaxAsymmetry, kMaxAsymmetry), "", 0.0);
  }
  w.seasonal_amplitude = s.number_or("seasonal_amplitude", Range{0.0, 1.0, false, true}, "", 0.0);
  w.seasonal_period_s = s.number_or("seasonal_period_days", Range::positive(100.0 * kDaysPerYear),
                                    "days", kDaysPerYear) *
                        kSecondsPerDay;
}

void read_friction(const Document& doc, Case& c) {
  const Section s(doc, "friction", doc.root().get("friction"),
                  {"bottom_drag_per_s", "wall", "slip_length_km"}, doc.root().source());
  FrictionSpec& f = c.friction;
  f.bottom_drag_per_s = s.number_or("bottom_drag_per_s", Range::non_negative(1e-4), "s^-1", 1e-7);
  const std::string wall = s.choice("wall", {"free_slip", "no_slip", "partial_slip"}, "free_slip");
  f.wall = wall == "free_slip" ? WallCondition::free_slip
           : wall == "no_slip" ? WallCondition::no_slip
                               : WallCondition::partial_slip;
  const Range slip = Range::positive(kMaxBasinKm);
  if (f.wall == WallCondition::partial_slip) {
    const auto l = s.number("slip_length_km", slip, "km");
    if (!l) s.fail_missing("slip_length_km", slip.describe() + ", unit km (partial slip)");
    f.slip_length_m = *l * kMetresPerKm;
  } else if (s.has("slip_length_km")) {
    const auto l = s.number("slip_length_km", Range::non_negative(), "km");
    if (*l != 0.0) {
      s.fail("slip_length_km", "a slip length applies only to wall = \"partial_slip\"",
             "0 or no key with wall = \"" + wall + "\"");
    }
    f.slip_length_m = 0.0;
  }
}

// A grid section; `truth` adds the identical-twin closure key.
Section read_grid(const Document& doc, const std::string& name, GridSpec& g) {
  std::vector<std::string> keys{"nx", "ny", "dt_s", "viscosity_m2_per_s", "biharmonic_m4_per_s"};
  if (name == "truth") keys.emplace_back("closure");
  Section s(doc, name, doc.root().get(name), std::move(keys), doc.root().source());
  g.nx = static_cast<int>(s.required_integer("nx", kMinGrid, kMaxGrid));
  g.ny = static_cast<int>(s.required_integer("ny", kMinGrid, kMaxGrid));
  g.dt_s = s.required_number("dt_s", Range::positive(kMaxDtS), "s");
  g.viscosity_m2_per_s = s.number_or("viscosity_m2_per_s", Range::non_negative(), "m^2 s^-1", 0.0);
  g.biharmonic_m4_per_s =
      s.number_or("biharmonic_m4_per_s", Range::non_negative(), "m^4 s^-1", 0.0);
  return s;
}

// SCORING.md: nx_truth = r nx_coarse and ny_truth = r ny_coarse with one even r, or r = 1 when
// the two grids are the same (an identical-twin truth).
void check_grid_ratio(const Section& truth, const Case& c) {
  const auto check = [&](const char* key, int t, int k) {
    if (t % k != 0) {
      truth.fail(key,
                 "not a multiple of coarse." + std::string(key) + " = " + std::to_string(k) +
                     " (ratio " + format_number(static_cast<double>(t) / k) + ")",
                 "an even multiple of the coarse count (" + std::to_string(2 * k) + ", " +
                     std::to_string(4 * k) + ", ...), or " + std::to_string(k) +
                     " with the truth grid equal to the coarse grid");
    }
    return t / k;
  };
  const int rx = check("nx", c.truth.nx, c.coarse.nx);
  const int ry = check("ny", c.truth.ny, c.coarse.ny);
  if (rx != 1 && rx % 2 != 0) {
    truth.fail("nx",
               "the truth/coarse ratio r = " + std::to_string(rx) +
                   " is odd (the coarse-graining filter is centred on coarse nodes)",
               "an even ratio (" + std::to_string(2 * c.coarse.nx) + ", " +
                   std::to_string(4 * c.coarse.nx) + ", ...), or r = 1 with equal grids");
  }
  if (rx != ry) {
    truth.fail("ny",
               "the truth/coarse ratio is " + std::to_string(rx) + " in x but " +
                   std::to_string(ry) + " in y",
               "one ratio in both directions: ny = " + std::to_string(rx * c.coarse.ny));
  }
}

void read_truth_closure(const Section& truth, Case& c) {
  const auto closure = truth.string("closure", kNameAllowed);
  if (!closure) return;
  if (!is_file_name_safe(*closure)) truth.fail("closure", "not usable as a name", kNameAllowed);
  if (c.grid_ratio() != 1) {
    truth.fail("closure",
               "a closure in the truth makes it an identical twin, which runs on the coarse "
               "grid, but the truth/coarse ratio is " +
                   std::to_string(c.grid_ratio()),
               "truth.closure only with truth nx, ny equal to coarse nx, ny");
  }
  c.truth_closure = *closure;
}

void read_run(const Document& doc, Case& c) {
  const Section s(
      doc, "run", doc.root().get("run"),
      {"years", "spinup_years", "snapshot_days", "series_days", "checkpoint_days", "cfl_limit"},
      doc.root().source());
  RunSpec& r = c.run;
  // 12 years with the mean over the last 6: the span that showed a plateau (PHYSICS.md 5).
  const double years =
      s.number_or("years", Range::positive(kMaxRunYears), "years (365 days)", 12.0);
  const double spinup = s.number_or("spinup_years", Range::non_negative(kMaxRunYears),
                                    "years (365 days)", years / 2.0);
  if (!(spinup < years)) {
    s.fail("spinup_years", "not shorter than the run (years = " + format_number(years) + ")",
           "0 <= spinup_years < years");
  }
  r.length_s = years * kSecondsPerYear;
  r.spinup_s = spinup * kSecondsPerYear;
  const Range interval = Range::non_negative(kMaxRunYears * kDaysPerYear);
  r.snapshot_interval_s = s.number_or("snapshot_days", interval, "days", 30.0) * kSecondsPerDay;
  r.series_interval_s = s.number_or("series_days", interval, "days", 10.0) * kSecondsPerDay;
  r.checkpoint_interval_s =
      s.number_or("checkpoint_days", interval, "days", kDaysPerYear) * kSecondsPerDay;
  // ARCHITECTURE.md: default 0.5, below AB3's own advective limit of about 0.72.
  r.cfl_limit = s.number_or("cfl_limit", Range{0.0, 1.0, true, false}, "", 0.5);
}

void read_scoring(const Document& doc, Case& c) {
  const Section s(doc, "scoring", doc.root().get("scoring"),
                  {"sheltered_layers", "gyre_threshold", "plateau_gradient_fraction",
                   "jet_fraction", "energy_trend_fraction", "a_priori_target", "weights"},
                  doc.root().source());
  const int n = c.layers();
  if (s.has("sheltered_layers")) {
    if (n == 1) {
      const auto* a = s.node("sheltered_layers")->as_array();
      if (a == nullptr || !a->empty()) {
        s.fail("sheltered_layers", "a single layer has no sheltered layer",
               "an empty array or no key");
      }
    } else {
      const auto layers = s.integer_array("sheltered_layers", 2, n);
      std::vector<int> seen;
      for (std::size_t i = 0; i < layers->size(); ++i) {
        const int k = static_cast<int>((*layers)[i]);
        if (std::find(seen.begin(), seen.end(), k) != seen.end()) {
          s.fail_at(*s.node("sheltered_layers")->as_array()->get(i), "sheltered_layers",
                    "lists layer " + std::to_string(k) + " twice",
                    "distinct layer numbers in [2, " + std::to_string(n) +
                        "], counted from 1 "
                        "at the top (layer 1 is wind-forced)");
        }
        seen.push_back(k);
      }
      std::sort(seen.begin(), seen.end());
      c.sheltered_layers.clear();
      for (int k : seen) c.sheltered_layers.push_back(k - 1);  // 1-based in the file
    }
  }
  ScoringSpec& sc = c.scoring;
  sc.gyre_threshold = s.number_or("gyre_threshold", kFraction, "", sc.gyre_threshold);
  sc.plateau_gradient_fraction = s.number_or("plateau_gradient_fraction", Range::positive(1.0), "",
                                             sc.plateau_gradient_fraction);
  sc.jet_fraction = s.number_or("jet_fraction", kFraction, "", sc.jet_fraction);
  sc.energy_trend_fraction =
      s.number_or("energy_trend_fraction", Range::positive(1.0), "", sc.energy_trend_fraction);
  const std::string target =
      s.choice("a_priori_target", {"auto", "subfilter", "transient_subfilter"}, "auto");
  sc.apriori_target = target == "auto"        ? AprioriTarget::automatic
                      : target == "subfilter" ? AprioriTarget::subfilter
                                              : AprioriTarget::transient_subfilter;

  const Section w(doc, "scoring.weights", s.node("weights"),
                  {"plateau", "transport", "energy", "a_priori"}, s.where());
  sc.weight_plateau = w.number_or("plateau", Range::non_negative(), "", 1.0);
  sc.weight_transport = w.number_or("transport", Range::non_negative(), "", 1.0);
  sc.weight_energy = w.number_or("energy", Range::non_negative(), "", 1.0);
  sc.weight_a_priori = w.number_or("a_priori", Range::non_negative(), "", 1.0);
  if (sc.weight_plateau + sc.weight_transport + sc.weight_energy + sc.weight_a_priori <= 0.0) {
    doc.fail(w.where(), "scoring.weights", format_value(*s.node("weights")), "all weights are zero",
             "weights >= 0, at least one > 0");
  }
}

int line_of(const toml::source_region& r) { return static_cast<int>(r.begin.line); }
int column_of(const toml::source_region& r) { return static_cast<int>(r.begin.column); }

// Closure parameters are kept as written; the closure registry checks them against the
// closure's declaration and reports with the positions kept here.
ClosureChoice::Value closure_value(const Section& table, const std::string& key,
                                   const toml::node& v) {
  ClosureChoice::Value out;
  out.line = line_of(v.source());
  out.column = column_of(v.source());
  if (const auto* s = v.as_string()) {
    out.text = s->get();
  } else if (const auto* i = v.as_integer()) {
    out.text = std::to_string(i->get());
  } else if (const auto* f = v.as_floating_point()) {
    if (!std::isfinite(f->get())) {
      table.fail(key, "not a finite number", "a finite number, a boolean or a string");
    }
    out.text = format_number(f->get());
  } else if (const auto* b = v.as_boolean()) {
    out.text = b->get() ? "true" : "false";
  } else {
    table.fail(key, "wrong type: " + std::string(case_detail::type_words(v)),
               "a number, a boolean or a string (closure parameters are single values)");
  }
  return out;
}

void read_closures(const Document& doc, Case& c) {
  const Section compare(doc, "compare", doc.root().get("compare"), {"closures"},
                        doc.root().source());
  c.closures.clear();
  if (const auto names = compare.string_array("closures", kNameAllowed)) {
    const auto& nodes = *compare.node("closures")->as_array();
    for (std::size_t i = 0; i < names->size(); ++i) {
      const std::string& name = (*names)[i];
      const toml::node& at = *nodes.get(i);
      if (!is_file_name_safe(name)) {
        compare.fail_at(
            at, "closures",
            "element " + std::to_string(i + 1) + " = \"" + name + "\" is not usable as a name",
            kNameAllowed);
      }
      if (c.find_closure(name) != nullptr) {
        compare.fail_at(at, "closures", "lists \"" + name + "\" twice", "distinct closure names");
      }
      ClosureChoice choice;
      choice.name = name;
      choice.line = line_of(at.source());
      choice.column = column_of(at.source());
      c.closures.push_back(std::move(choice));
    }
  } else {
    ClosureChoice none;  // default: the baseline every score is compared with
    none.name = "none";
    c.closures.push_back(std::move(none));
  }

  // [closure.NAME] tables: the names are the closures', so every key of [closure] is allowed.
  const toml::node* closure_node = doc.root().get("closure");
  std::vector<std::string> names;
  if (const auto* t = closure_node == nullptr ? nullptr : closure_node->as_table()) {
    for (auto&& [k, v] : *t) names.emplace_back(k.str());
  }
  const Section closure(doc, "closure", closure_node, names, doc.root().source());
  for (const std::string& name : names) {
    const toml::node* node = closure.node(name);
    std::vector<std::string> keys;
    if (const auto* t = node->as_table()) {
      for (auto&& [k, v] : *t) keys.emplace_back(k.str());
    }
    const Section params(doc, "closure." + name, node, keys, closure.where());
    if (!is_file_name_safe(name)) {
      doc.fail(params.where(), "closure." + name, format_value(*node), "not usable as a name",
               kNameAllowed);
    }
    auto it = std::find_if(c.closures.begin(), c.closures.end(),
                           [&](const ClosureChoice& ch) { return ch.name == name; });
    if (it == c.closures.end()) {
      ClosureChoice choice;
      choice.name = name;
      choice.line = line_of(params.where());
      choice.column = column_of(params.where());
      choice.compared = false;
      c.closures.push_back(std::move(choice));
      it = std::prev(c.closures.end());
    }
    for (const std::string& key : keys) {
      it->params[key] = closure_value(params, key, *params.node(key));
    }
  }
}

}  // namespace

const ClosureChoice* Case::find_closure(std::string_view closure_name) const {
  for (const auto& choice : closures) {
    if (choice.name == closure_name) return &choice;
  }
  return nullptr;
}

Case parse_case(std::string_view text, const std::filesystem::path& path) {
  const Document doc(text, path);
  // Unknown sections are refused first, so a misspelt header is named as such.
  const Section root(doc, "", &doc.root(),
                     {"case", "basin", "layers", "wind", "friction", "truth", "coarse", "run",
                      "scoring", "compare", "closure"});
  Case c;
  c.source = path;
  read_case_section(doc, c);
  read_basin(doc, c);
  read_layers(doc, c);
  read_wind(doc, c);
  read_friction(doc, c);
  const Section truth = read_grid(doc, "truth", c.truth);
  read_grid(doc, "coarse", c.coarse);
  check_grid_ratio(truth, c);
  read_truth_closure(truth, c);
  read_run(doc, c);
  read_scoring(doc, c);
  read_closures(doc, c);
  return c;
}

Case load_case(const std::filesystem::path& path) {
  std::error_code ec;
  if (!std::filesystem::is_regular_file(path, ec)) {
    throw CaseError(path.string() + ": cannot read the case file: " +
                    (std::filesystem::exists(path, ec) ? "not a regular file" : "no such file"));
  }
  std::ifstream in(path, std::ios::binary);
  std::ostringstream text;
  text << in.rdbuf();
  if (!in) throw CaseError(path.string() + ": cannot read the case file");
  return parse_case(text.str(), path);
}

}  // namespace plateau
