#include "harness/report/report_data.hpp"

#include <algorithm>
#include <cmath>
#include <fstream>
#include <limits>
#include <sstream>

#include <nlohmann/json.hpp>

#include "harness/io/error.hpp"
#include "harness/io/netcdf.hpp"
#include "harness/model/model.hpp"

namespace plateau::report {
namespace {

namespace fs = std::filesystem;
using nlohmann::json;

std::size_t uz(int k) { return static_cast<std::size_t>(k); }
constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

std::vector<std::vector<double>> split_layers(const std::vector<double>& v, std::size_t per,
                                              int n) {
  std::vector<std::vector<double>> out;
  for (int k = 0; k < n && per * uz(k + 1) <= v.size(); ++k) {
    out.emplace_back(v.begin() + static_cast<std::ptrdiff_t>(per * uz(k)),
                     v.begin() + static_cast<std::ptrdiff_t>(per * uz(k + 1)));
  }
  return out;
}

// Values a netCDF variable was defined with but never written read back as its fill value.
bool written(const std::vector<double>& v) {
  return !v.empty() && std::all_of(v.begin(), v.end(),
                                   [](double x) { return std::isfinite(x) && std::abs(x) < 1e30; });
}

std::optional<double> number(const json& j) {
  if (j.is_number()) return j.get<double>();
  return std::nullopt;
}

std::optional<json> read_json(const fs::path& file, std::vector<std::string>& warnings) {
  std::ifstream in(file);
  if (!in) return std::nullopt;
  try {
    return json::parse(in);
  } catch (const std::exception& e) {
    warnings.push_back(file.string() + ": not readable as JSON (" + e.what() + ")");
    return std::nullopt;
  }
}

void add_sheltered(std::vector<int>& layers, const std::string& metric_id) {
  // plateau.L<k>.<gyre>.<name>
  if (metric_id.rfind("plateau.L", 0) != 0) return;
  const std::size_t dot = metric_id.find('.', 9);
  if (dot == std::string::npos) return;
  try {
    const int k = std::stoi(metric_id.substr(9, dot - 9));
    if (std::find(layers.begin(), layers.end(), k) == layers.end()) layers.push_back(k);
  } catch (const std::exception&) {
  }
}

void sheltered_from_card(std::vector<int>& layers, const json& card) {
  if (!card.is_object() || !card.contains("categories")) return;
  const json& cats = card["categories"];
  if (!cats.is_object() || !cats.contains("plateau")) return;
  const json& p = cats["plateau"];
  if (!p.is_object() || !p.contains("metrics") || !p["metrics"].is_object()) return;
  for (const auto& [id, _] : p["metrics"].items()) add_sheltered(layers, id);
}

ClosureSkill skill_from_card(const json& card) {
  ClosureSkill s;
  s.closure = card.value("closure", std::string());
  s.overall = card.contains("overall") ? number(card["overall"]) : std::nullopt;
  static const char* names[] = {"plateau", "transport", "energy", "a_priori"};
  if (card.contains("categories") && card["categories"].is_object()) {
    for (int c = 0; c < 4; ++c) {
      const json& cats = card["categories"];
      if (cats.contains(names[c]) && cats[names[c]].is_object() &&
          cats[names[c]].contains("skill")) {
        s.categories[c] = number(cats[names[c]]["skill"]);
      }
    }
  }
  return s;
}

}  // namespace

GridField RunFields::layer_field(const std::vector<double>& v) const {
  GridField f;
  f.nx = nx;
  f.ny = ny;
  f.lx_km = lx_m / 1000.0;
  f.ly_km = ly_m / 1000.0;
  f.values = v;
  return f;
}

std::vector<double> RunFields::barotropic_of(const std::vector<std::vector<double>>& p) const {
  const std::size_t per = uz(nx + 1) * uz(ny + 1);
  std::vector<double> bt(per, 0.0);
  for (std::size_t k = 0; k < p.size() && k < thickness_m.size(); ++k) {
    if (p[k].size() != per) continue;
    const double c = p[k][0];
    for (std::size_t i = 0; i < per; ++i) bt[i] += thickness_m[k] * (p[k][i] - c);
  }
  return bt;
}

std::vector<double> RunFields::barotropic() const {
  std::vector<std::vector<double>> p = psi;
  for (std::size_t k = 0; k < p.size() && k < wall_psi.size(); ++k) {
    // The mean wall value is the mean of the walls' values: make node 0 carry it exactly.
    if (!p[k].empty()) p[k][0] = wall_psi[k];
  }
  return barotropic_of(p);
}

RunFields read_run_file(const fs::path& file, const std::string& label) {
  const io::NetcdfReader rd(file);
  RunFields r;
  r.label = label;
  r.file = file;
  const std::vector<double> x = rd.read("x").values;
  const std::vector<double> y = rd.read("y").values;
  if (x.size() < 2 || y.size() < 2) throw io::IoError(file, file.string() + ": no grid");
  r.nx = static_cast<int>(x.size()) - 1;
  r.ny = static_cast<int>(y.size()) - 1;
  r.lx_m = x.back() - x.front();
  r.ly_m = y.back() - y.front();
  r.layers = static_cast<int>(rd.dimension_length("layer"));
  r.thickness_m = rd.read("layer_thickness").values;
  if (rd.has_variable("reduced_gravity")) r.reduced_gravity = rd.read("reduced_gravity").values;
  const auto attr = [&](const char* name, double fallback) {
    if (!rd.has_global_attribute(name)) return fallback;
    const std::vector<double> v = rd.global_double_attribute(name);
    return v.empty() ? fallback : v.front();
  };
  r.f0 = attr("f0_s-1", 0.0);
  r.beta = attr("beta_m-1_s-1", 0.0);
  r.rho0 = attr("rho0_kg_m-3", 1025.0);
  r.mean_start_s = attr("mean_window_start_s", 0.0);
  const std::size_t per = uz(r.nx + 1) * uz(r.ny + 1);
  const std::vector<double> psi = rd.read("psi").values;
  const std::vector<double> q = rd.read("q").values;
  if (written(psi) && written(q)) {
    r.psi = split_layers(psi, per, r.layers);
    r.q = split_layers(q, per, r.layers);
    r.wall_psi = rd.read("psi_wall").values;
  }
  if (rd.has_variable("series_t") && rd.has_variable("total_energy")) {
    r.series_t_s = rd.read("series_t").values;
    r.total_energy_j = rd.read("total_energy").values;
  }
  if (rd.has_variable("psi_snapshot") && rd.has_dimension("time")) {
    r.snapshot_t_s = rd.read("time").values;
    for (std::size_t m = 0; m < r.snapshot_t_s.size(); ++m) {
      r.snapshot_psi.push_back(
          split_layers(rd.read_record("psi_snapshot", m).values, per, r.layers));
    }
  }
  return r;
}

RunFields read_truth_file(const fs::path& file, const RunFields& like) {
  const io::NetcdfReader rd(file);
  RunFields r = like;
  r.label = "truth";
  r.file = file;
  r.psi.clear();
  r.q.clear();
  r.series_t_s.clear();
  r.total_energy_j.clear();
  r.snapshot_t_s.clear();
  r.snapshot_psi.clear();
  if (rd.dimension_length("x") != uz(like.nx + 1) || rd.dimension_length("y") != uz(like.ny + 1) ||
      rd.dimension_length("layer") != uz(like.layers)) {
    throw io::IoError(file, file.string() + ": the truth is not on the coarse runs' grid (" +
                                std::to_string(like.nx) + " x " + std::to_string(like.ny) + ")");
  }
  const std::size_t per = uz(like.nx + 1) * uz(like.ny + 1);
  r.psi = split_layers(rd.read("mean_psi").values, per, like.layers);
  r.wall_psi = rd.read("psi_wall_mean").values;
  if (rd.has_global_attribute("mean_start_s")) {
    r.mean_start_s = rd.global_double_attribute("mean_start_s").front();
  }
  // q from psi with the coarse model's own operators (SCORING.md): interior nodes do not depend
  // on the wall condition, which the run file does not record.
  const Grid g(like.nx, like.ny, like.lx_m, like.ly_m);
  ModelParams mp;
  mp.f0 = like.f0;
  mp.beta = like.beta;
  mp.rho0 = like.rho0;
  mp.thickness_m = like.thickness_m;
  mp.reduced_gravity = like.reduced_gravity;
  mp.dt = 1.0;
  const Model model(g, mp);
  std::vector<Field> fields;
  for (const std::vector<double>& v : r.psi) {
    Field f = g.zeros();
    std::copy(v.begin(), v.end(), f.data());
    fields.push_back(std::move(f));
  }
  const ModelState s = model.state_from_psi(fields);
  for (const Field& f : s.q) r.q.emplace_back(f.data(), f.data() + f.size());
  if (rd.has_variable("series_t") && rd.has_variable("series_total")) {
    r.series_t_s = rd.read("series_t").values;
    r.total_energy_j = rd.read("series_total").values;  // m5 s-2
    for (double& e : r.total_energy_j) e *= like.rho0;
  }
  if (rd.has_variable("psi_snapshot") && rd.has_dimension("time")) {
    r.snapshot_t_s = rd.read("time").values;
    for (std::size_t m = 0; m < r.snapshot_t_s.size(); ++m) {
      r.snapshot_psi.push_back(
          split_layers(rd.read_record("psi_snapshot", m).values, per, like.layers));
    }
  }
  return r;
}

std::optional<SkillTable> read_skills(const fs::path& dir, std::vector<std::string>& warnings) {
  SkillTable t;
  if (const auto j = read_json(dir / "compare.json", warnings); j && j->is_object()) {
    t.case_name = j->value("case", std::string());
    if (j->contains("truth") && (*j)["truth"].is_object()) {
      const json& tr = (*j)["truth"];
      if (tr.contains("file") && tr["file"].is_string()) {
        t.truth_file = tr["file"].get<std::string>();
      } else if (tr.contains("entry") && tr["entry"].is_string()) {
        t.truth_file = fs::path(tr["entry"].get<std::string>()) / "truth.nc";
      }
    } else if (j->contains("truth") && (*j)["truth"].is_string()) {
      t.truth_file = (*j)["truth"].get<std::string>();
    }
    const json cards = j->value("scorecards", json::object());
    if (j->contains("ranking") && (*j)["ranking"].is_array()) {
      for (const json& e : (*j)["ranking"]) {
        const std::string name = e.value("closure", std::string());
        ClosureSkill s;
        if (cards.contains(name)) s = skill_from_card(cards[name]);
        s.closure = name;
        if (e.contains("failed") && e["failed"].is_string()) s.failed = e["failed"];
        if (!s.overall && e.contains("overall")) s.overall = number(e["overall"]);
        t.closures.push_back(std::move(s));
      }
    }
    for (const auto& [name, card] : cards.items()) sheltered_from_card(t.sheltered_layers, card);
    std::sort(t.sheltered_layers.begin(), t.sheltered_layers.end());
    return t;
  }
  std::vector<fs::path> files;
  std::error_code ec;
  for (const auto& e : fs::directory_iterator(dir, ec)) {
    const std::string n = e.path().filename().string();
    if (n.rfind("score-", 0) == 0 && e.path().extension() == ".json") files.push_back(e.path());
  }
  if (files.empty()) return std::nullopt;
  std::sort(files.begin(), files.end());
  for (const fs::path& f : files) {
    const auto j = read_json(f, warnings);
    if (!j || !j->is_object()) continue;
    if (t.case_name.empty()) t.case_name = j->value("case", std::string());
    if (t.truth_file.empty() && j->contains("truth")) {
      const json& tr = (*j)["truth"];
      if (tr.is_string()) t.truth_file = tr.get<std::string>();
      if (tr.is_object() && tr.contains("entry") && tr["entry"].is_string()) {
        t.truth_file = fs::path(tr["entry"].get<std::string>()) / "truth.nc";
      }
    }
    ClosureSkill s = skill_from_card(*j);
    if (s.closure.empty()) s.closure = f.stem().string().substr(6);
    t.closures.push_back(std::move(s));
    sheltered_from_card(t.sheltered_layers, *j);
  }
  std::stable_sort(t.closures.begin(), t.closures.end(),
                   [](const ClosureSkill& a, const ClosureSkill& b) {
                     return a.overall.value_or(-1.0) > b.overall.value_or(-1.0);
                   });
  std::sort(t.sheltered_layers.begin(), t.sheltered_layers.end());
  return t;
}

std::optional<TuneLog> read_tune_log(const fs::path& file, std::vector<std::string>& warnings) {
  std::ifstream in(file);
  if (!in) return std::nullopt;
  TuneLog log;
  std::vector<std::string> names;
  std::vector<double> objective;
  std::string line;
  int line_no = 0;
  while (std::getline(in, line)) {
    ++line_no;
    if (line.find_first_not_of(" \t\r") == std::string::npos) continue;
    json j;
    try {
      j = json::parse(line);
    } catch (const std::exception&) {
      warnings.push_back(file.string() + ":" + std::to_string(line_no) + ": not JSON; skipped");
      continue;
    }
    if (!j.is_object()) continue;
    if (log.closure.empty() && j.contains("closure") && j["closure"].is_string()) {
      log.closure = j["closure"];
    }
    // A header: the parameters' declarations.
    for (const char* key : {"params", "parameters"}) {
      if (!j.contains(key) || !j[key].is_array() || !names.empty()) continue;
      for (const json& p : j[key]) {
        if (!p.is_object() || !p.contains("name")) continue;
        AxisSpec a;
        a.name = p.value("name", std::string());
        a.unit = p.value("unit", std::string());
        if (a.unit == "1" || a.unit == "-") a.unit.clear();
        a.log = p.value("log_scale", p.value("log", false));
        names.push_back(a.name);
        log.params.push_back(a);
      }
    }
    // An evaluation: parameter values and a skill.
    std::vector<double> values;
    if (j.contains("values") && j["values"].is_array()) {
      for (const json& v : j["values"]) values.push_back(v.is_number() ? v.get<double>() : kNaN);
    } else {
      // Values by name: {"params": {"alpha": 0.02, ...}} (plateau tune's log) or "values".
      for (const char* key : {"values", "params", "parameters"}) {
        if (!values.empty() || !j.contains(key) || !j[key].is_object()) continue;
        for (const std::string& n : names) {
          values.push_back(j[key].contains(n) && j[key][n].is_number() ? j[key][n].get<double>()
                                                                       : kNaN);
        }
      }
    }
    if (values.empty()) continue;
    std::optional<double> skill;
    for (const char* key : {"skill", "overall"}) {
      if (!skill && j.contains(key)) skill = number(j[key]);
    }
    if (!skill) continue;
    log.values.push_back(std::move(values));
    log.skill.push_back(*skill);
    objective.push_back(j.contains("objective") ? number(j["objective"]).value_or(kNaN) : kNaN);
  }
  if (log.values.empty()) {
    warnings.push_back(file.string() + ": no evaluations found");
    return std::nullopt;
  }
  const std::size_t dims = log.values.front().size();
  while (log.params.size() < dims) {
    AxisSpec a;
    a.name = "parameter " + std::to_string(log.params.size() + 1);
    log.params.push_back(a);
  }
  // The best: the lowest objective when the log has one, else the highest skill.
  std::optional<std::size_t> best;
  for (std::size_t i = 0; i < log.skill.size(); ++i) {
    if (std::isfinite(objective[i])) {
      if (!best || !std::isfinite(objective[*best]) || objective[i] < objective[*best]) best = i;
    } else if (!best || (!std::isfinite(objective[*best]) && log.skill[i] > log.skill[*best])) {
      best = i;
    }
  }
  log.best = best;
  return log;
}

namespace {

struct RegressContext {
  std::string case_name;
  std::string closure;
};

std::optional<double> first_number(const json& j, std::initializer_list<const char*> keys) {
  for (const char* k : keys) {
    if (j.contains(k)) {
      if (const auto v = number(j[k])) return v;
    }
  }
  return std::nullopt;
}

void walk_regress(const json& j, RegressContext ctx, const std::string& key,
                  std::vector<ChangeRow>& rows) {
  if (j.is_array()) {
    for (const json& e : j) walk_regress(e, ctx, key, rows);
    return;
  }
  if (!j.is_object()) return;
  if (j.contains("case") && j["case"].is_string()) ctx.case_name = j["case"];
  if (j.contains("closure") && j["closure"].is_string()) ctx.closure = j["closure"];
  // plateau regress names each pair of a case "name" (the closure, or the suite's own name).
  if (j.contains("case") && j.contains("name") && j["name"].is_string()) ctx.closure = j["name"];
  std::string metric;
  for (const char* k : {"metric", "id"}) {
    if (metric.empty() && j.contains(k) && j[k].is_string()) metric = j[k];
  }
  if (metric.empty() && key.find('.') != std::string::npos) metric = key;
  const auto old_skill =
      first_number(j, {"baseline", "old", "old_skill", "baseline_skill", "before"});
  const auto new_skill = first_number(j, {"new", "new_skill", "skill", "current", "after"});
  if (!metric.empty() && (old_skill || new_skill)) {
    ChangeRow r;
    for (const std::string& part : {ctx.case_name, ctx.closure, metric}) {
      if (part.empty()) continue;
      r.label += (r.label.empty() ? "" : " / ") + part;
    }
    r.old_skill = old_skill;
    r.new_skill = new_skill;
    if (j.contains("regressed") && j["regressed"].is_boolean()) r.failed = j["regressed"];
    if (j.contains("failed") && j["failed"].is_boolean()) r.failed = r.failed || j["failed"];
    for (const char* k : {"status", "kind"}) {
      if (!j.contains(k) || !j[k].is_string()) continue;
      const std::string v = j[k];
      r.failed = r.failed || v == "regressed" || v == "failed" || v == "missing";
    }
    rows.push_back(std::move(r));
    return;
  }
  for (const auto& [k, v] : j.items()) walk_regress(v, ctx, k, rows);
}

}  // namespace

std::optional<std::vector<ChangeRow>> read_regress(const fs::path& file,
                                                   std::vector<std::string>& warnings) {
  const auto j = read_json(file, warnings);
  if (!j) return std::nullopt;
  std::vector<ChangeRow> rows;
  walk_regress(*j, {}, "", rows);
  if (rows.empty()) {
    warnings.push_back(file.string() + ": no metric with a baseline and a new skill found");
    return std::nullopt;
  }
  return rows;
}

}  // namespace plateau::report
