// Case files: every shipped case loads, units convert to SI, defaults apply, closure tables are
// kept raw, and every class of mistake gives a CaseError naming file, line:column, key and value.

#include <gtest/gtest.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <string>
#include <vector>

#include "harness/case/case.hpp"

namespace plateau {
namespace {

const std::filesystem::path kSourceDir = PLATEAU_SOURCE_DIR;
constexpr double kDay = 86400.0;
constexpr double kYear = 365.0 * kDay;  // the case file's year (case.cpp)

// A complete case with every required key and nothing else. Non-square on purpose, so that x
// and y mix-ups show.
const std::string kMinimal = R"([basin]
lx_km = 1600
ly_km = 1200
f0_per_s = 8e-5
beta_per_m_per_s = 2e-11

[layers]
thickness_m = [600, 1000, 2400]
reduced_gravity_m_per_s2 = [0.025, 0.0125]

[truth]
nx = 128
ny = 96
dt_s = 1800
viscosity_m2_per_s = 200

[coarse]
nx = 32
ny = 24
dt_s = 3600
viscosity_m2_per_s = 10000
)";

// `base` with the first `old` replaced (the test fails if `old` is not there).
std::string with(const std::string& base, const std::string& old, const std::string& repl) {
  const auto at = base.find(old);
  EXPECT_NE(at, std::string::npos) << "fixture lacks: " << old;
  if (at == std::string::npos) return base;
  std::string out = base;
  out.replace(at, old.size(), repl);
  return out;
}

// "LINE:COLUMN" (1-based) of the first occurrence of `needle` after `after` in `text`.
std::string position_of(const std::string& text, const std::string& needle,
                        const std::string& after = "") {
  const std::size_t start = after.empty() ? 0 : text.find(after);
  const std::size_t at = text.find(needle, start == std::string::npos ? 0 : start);
  EXPECT_NE(at, std::string::npos) << "text lacks: " << needle;
  int line = 1;
  std::size_t line_start = 0;
  for (std::size_t i = 0; i < at; ++i) {
    if (text[i] == '\n') {
      ++line;
      line_start = i + 1;
    }
  }
  return std::to_string(line) + ":" + std::to_string(at - line_start + 1);
}

// The CaseError message of parsing `text` as "test.toml" (fails the test if none is thrown).
std::string error_of(const std::string& text) {
  try {
    (void)parse_case(text, "test.toml");
  } catch (const CaseError& e) {
    return e.what();
  }
  ADD_FAILURE() << "no CaseError for:\n" << text;
  return "";
}

void expect_contains(const std::string& message, const std::vector<std::string>& parts) {
  for (const auto& p : parts) {
    EXPECT_NE(message.find(p), std::string::npos) << "missing '" << p << "' in: " << message;
  }
}

TEST(CaseFiles, EveryShippedCaseLoads) {
  int count = 0;
  for (const auto& entry : std::filesystem::directory_iterator(kSourceDir / "cases")) {
    if (entry.path().extension() != ".toml") continue;
    ++count;
    SCOPED_TRACE(entry.path().string());
    Case c;
    ASSERT_NO_THROW(c = load_case(entry.path()));
    EXPECT_EQ(c.name, entry.path().stem().string());  // results folders use the file's name
    EXPECT_GE(c.layers(), 1);
    EXPECT_EQ(c.reduced_gravity_m_per_s2.size(), c.thickness_m.size() - 1);
    const int r = c.grid_ratio();
    EXPECT_EQ(c.truth.nx, r * c.coarse.nx);
    EXPECT_EQ(c.truth.ny, r * c.coarse.ny);
    EXPECT_TRUE(r == 1 || r % 2 == 0);
    EXPECT_LT(c.run.spinup_s, c.run.length_s);
    ASSERT_FALSE(c.closures.empty());
    EXPECT_EQ(c.closures.front().name, "none");
  }
  EXPECT_GE(count, 4);
}

TEST(CaseFiles, ReferenceCaseHasPhysicsStartingPoint) {
  // PHYSICS.md section 5's starting point, as written there.
  const Case c = load_case(kSourceDir / "cases" / "double_gyre_3layer.toml");
  EXPECT_DOUBLE_EQ(c.lx_m, 1600e3);
  EXPECT_DOUBLE_EQ(c.ly_m, 1600e3);
  EXPECT_DOUBLE_EQ(c.f0_per_s, 8e-5);
  EXPECT_DOUBLE_EQ(c.beta_per_m_s, 2e-11);
  EXPECT_EQ(c.thickness_m, (std::vector<double>{600, 1000, 2400}));
  EXPECT_EQ(c.reduced_gravity_m_per_s2, (std::vector<double>{0.025, 0.0125}));
  EXPECT_DOUBLE_EQ(c.wind.tau0_n_per_m2, 0.1);
  EXPECT_DOUBLE_EQ(c.truth.viscosity_m2_per_s, 200.0);
  EXPECT_EQ(c.truth.nx, 128);
  EXPECT_DOUBLE_EQ(c.truth.dt_s, 1800.0);
  EXPECT_EQ(c.coarse.nx, 32);
  // The coarse viscosity resolves its own Munk layer by >= 1.5 coarse intervals (PHYSICS.md 3).
  EXPECT_GE(std::cbrt(c.coarse.viscosity_m2_per_s / c.beta_per_m_s) / (c.lx_m / c.coarse.nx), 1.5);
}

TEST(CaseFiles, TinyCaseIsSmall) {
  const Case c = load_case(kSourceDir / "cases" / "tiny_2layer.toml");
  EXPECT_EQ(c.coarse.nx, 16);
  EXPECT_EQ(c.truth.nx, 32);
  EXPECT_LE(c.run.length_s, kYear);
}

TEST(CaseUnits, ConvertToSi) {
  std::string text = kMinimal + R"(
[wind]
shape = "table"
table_y_km = [0, 600, 1200]
table_tau_x_n_per_m2 = [-0.05, 0.1, -0.05]
seasonal_amplitude = 0.25
seasonal_period_days = 180

[friction]
bottom_drag_per_s = 2e-7
wall = "partial_slip"
slip_length_km = 12.5

[run]
years = 2.5
spinup_years = 1
snapshot_days = 15
series_days = 2
checkpoint_days = 100
)";
  const Case c = parse_case(text, "units.toml");
  EXPECT_DOUBLE_EQ(c.lx_m, 1600.0 * 1000.0);
  EXPECT_DOUBLE_EQ(c.ly_m, 1200.0 * 1000.0);
  EXPECT_EQ(c.wind.shape, WindShape::table);
  EXPECT_EQ(c.wind.table_y_m, (std::vector<double>{0.0, 600.0 * 1000.0, 1200.0 * 1000.0}));
  EXPECT_EQ(c.wind.table_tau_x_n_per_m2, (std::vector<double>{-0.05, 0.1, -0.05}));
  EXPECT_DOUBLE_EQ(c.wind.seasonal_amplitude, 0.25);
  EXPECT_DOUBLE_EQ(c.wind.seasonal_period_s, 180.0 * kDay);
  EXPECT_EQ(c.friction.wall, WallCondition::partial_slip);
  EXPECT_DOUBLE_EQ(c.friction.slip_length_m, 12.5 * 1000.0);
  EXPECT_DOUBLE_EQ(c.friction.bottom_drag_per_s, 2e-7);
  EXPECT_DOUBLE_EQ(c.run.length_s, 2.5 * 365.0 * 86400.0);
  EXPECT_DOUBLE_EQ(c.run.spinup_s, 1.0 * 365.0 * 86400.0);
  EXPECT_DOUBLE_EQ(c.run.snapshot_interval_s, 15.0 * 86400.0);
  EXPECT_DOUBLE_EQ(c.run.series_interval_s, 2.0 * 86400.0);
  EXPECT_DOUBLE_EQ(c.run.checkpoint_interval_s, 100.0 * 86400.0);
  EXPECT_EQ(c.truth.nx, 128);
  EXPECT_EQ(c.truth.ny, 96);
  EXPECT_DOUBLE_EQ(c.truth.dt_s, 1800.0);
  EXPECT_DOUBLE_EQ(c.coarse.viscosity_m2_per_s, 10000.0);
}

TEST(CaseUnits, IntegersAcceptedForFloats) {
  // lx_km, dt_s, viscosity are written as integers in kMinimal; f0 and beta as floats.
  const Case c = parse_case(with(kMinimal, "f0_per_s = 8e-5", "f0_per_s = 0.00008"), "i.toml");
  EXPECT_DOUBLE_EQ(c.f0_per_s, 8e-5);
  EXPECT_DOUBLE_EQ(c.truth.viscosity_m2_per_s, 200.0);
}

TEST(CaseDefaults, ModellerDefaults) {
  const Case c = parse_case(kMinimal, "dir/my_basin.toml");
  EXPECT_EQ(c.name, "my_basin");  // the file stem
  EXPECT_EQ(c.source, std::filesystem::path("dir/my_basin.toml"));
  EXPECT_DOUBLE_EQ(c.rho0_kg_per_m3, 1025.0);
  EXPECT_EQ(c.wind.shape, WindShape::double_gyre);
  EXPECT_DOUBLE_EQ(c.wind.tau0_n_per_m2, 0.1);
  EXPECT_DOUBLE_EQ(c.wind.asymmetry, 0.0);
  EXPECT_DOUBLE_EQ(c.wind.seasonal_amplitude, 0.0);
  EXPECT_DOUBLE_EQ(c.wind.seasonal_period_s, 365.0 * kDay);
  EXPECT_DOUBLE_EQ(c.friction.bottom_drag_per_s, 1e-7);
  EXPECT_EQ(c.friction.wall, WallCondition::free_slip);
  EXPECT_DOUBLE_EQ(c.friction.slip_length_m, 0.0);
  EXPECT_DOUBLE_EQ(c.truth.biharmonic_m4_per_s, 0.0);
  EXPECT_DOUBLE_EQ(c.run.length_s, 12.0 * kYear);
  EXPECT_DOUBLE_EQ(c.run.spinup_s, 6.0 * kYear);  // half the run
  EXPECT_DOUBLE_EQ(c.run.snapshot_interval_s, 30.0 * kDay);
  EXPECT_DOUBLE_EQ(c.run.series_interval_s, 10.0 * kDay);
  EXPECT_DOUBLE_EQ(c.run.checkpoint_interval_s, 365.0 * kDay);
  EXPECT_DOUBLE_EQ(c.run.cfl_limit, 0.5);
  EXPECT_TRUE(c.sheltered_layers.empty());  // the scoring's default rule
  EXPECT_TRUE(c.truth_closure.empty());
  ASSERT_EQ(c.closures.size(), 1U);
  EXPECT_EQ(c.closures[0].name, "none");
  EXPECT_TRUE(c.closures[0].compared);
  EXPECT_DOUBLE_EQ(c.scoring.gyre_threshold, 0.3);
  EXPECT_DOUBLE_EQ(c.scoring.plateau_gradient_fraction, 0.25);
  EXPECT_EQ(c.scoring.apriori_target, AprioriTarget::automatic);
  EXPECT_DOUBLE_EQ(c.scoring.weight_a_priori, 1.0);
}

TEST(CaseScoring, ShelteredLayersAreOneBasedInTheFile) {
  const Case c = parse_case(kMinimal + "[scoring]\nsheltered_layers = [3, 2]\n", "s.toml");
  EXPECT_EQ(c.sheltered_layers, (std::vector<int>{1, 2}));
}

TEST(CaseScoring, OptionsAndWeights) {
  const Case c = parse_case(kMinimal + R"([scoring]
gyre_threshold = 0.4
a_priori_target = "subfilter"
[scoring.weights]
a_priori = 0
energy = 2
)",
                            "w.toml");
  EXPECT_DOUBLE_EQ(c.scoring.gyre_threshold, 0.4);
  EXPECT_EQ(c.scoring.apriori_target, AprioriTarget::subfilter);
  EXPECT_DOUBLE_EQ(c.scoring.weight_a_priori, 0.0);
  EXPECT_DOUBLE_EQ(c.scoring.weight_energy, 2.0);
  EXPECT_DOUBLE_EQ(c.scoring.weight_plateau, 1.0);
}

TEST(CaseClosures, ParametersKeptRawWithPositions) {
  const std::string text = kMinimal + R"([compare]
closures = ["none", "eady"]

[closure.eady]
alpha = 0.015
levels = 3
tapered = true
length = "deformation"

[closure.geometric]
alpha = 4e-2
)";
  const Case c = parse_case(text, "c.toml");
  ASSERT_EQ(c.closures.size(), 3U);
  EXPECT_EQ(c.closures[0].name, "none");
  EXPECT_EQ(c.closures[1].name, "eady");
  EXPECT_TRUE(c.closures[1].compared);
  EXPECT_EQ(std::to_string(c.closures[1].line) + ":" + std::to_string(c.closures[1].column),
            position_of(text, "\"eady\""));
  const auto& p = c.closures[1].params;
  ASSERT_EQ(p.size(), 4U);
  EXPECT_EQ(p.at("alpha").text, "0.015");
  EXPECT_EQ(p.at("levels").text, "3");
  EXPECT_EQ(p.at("tapered").text, "true");
  EXPECT_EQ(p.at("length").text, "deformation");
  EXPECT_EQ(std::to_string(p.at("alpha").line) + ":" + std::to_string(p.at("alpha").column),
            position_of(text, "0.015"));
  // A table for a closure the case does not compare is kept, marked as such.
  const ClosureChoice* g = c.find_closure("geometric");
  ASSERT_NE(g, nullptr);
  EXPECT_FALSE(g->compared);
  EXPECT_EQ(g->params.at("alpha").text, "0.04");
  EXPECT_EQ(c.find_closure("absent"), nullptr);
}

TEST(CaseClosures, IdenticalTwinTruth) {
  std::string text = with(kMinimal, "nx = 128\nny = 96", "nx = 32\nny = 24");
  text = with(text, "dt_s = 1800", "dt_s = 1800\nclosure = \"eady\"");
  const Case c = parse_case(text, "twin.toml");
  EXPECT_EQ(c.grid_ratio(), 1);
  EXPECT_EQ(c.truth_closure, "eady");
}

TEST(CaseFiles, MissingFile) {
  try {
    (void)load_case(kSourceDir / "cases" / "no_such_case.toml");
    FAIL() << "no CaseError";
  } catch (const CaseError& e) {
    expect_contains(e.what(), {"no_such_case.toml", "no such file"});
  }
}

TEST(CaseFiles, ErrorNamesTheFileOnDisk) {
  const auto path = std::filesystem::temp_directory_path() / "plateau_test_case_error.toml";
  const std::string text = with(kMinimal, "ly_km = 1200", "ly_km = -5");
  {
    std::ofstream out(path);
    out << text;
  }
  try {
    (void)load_case(path);
    FAIL() << "no CaseError";
  } catch (const CaseError& e) {
    expect_contains(e.what(), {path.string() + ":" + position_of(text, "-5"), "basin.ly_km", "= -5",
                               "out of range"});
  }
  std::filesystem::remove(path);
}

// ---- one test per class of mistake: file, line:column, key and value in the message ----------

TEST(CaseErrors, UnknownKey) {
  const std::string text = with(kMinimal, "ly_km = 1200", "ly_km = 1200\nlx_kn = 3");
  expect_contains(error_of(text), {"test.toml:" + position_of(text, "lx_kn"), "'basin.lx_kn'",
                                   "= 3", "unknown key", "did you mean 'lx_km'", "allowed:"});
}

TEST(CaseErrors, UnknownSection) {
  const std::string text = kMinimal + "\n[wnd]\nshape = \"double_gyre\"\n";
  expect_contains(error_of(text), {"test.toml:" + position_of(text, "wnd"), "'wnd'",
                                   "unknown section", "did you mean 'wind'", "shape"});
}

TEST(CaseErrors, UnknownKeyInOptionalSection) {
  const std::string text = kMinimal + "\n[run]\nyears = 2\nspinup_days = 100\n";
  expect_contains(error_of(text), {"test.toml:" + position_of(text, "spinup_days"),
                                   "'run.spinup_days'", "= 100", "unknown key", "spinup_years"});
}

TEST(CaseErrors, WrongTypeString) {
  const std::string text = with(kMinimal, "lx_km = 1600", "lx_km = \"1600\"");
  expect_contains(error_of(text), {"test.toml:" + position_of(text, "\"1600\""), "'basin.lx_km'",
                                   "= \"1600\"", "wrong type: a string", "a number", "km"});
}

TEST(CaseErrors, WrongTypeFloatForInteger) {
  const std::string text = with(kMinimal, "nx = 128", "nx = 128.0");
  expect_contains(error_of(text), {"test.toml:" + position_of(text, "128.0"), "'truth.nx'",
                                   "= 128.0", "wrong type: a float", "an integer in [4, 4096]"});
}

TEST(CaseErrors, WrongTypeSectionNotTable) {
  const std::string text = "wind = 3\n" + kMinimal;
  expect_contains(error_of(text), {"test.toml:1:", "'wind'", "= 3", "wrong type", "a table"});
}

TEST(CaseErrors, OutOfRange) {
  const std::string text = kMinimal + "\n[wind]\nasymmetry = 1.5\n";
  expect_contains(error_of(text), {"test.toml:" + position_of(text, "1.5"), "'wind.asymmetry'",
                                   "= 1.5", "out of range", "[-0.9, 0.9]"});
}

TEST(CaseErrors, OutOfRangeArrayElement) {
  const std::string text =
      with(kMinimal, "thickness_m = [600, 1000, 2400]", "thickness_m = [600, -1000, 2400]");
  expect_contains(error_of(text),
                  {"test.toml:" + position_of(text, "-1000"), "'layers.thickness_m'",
                   "= [600, -1000, 2400]", "element 2", "out of range", "(0, 12000]"});
}

TEST(CaseErrors, BadRatioNotAMultiple) {
  const std::string text = with(kMinimal, "nx = 128", "nx = 100");
  expect_contains(error_of(text), {"test.toml:" + position_of(text, "100", "[truth]"), "'truth.nx'",
                                   "= 100", "not a multiple of coarse.nx = 32", "even multiple"});
}

TEST(CaseErrors, BadRatioOdd) {
  std::string text = with(kMinimal, "nx = 128\nny = 96", "nx = 96\nny = 72");
  expect_contains(error_of(text), {"test.toml:" + position_of(text, "96", "[truth]"), "'truth.nx'",
                                   "= 96", "ratio r = 3 is odd", "even"});
}

TEST(CaseErrors, BadRatioDiffersBetweenDirections) {
  const std::string text = with(kMinimal, "ny = 96", "ny = 48");
  expect_contains(error_of(text), {"test.toml:" + position_of(text, "48", "[truth]"), "'truth.ny'",
                                   "= 48", "4 in x but 2 in y", "ny = 96"});
}

TEST(CaseErrors, RatioOneNeedsEqualGrids) {
  // r = 1 in x with r = 2 in y is refused; r = 1 in both is an identical twin and loads.
  const std::string bad = with(kMinimal, "nx = 128\nny = 96", "nx = 32\nny = 48");
  expect_contains(error_of(bad), {"'truth.ny'", "= 48", "1 in x but 2 in y"});
  EXPECT_NO_THROW(
      (void)parse_case(with(kMinimal, "nx = 128\nny = 96", "nx = 32\nny = 24"), "twin.toml"));
}

TEST(CaseErrors, MissingKey) {
  const std::string text = with(kMinimal, "f0_per_s = 8e-5\n", "");
  expect_contains(error_of(text), {"test.toml:" + position_of(text, "[basin]"), "'basin.f0_per_s'",
                                   "(missing)", "required", "s^-1"});
}

TEST(CaseErrors, MissingSection) {
  const std::string text =
      kMinimal.substr(0, kMinimal.find("[truth]")) + kMinimal.substr(kMinimal.find("[coarse]"));
  expect_contains(error_of(text),
                  {"test.toml:1:1", "'truth.nx'", "(missing)", "required section [truth] missing"});
}

TEST(CaseErrors, TomlSyntax) {
  const std::string text = with(kMinimal, "lx_km = 1600", "lx_km = 16OO");
  const std::string message = error_of(text);
  const std::string line =
      position_of(text, "lx_km").substr(0, position_of(text, "lx_km").find(':'));
  expect_contains(message, {"test.toml:" + line + ":", "TOML syntax error", "lx_km", "16OO"});
}

// ---- the rest of the validation rules, one row each ------------------------------------------

struct Mistake {
  std::string name;
  std::string old_text;  // replaced in kMinimal (empty: `new_text` is appended)
  std::string new_text;
  std::string key;    // expected in the message
  std::string value;  // expected in the message
};

class CaseValidation : public ::testing::TestWithParam<Mistake> {};

TEST_P(CaseValidation, Refused) {
  const Mistake& m = GetParam();
  const std::string text =
      m.old_text.empty() ? kMinimal + "\n" + m.new_text : with(kMinimal, m.old_text, m.new_text);
  const std::string message = error_of(text);
  expect_contains(message, {"test.toml:", "'" + m.key + "'", "= " + m.value, "; allowed: "});
}

INSTANTIATE_TEST_SUITE_P(
    Rules, CaseValidation,
    ::testing::Values(
        Mistake{"no_layers", "thickness_m = [600, 1000, 2400]", "thickness_m = []",
                "layers.thickness_m", "[]"},
        Mistake{"nine_layers", "thickness_m = [600, 1000, 2400]",
                "thickness_m = [1, 1, 1, 1, 1, 1, 1, 1, 1]", "layers.thickness_m", "[1, 1"},
        Mistake{"zero_thickness", "thickness_m = [600, 1000, 2400]", "thickness_m = [600, 0, 2400]",
                "layers.thickness_m", "[600, 0, 2400]"},
        Mistake{"gprime_count", "reduced_gravity_m_per_s2 = [0.025, 0.0125]",
                "reduced_gravity_m_per_s2 = [0.025]", "layers.reduced_gravity_m_per_s2", "[0.025]"},
        Mistake{"gprime_negative", "reduced_gravity_m_per_s2 = [0.025, 0.0125]",
                "reduced_gravity_m_per_s2 = [0.025, -0.0125]", "layers.reduced_gravity_m_per_s2",
                "[0.025, -0.0125]"},
        Mistake{"gprime_missing", "reduced_gravity_m_per_s2 = [0.025, 0.0125]\n", "",
                "layers.reduced_gravity_m_per_s2", "(missing)"},
        Mistake{"grid_small", "nx = 32", "nx = 2", "coarse.nx", "2"},
        Mistake{"grid_large", "nx = 128", "nx = 8192", "truth.nx", "8192"},
        Mistake{"dt_zero", "dt_s = 1800", "dt_s = 0", "truth.dt_s", "0"},
        Mistake{"dt_negative", "dt_s = 3600", "dt_s = -3600", "coarse.dt_s", "-3600"},
        Mistake{"viscosity_negative", "viscosity_m2_per_s = 200", "viscosity_m2_per_s = -1",
                "truth.viscosity_m2_per_s", "-1"},
        Mistake{"spinup_not_shorter", "", "[run]\nyears = 4\nspinup_years = 4\n",
                "run.spinup_years", "4"},
        Mistake{"seasonal_one", "", "[wind]\nseasonal_amplitude = 1.0\n", "wind.seasonal_amplitude",
                "1.0"},
        Mistake{"shape_unknown", "", "[wind]\nshape = \"triple_gyre\"\n", "wind.shape",
                "\"triple_gyre\""},
        Mistake{"table_not_increasing", "",
                "[wind]\nshape = \"table\"\ntable_y_km = [0, 800, 600]\n"
                "table_tau_x_n_per_m2 = [0, 0.1, 0]\n",
                "wind.table_y_km", "[0, 800, 600]"},
        Mistake{"table_outside_basin", "",
                "[wind]\nshape = \"table\"\ntable_y_km = [0, 1300]\n"
                "table_tau_x_n_per_m2 = [0, 0.1]\n",
                "wind.table_y_km", "[0, 1300]"},
        Mistake{"table_lengths", "",
                "[wind]\nshape = \"table\"\ntable_y_km = [0, 600, 1200]\n"
                "table_tau_x_n_per_m2 = [0, 0.1]\n",
                "wind.table_tau_x_n_per_m2", "[0, 0.1]"},
        Mistake{"table_missing", "", "[wind]\nshape = \"table\"\n", "wind.table_y_km", "(missing)"},
        Mistake{"table_with_tau0", "",
                "[wind]\nshape = \"table\"\ntau0_n_per_m2 = 0.1\ntable_y_km = [0, 1200]\n"
                "table_tau_x_n_per_m2 = [0, 0.1]\n",
                "wind.tau0_n_per_m2", "0.1"},
        Mistake{"table_keys_without_table", "", "[wind]\ntable_y_km = [0, 1200]\n",
                "wind.table_y_km", "[0, 1200]"},
        Mistake{"drag_negative", "", "[friction]\nbottom_drag_per_s = -1e-7\n",
                "friction.bottom_drag_per_s", "-1e-07"},
        Mistake{"slip_without_partial", "", "[friction]\nwall = \"no_slip\"\nslip_length_km = 5\n",
                "friction.slip_length_km", "5"},
        Mistake{"partial_without_slip", "", "[friction]\nwall = \"partial_slip\"\n",
                "friction.slip_length_km", "(missing)"},
        Mistake{"partial_zero_slip", "",
                "[friction]\nwall = \"partial_slip\"\nslip_length_km = 0\n",
                "friction.slip_length_km", "0"},
        Mistake{"cfl_zero", "", "[run]\ncfl_limit = 0\n", "run.cfl_limit", "0"},
        Mistake{"cfl_above_one", "", "[run]\ncfl_limit = 1.5\n", "run.cfl_limit", "1.5"},
        Mistake{"sheltered_top", "", "[scoring]\nsheltered_layers = [1]\n",
                "scoring.sheltered_layers", "[1]"},
        Mistake{"sheltered_beyond", "", "[scoring]\nsheltered_layers = [4]\n",
                "scoring.sheltered_layers", "[4]"},
        Mistake{"sheltered_twice", "", "[scoring]\nsheltered_layers = [2, 2]\n",
                "scoring.sheltered_layers", "[2, 2]"},
        Mistake{"weights_all_zero", "",
                "[scoring.weights]\nplateau = 0\ntransport = 0\nenergy = 0\na_priori = 0\n",
                "scoring.weights", "{ "},
        Mistake{"compare_twice", "", "[compare]\nclosures = [\"none\", \"none\"]\n",
                "compare.closures", "[\"none\", \"none\"]"},
        Mistake{"compare_not_strings", "", "[compare]\nclosures = [\"none\", 3]\n",
                "compare.closures", "[\"none\", 3]"},
        Mistake{"closure_param_array", "", "[closure.eady]\nalpha = [1, 2]\n", "closure.eady.alpha",
                "[1, 2]"},
        Mistake{"closure_not_table", "", "[closure]\neady = 3\n", "closure.eady", "3"},
        Mistake{"twin_closure_needs_equal_grids", "dt_s = 1800", "dt_s = 1800\nclosure = \"eady\"",
                "truth.closure", "\"eady\""},
        Mistake{"case_name_unsafe", "", "[case]\nname = \"my case/1\"\n", "case.name",
                "\"my case/1\""},
        Mistake{"f0_negative", "f0_per_s = 8e-5", "f0_per_s = -8e-5", "basin.f0_per_s", "-8e-05"},
        Mistake{"beta_typo", "beta_per_m_per_s = 2e-11", "beta_per_m_per_s = 2e11",
                "basin.beta_per_m_per_s", "2e+11"},
        Mistake{"not_finite", "ly_km = 1200", "ly_km = inf", "basin.ly_km", "inf"}),
    [](const ::testing::TestParamInfo<Mistake>& row) { return row.param.name; });

}  // namespace
}  // namespace plateau
