#include "harness/report/report.hpp"

#include <algorithm>
#include <cmath>
#include <iomanip>
#include <map>
#include <optional>
#include <sstream>

#include "harness/io/atomic_file.hpp"
#include "harness/io/error.hpp"
#include "harness/report/report_data.hpp"
#include "harness/study/evaluate.hpp"

namespace plateau::report {
namespace {

namespace fs = std::filesystem;

constexpr double kYearS = 365.0 * 86400.0;  // a model year (README: 365 days)
constexpr double kSverdrup = 1e6;           // m3 s-1
const char* const kCategoryNames[] = {"plateau", "transport", "energy", "a priori"};

std::string fixed(double v, int digits) {
  if (!std::isfinite(v)) return "-";
  std::ostringstream s;
  s << std::fixed << std::setprecision(digits) << v;
  return s.str();
}

std::vector<double> scaled(std::vector<double> v, double factor) {
  for (double& x : v) x *= factor;
  return v;
}

std::vector<double> minus(const std::vector<double>& a, const std::vector<double>& b) {
  std::vector<double> d(a.size());
  for (std::size_t i = 0; i < a.size() && i < b.size(); ++i) d[i] = a[i] - b[i];
  return d;
}

std::vector<double> relative_to_wall(const std::vector<double>& psi, double c) {
  std::vector<double> v = psi;
  for (double& x : v) x -= c;
  return v;
}

// The interior nodes of a field (walls carry a wall condition, not a PV the runs share).
std::vector<double> interior(const RunFields& r, const std::vector<double>& v) {
  std::vector<double> out;
  for (int j = 1; j < r.ny; ++j) {
    for (int i = 1; i < r.nx; ++i) {
      out.push_back(v[static_cast<std::size_t>(j) * static_cast<std::size_t>(r.nx + 1) +
                      static_cast<std::size_t>(i)]);
    }
  }
  return out;
}

std::string layer_name(int k, int n) {
  std::string s = "layer " + std::to_string(k);
  if (k == 1) s += " (top)";
  if (k == n && n > 1) s += " (bottom)";
  return s;
}

struct Section {
  std::string id;
  std::string heading;
  std::string intro;  // HTML
  std::vector<Figure> figures;
  std::string extra_html;  // a table, say
};

// ---- figures of the folder ------------------------------------------------------------------

Figure skill_bars(const SkillTable& t) {
  BarChart c;
  c.bars = {"plateau", "transport", "energy", "a priori", "overall"};
  for (const ClosureSkill& s : t.closures) {
    c.groups.push_back(s.closure);
    std::vector<std::optional<double>> row(s.categories, s.categories + 4);
    row.push_back(s.failed.empty() ? s.overall : std::nullopt);
    if (!s.failed.empty()) row.assign(5, std::nullopt);
    c.values.push_back(std::move(row));
  }
  c.y = {"skill", "", false, 0.0, 1.0, true};
  return bar_figure(
      "skill-bars", "Skill per closure and category",
      "Skill in [0, 1] of each closure (groups, in rank order) per scoring category: the mean "
      "skill max(0, 1 - e) of the category's metrics, e the scaled error against the truth "
      "(SCORING.md), and the weighted overall skill. 1 reproduces the truth; a cross marks a "
      "category with no scored metric or a run that failed.",
      c);
}

Figure pv_maps(const RunFields* truth, const RunFields& run, int k) {
  const std::size_t l = static_cast<std::size_t>(k - 1);
  std::vector<MapPanel> panels;
  const std::vector<double> run_in = interior(run, run.q[l]);
  std::vector<double> truth_in;
  if (truth) truth_in = interior(*truth, truth->q[l]);
  const ColourRange range =
      colour_range(ColourMap::sequential, {&run_in, truth ? &truth_in : nullptr});
  const auto panel = [&](const std::string& title, const RunFields& r, const std::vector<double>& v,
                         ColourMap map, const ColourRange& rg, const std::string& quantity,
                         const RunFields& contour_run) {
    MapPanel p;
    p.title = title;
    p.field = r.layer_field(v);
    p.contours = contour_run.layer_field(relative_to_wall(
        contour_run.psi[l], contour_run.wall_psi.size() > l ? contour_run.wall_psi[l] : 0.0));
    p.map = map;
    p.range = rg;
    p.quantity = quantity;
    p.unit = "s-1";
    p.interior_only = true;
    return p;
  };
  if (truth) {
    panels.push_back(
        panel("truth", *truth, truth->q[l], ColourMap::sequential, range, "q", *truth));
  }
  panels.push_back(panel(run.label, run, run.q[l], ColourMap::sequential, range, "q", run));
  std::string caption;
  if (truth) {
    const std::vector<double> d = minus(run.q[l], truth->q[l]);
    const std::vector<double> d_in = interior(run, d);
    const ColourRange dr = colour_range(ColourMap::diverging, {&d_in});
    panels.push_back(
        panel(run.label + " \u2212 truth", run, d, ColourMap::diverging, dr, "\u0394q", *truth));
    caption = "Time-mean potential vorticity q of " + layer_name(k, run.layers) +
              " over the averaging window: the coarse-grained truth (left), the coarse run "
              "with closure " +
              run.label +
              " (middle; same colour scale) and their difference, closure minus truth (right; "
              "blue: closure lower, red: higher, white: equal). Grey lines: contours of the "
              "same panel's time-mean streamfunction psi - c (the difference panel shows the "
              "truth's), ten levels, dashed where negative. Wall nodes are left blank. A PV "
              "plateau shows as a region of uniform colour inside closed contours.";
  } else {
    caption = "Time-mean potential vorticity q of " + layer_name(k, run.layers) +
              " in the coarse run with closure " + run.label +
              ", with contours of its time-mean streamfunction psi - c (dashed where negative). "
              "The truth was not found, so nothing is compared.";
  }
  return map_figure("pv-L" + std::to_string(k) + "-" + file_label(run.label),
                    "Mean PV, " + layer_name(k, run.layers) + ": " + (truth ? "truth, " : "") +
                        run.label + (truth ? ", difference" : ""),
                    caption, panels);
}

Figure transport_maps(const RunFields* truth, const std::vector<RunFields>& runs) {
  std::vector<const RunFields*> all;
  if (truth) all.push_back(truth);
  for (const RunFields& r : runs) all.push_back(&r);
  std::vector<std::vector<double>> bt;
  bt.reserve(all.size());
  for (const RunFields* r : all) bt.push_back(scaled(r->barotropic(), 1.0 / kSverdrup));
  std::vector<const std::vector<double>*> ptrs;
  ptrs.reserve(bt.size());
  for (const auto& v : bt) ptrs.push_back(&v);
  const ColourRange range = colour_range(ColourMap::diverging, ptrs);
  std::vector<MapPanel> panels;
  for (std::size_t i = 0; i < all.size(); ++i) {
    MapPanel p;
    p.title = all[i]->label;
    p.field = all[i]->layer_field(bt[i]);
    p.contours = p.field;
    p.map = ColourMap::diverging;
    p.range = range;
    p.quantity = "barotropic transport";
    p.unit = "Sv";
    panels.push_back(std::move(p));
  }
  return map_figure(
      "transport-maps", "Barotropic transport streamfunction",
      "Time-mean barotropic transport streamfunction sum_k H_k (psi_k - c_k) in Sv "
      "(1 Sv = 10\u2076 m\u00b3 s\u207b\u00b9; zero on the walls) of the truth (coarse-grained) "
      "and of each closure's coarse run, on one colour scale centred on zero: red for positive "
      "(clockwise, anticyclonic in the northern hemisphere), blue for negative circulation. "
      "Lines: ten contours of the same field, dashed where negative. The transport between "
      "two contours is their difference in Sv.",
      panels);
}

std::vector<double> years(const std::vector<double>& t_s) { return scaled(t_s, 1.0 / kYearS); }

Figure energy_series(const RunFields* truth, const std::vector<RunFields>& runs) {
  LinePanel p;
  p.title = "total energy";
  p.x = {"model time", "years", false, std::nullopt, std::nullopt, false};
  p.y = {"total energy", "J", false, std::nullopt, std::nullopt, false};
  if (truth && !truth->series_t_s.empty()) {
    p.series.push_back({"truth (truth grid)", years(truth->series_t_s), truth->total_energy_j,
                        kTruthColour, false, false});
  }
  for (std::size_t i = 0; i < runs.size(); ++i) {
    if (runs[i].series_t_s.empty()) continue;
    p.series.push_back({runs[i].label, years(runs[i].series_t_s), runs[i].total_energy_j,
                        run_colour(i), false, false});
  }
  const double start = truth ? truth->mean_start_s : (runs.empty() ? 0.0 : runs[0].mean_start_s);
  p.markers.push_back({start / kYearS, "averaging starts"});
  return line_figure(
      "energy-series", "Total energy over time",
      "Basin-integrated total energy (kinetic plus available potential, times rho0) in J against "
      "model time in years, for the truth (measured on its own, finer grid, so it includes "
      "scales the coarse runs cannot hold) and each closure's coarse run. The dotted line marks "
      "the start of the averaging window; after it the curves should be level (equilibrated).",
      {p});
}

struct Extremes {
  std::vector<double> t_years;
  std::vector<double> max_sv;
  std::vector<double> min_sv;
};

Extremes transport_extremes(const RunFields& r) {
  Extremes e;
  for (std::size_t m = 0; m < r.snapshot_t_s.size() && m < r.snapshot_psi.size(); ++m) {
    const std::vector<double> bt = r.barotropic_of(r.snapshot_psi[m]);
    if (bt.empty()) continue;
    const auto [lo, hi] = std::minmax_element(bt.begin(), bt.end());
    e.t_years.push_back(r.snapshot_t_s[m] / kYearS);
    e.max_sv.push_back(*hi / kSverdrup);
    e.min_sv.push_back(*lo / kSverdrup);
  }
  return e;
}

std::optional<Figure> transport_series(const RunFields* truth, const std::vector<RunFields>& runs) {
  LinePanel hi;
  LinePanel lo;
  hi.title = "maximum (positive gyre)";
  lo.title = "minimum (negative gyre)";
  for (LinePanel* p : {&hi, &lo}) {
    p->x = {"model time", "years", false, std::nullopt, std::nullopt, false};
    p->y = {"barotropic transport", "Sv", false, std::nullopt, std::nullopt, false};
  }
  bool any = false;
  const auto add = [&](const RunFields& r, const std::string& colour) {
    const Extremes e = transport_extremes(r);
    if (e.t_years.empty()) return;
    any = true;
    hi.series.push_back({r.label, e.t_years, e.max_sv, colour, false, e.t_years.size() < 40});
    lo.series.push_back({r.label, e.t_years, e.min_sv, colour, false, e.t_years.size() < 40});
  };
  if (truth) add(*truth, kTruthColour);
  for (std::size_t i = 0; i < runs.size(); ++i) add(runs[i], run_colour(i));
  if (!any) return std::nullopt;
  const double start = truth ? truth->mean_start_s : runs.front().mean_start_s;
  hi.markers.push_back({start / kYearS, "averaging starts"});
  lo.markers.push_back({start / kYearS, "averaging starts"});
  return line_figure(
      "transport-series", "Gyre transport over time",
      "Maximum (left) and minimum (right) over the basin of the instantaneous barotropic "
      "transport streamfunction sum_k H_k (psi_k - c_k), in Sv, at each stored snapshot: the "
      "strength of the positive and the negative gyre, for the truth (coarse-grained snapshots) "
      "and each closure's coarse run. The dotted line marks the start of the averaging window.",
      {hi, lo});
}

Figure qpsi_scatter(const RunFields* truth, const std::vector<RunFields>& runs, int k) {
  const std::size_t l = static_cast<std::size_t>(k - 1);
  std::vector<ScatterPanel> panels;
  for (std::size_t i = 0; i < runs.size(); ++i) {
    const RunFields& r = runs[i];
    ScatterPanel p;
    p.title = truth ? "truth and " + r.label : r.label;
    p.x = {"psi \u2212 c", "m2 s-1", false, std::nullopt, std::nullopt, false};
    p.y = {"q", "s-1", false, std::nullopt, std::nullopt, false};
    if (truth) {
      p.sets.push_back({"truth",
                        interior(*truth, relative_to_wall(truth->psi[l], truth->wall_psi[l])),
                        interior(*truth, truth->q[l]), kTruthColour, 2.0, 0.75});
    }
    p.sets.push_back({r.label, interior(r, relative_to_wall(r.psi[l], r.wall_psi[l])),
                      interior(r, r.q[l]), run_colour(i), 2.0, 0.7});
    panels.push_back(std::move(p));
  }
  return scatter_figure(
      "q-psi-L" + std::to_string(k), "q against psi, " + layer_name(k, runs.front().layers),
      "Time-mean potential vorticity q against the time-mean streamfunction psi - c of " +
          layer_name(k, runs.front().layers) +
          ", a sheltered layer, one dot per interior grid node of the coarse grid: the truth in "
          "black, each closure's coarse run in colour (one panel per closure). Where eddies "
          "homogenise PV inside closed streamlines the dots form a flat plateau (q independent "
          "of psi) over the gyre's range of psi; a closure that reproduces the truth lies on "
          "the black dots.",
      panels);
}

// ---- tune and regress -----------------------------------------------------------------------

std::vector<Figure> tune_figures(const TuneLog& log) {
  std::vector<Figure> out;
  std::vector<Sweep> sweeps;
  for (std::size_t p = 0; p < log.params.size(); ++p) {
    Sweep s;
    s.parameter = log.params[p];
    for (const auto& v : log.values) s.x.push_back(p < v.size() ? v[p] : std::nan(""));
    s.score = log.skill;
    s.best = log.best;
    sweeps.push_back(std::move(s));
  }
  const std::string who = log.closure.empty() ? "the closure" : "closure " + log.closure;
  out.push_back(sweep_figure(
      "tune-parameters", "Tune: skill against each parameter",
      "Each evaluation of the tune of " + who +
          " (one dot per coarse run in the tune log), its skill over the tune's objective "
          "categories against the value of one parameter (one panel per parameter; the other "
          "parameters vary too). The larger dot is the best evaluation (lowest objective error).",
      sweeps));
  if (log.params.size() >= 2) {
    ParameterMap m;
    m.x = log.params[0];
    m.y = log.params[1];
    for (const auto& v : log.values) {
      m.px.push_back(!v.empty() ? v[0] : std::nan(""));
      m.py.push_back(v.size() > 1 ? v[1] : std::nan(""));
    }
    m.score = log.skill;
    m.best = log.best;
    out.push_back(parameter_map_figure(
        "tune-map", "Tune: skill over two parameters",
        "The evaluations of the tune of " + who + " in the plane of its first two parameters (" +
            m.x.name + ", " + m.y.name +
            "), each dot coloured by its skill (colour bar; light is better). The ring marks the "
            "best evaluation." +
            (log.params.size() > 2 ? " Further parameters vary too and are not shown." : ""),
        m));
  }
  return out;
}

Figure regress_figure(const std::vector<ChangeRow>& rows) {
  return change_figure(
      "regress-changes", "Regress: skill against the baseline",
      "Change of each metric's skill against the stored baseline (new minus baseline; bar "
      "left of the line: worse), one row per case, closure and metric that changed, with both "
      "skills on the right. Blue bars: better; light red: worse within the tolerance; dark red "
      "rows regressed by more than their tolerance (or disappeared).",
      rows);
}

// ---- the page -------------------------------------------------------------------------------

std::string ranking_table(const SkillTable& t) {
  std::ostringstream h;
  h << "<table><thead><tr><th>rank</th><th>closure</th><th>overall</th>";
  for (const char* c : kCategoryNames) h << "<th>" << c << "</th>";
  h << "</tr></thead><tbody>\n";
  int rank = 0;
  for (const ClosureSkill& s : t.closures) {
    h << "<tr><td>" << (s.failed.empty() ? std::to_string(++rank) : "-") << "</td><td>"
      << xml_escape(s.closure) << "</td>";
    if (!s.failed.empty()) {
      h << "<td colspan=\"5\">failed: " << xml_escape(s.failed) << "</td></tr>\n";
      continue;
    }
    h << "<td>" << (s.overall ? fixed(*s.overall, 3) : "-") << "</td>";
    for (const auto& c : s.categories) h << "<td>" << (c ? fixed(*c, 3) : "-") << "</td>";
    h << "</tr>\n";
  }
  h << "</tbody></table>\n";
  return h.str();
}

const char* kStyle = R"(
body { font-family: sans-serif; color: #222; max-width: 1260px; margin: 24px auto; padding: 0 16px; line-height: 1.45; }
h1 { font-size: 1.6em; margin-bottom: 0.2em; }
h2 { font-size: 1.25em; border-bottom: 1px solid #ddd; padding-bottom: 4px; margin-top: 2em; }
figure { margin: 1.2em 0 2em 0; overflow-x: auto; }
figure svg { display: block; max-width: 100%; height: auto; }
figcaption { font-size: 0.92em; color: #333; max-width: 1000px; margin-top: 6px; }
table { border-collapse: collapse; margin: 0.8em 0; }
th, td { border-bottom: 1px solid #ddd; padding: 3px 12px; text-align: right; }
th:nth-child(2), td:nth-child(2) { text-align: left; }
.meta { color: #555; font-size: 0.92em; }
.skipped { color: #666; font-size: 0.92em; }
code { background: #f3f3f3; padding: 0 3px; }
)";

std::string page(const std::string& title, const std::string& subtitle,
                 const std::vector<Section>& sections, const std::vector<std::string>& skipped,
                 const std::vector<std::string>& warnings) {
  std::ostringstream h;
  h << "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n"
    << "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n"
    << "<title>" << xml_escape(title) << "</title>\n<style>" << kStyle << "</style>\n</head>\n"
    << "<body>\n<h1>" << xml_escape(title) << "</h1>\n<p class=\"meta\">" << subtitle << "</p>\n";
  h << "<nav><ol>\n";
  for (const Section& s : sections) {
    h << "<li><a href=\"#" << s.id << "\">" << xml_escape(s.heading) << "</a></li>\n";
  }
  h << "</ol></nav>\n";
  int number = 0;
  for (const Section& s : sections) {
    h << "<section id=\"" << s.id << "\">\n<h2>" << xml_escape(s.heading) << "</h2>\n";
    if (!s.intro.empty()) h << "<p>" << s.intro << "</p>\n";
    h << s.extra_html;
    for (const Figure& f : s.figures) {
      ++number;
      h << "<figure id=\"fig-" << xml_escape(f.name) << "\" class=\"report-figure\">\n"
        << f.svg << "<figcaption><b>Figure " << number << ". " << xml_escape(f.title) << ".</b> "
        << xml_escape(f.caption) << " <span class=\"meta\">(figures/" << xml_escape(f.name)
        << ".svg)</span></figcaption>\n</figure>\n";
    }
    h << "</section>\n";
  }
  if (!skipped.empty() || !warnings.empty()) {
    h << "<section id=\"not-shown\">\n<h2>Not in this report</h2>\n<ul class=\"skipped\">\n";
    for (const std::string& s : skipped) h << "<li>" << xml_escape(s) << "</li>\n";
    for (const std::string& w : warnings) h << "<li>warning: " << xml_escape(w) << "</li>\n";
    h << "</ul>\n</section>\n";
  }
  h << "</body>\n</html>\n";
  return h.str();
}

std::vector<int> default_sheltered(int n) {
  std::vector<int> v;
  const int last = n >= 3 ? n - 1 : n;
  for (int k = 2; k <= last; ++k) v.push_back(k);
  return v;
}

}  // namespace

ReportResult write_report(const fs::path& dir, const ReportOptions& options) {
  ReportResult result;
  result.html = options.out.empty() ? dir / "report.html" : options.out;
  std::vector<std::string>& warnings = result.warnings;

  const std::optional<SkillTable> skills = read_skills(dir, warnings);

  // Coarse runs: those the skills name, in rank order, else every run-*.nc.
  std::vector<RunFields> runs;
  std::vector<std::pair<fs::path, std::string>> run_files;
  if (skills) {
    for (const ClosureSkill& s : skills->closures) {
      const fs::path f = dir / ("run-" + file_label(s.closure) + ".nc");
      if (fs::exists(f)) run_files.emplace_back(f, s.closure);
    }
  }
  if (run_files.empty()) {
    std::error_code ec;
    for (const auto& e : fs::directory_iterator(dir, ec)) {
      const std::string n = e.path().filename().string();
      if (n.rfind("run-", 0) == 0 && e.path().extension() == ".nc") {
        run_files.emplace_back(e.path(), e.path().stem().string().substr(4));
      }
    }
    std::sort(run_files.begin(), run_files.end());
  }
  for (const auto& [file, label] : run_files) {
    try {
      RunFields r = read_run_file(file, label);
      if (r.psi.empty()) {
        warnings.push_back(file.string() +
                           ": holds no time means (the run ended before its "
                           "averaging window)");
        continue;
      }
      if (!runs.empty() &&
          (r.nx != runs.front().nx || r.ny != runs.front().ny || r.layers != runs.front().layers)) {
        warnings.push_back(file.string() + ": not on the grid of " +
                           runs.front().file.filename().string() + "; left out");
        continue;
      }
      runs.push_back(std::move(r));
    } catch (const std::exception& e) {
      warnings.emplace_back(e.what());
    }
  }

  std::optional<RunFields> truth;
  fs::path truth_file = options.truth;
  if (truth_file.empty() && skills) truth_file = skills->truth_file;
  if (!runs.empty() && !truth_file.empty()) {
    if (fs::exists(truth_file)) {
      try {
        truth = read_truth_file(truth_file, runs.front());
      } catch (const std::exception& e) {
        warnings.emplace_back(e.what());
      }
    } else {
      warnings.push_back("the truth " + truth_file.string() +
                         " is not there (another cache folder? pass it with --truth)");
    }
  }
  const RunFields* tp = truth ? &*truth : nullptr;

  std::optional<TuneLog> tune = read_tune_log(dir / "tune-log.jsonl", warnings);
  std::optional<std::vector<ChangeRow>> regress = read_regress(dir / "regress.json", warnings);

  if (!skills && runs.empty() && !tune && !regress) {
    throw io::IoError(dir, dir.string() +
                               ": no results to report (expected run-*.nc, score-*.json, "
                               "compare.json, tune-log.jsonl or regress.json)");
  }

  std::vector<Section> sections;
  if (skills && !skills->closures.empty()) {
    Section s{"skills", "Skills", "", {skill_bars(*skills)}, ranking_table(*skills)};
    s.intro =
        "Closures ranked by overall skill against the truth (1 is a perfect match). The "
        "scorecards <code>score-CLOSURE.json</code> list every metric with its truth and "
        "candidate values.";
    sections.push_back(std::move(s));
  } else {
    result.skipped.emplace_back("skills: no compare.json or score-*.json");
  }
  if (!runs.empty()) {
    Section maps{"pv-maps", "Time-mean potential vorticity", "", {}, ""};
    maps.intro = truth ? "Each layer's time-mean PV: truth, closure and their difference, with "
                         "mean streamlines."
                       : "The truth was not found: each closure's PV alone.";
    for (int k = 1; k <= runs.front().layers; ++k) {
      for (const RunFields& r : runs) maps.figures.push_back(pv_maps(tp, r, k));
    }
    sections.push_back(std::move(maps));

    std::vector<int> sheltered = skills ? skills->sheltered_layers : std::vector<int>{};
    if (sheltered.empty()) sheltered = default_sheltered(runs.front().layers);
    Section qpsi{"q-psi", "PV against streamfunction in the sheltered layers", "", {}, ""};
    for (const int k : sheltered) {
      if (k >= 1 && k <= runs.front().layers) qpsi.figures.push_back(qpsi_scatter(tp, runs, k));
    }
    if (!qpsi.figures.empty()) {
      sections.push_back(std::move(qpsi));
    } else {
      result.skipped.emplace_back("q-psi: the runs have no sheltered layer (one layer)");
    }

    Section tr{"transport", "Gyre transport", "", {transport_maps(tp, runs)}, ""};
    sections.push_back(std::move(tr));

    Section ser{"series", "Time series", "", {energy_series(tp, runs)}, ""};
    if (auto f = transport_series(tp, runs)) {
      ser.figures.push_back(std::move(*f));
    } else {
      result.skipped.emplace_back("transport series: no snapshots in the run files");
    }
    sections.push_back(std::move(ser));
    if (!truth) result.skipped.emplace_back("truth: not found, so nothing is compared");
  } else {
    result.skipped.emplace_back("maps and series: no run-*.nc");
  }
  if (tune) {
    Section s{"tune", "Tune", "", tune_figures(*tune), ""};
    s.intro = "From <code>tune-log.jsonl</code>: " + std::to_string(tune->values.size()) +
              " evaluations.";
    sections.push_back(std::move(s));
  } else {
    result.skipped.emplace_back("tune: no tune-log.jsonl");
  }
  if (regress) {
    Section s{"regress", "Regress", "", {regress_figure(*regress)}, ""};
    s.intro = "From <code>regress.json</code>.";
    sections.push_back(std::move(s));
  } else {
    result.skipped.emplace_back("regress: no regress.json");
  }

  const std::string case_name = skills && !skills->case_name.empty() ? skills->case_name : "";
  const std::string title =
      "plateau report" + (case_name.empty() ? std::string() : ": case " + case_name);
  std::string subtitle =
      "Results folder <code>" + xml_escape(fs::absolute(dir).string()) + "</code>";
  if (truth) subtitle += "; truth <code>" + xml_escape(truth->file.string()) + "</code>";
  subtitle += ". Every figure is also a standalone SVG file in <code>figures/</code>.";

  const fs::path fig_dir = result.html.parent_path() / "figures";
  for (const Section& s : sections) {
    for (const Figure& f : s.figures) {
      const fs::path p = fig_dir / (f.name + ".svg");
      io::write_text_atomic(p, f.svg);
      result.figures.push_back(p);
    }
  }
  io::write_text_atomic(result.html, page(title, subtitle, sections, result.skipped, warnings));
  return result;
}

}  // namespace plateau::report
