#include "harness/study/regress.hpp"

#include <algorithm>
#include <cmath>
#include <set>
#include <utility>

#include "harness/case/case.hpp"
#include "harness/case/toml_reader.hpp"
#include "harness/io/atomic_file.hpp"
#include "harness/io/error.hpp"

namespace plateau {

namespace fs = std::filesystem;
using case_detail::Document;
using case_detail::Range;
using case_detail::Section;

double Suite::tolerance_of(const std::string& id) const {
  if (const auto it = tolerances.find(id); it != tolerances.end()) return it->second;
  std::size_t best = 0;
  double tol = tolerance;
  for (const auto& [key, value] : tolerances) {
    if (key.size() < 2 || key.back() != '*') continue;
    const std::string prefix = key.substr(0, key.size() - 1);
    if (id.rfind(prefix, 0) == 0 && prefix.size() >= best) {
      best = prefix.size();
      tol = value;
    }
  }
  return tol;
}

namespace {

constexpr std::string_view kNameAllowed = "letters, digits, '_', '-', '.'";

bool safe_name(const std::string& s) {
  if (s.empty() || s.front() == '.') return false;
  return std::all_of(s.begin(), s.end(), [](char ch) {
    return (ch >= 'a' && ch <= 'z') || (ch >= 'A' && ch <= 'Z') || (ch >= '0' && ch <= '9') ||
           ch == '_' || ch == '-' || ch == '.';
  });
}

std::string param_text(const Section& params, const std::string& key) {
  const toml::node& n = *params.node(key);
  if (const auto* b = n.as_boolean()) return b->get() ? "true" : "false";
  if (const auto* s = n.as_string()) return s->get();
  if (const auto* i = n.as_integer()) return std::to_string(i->get());
  if (const auto* f = n.as_floating_point()) return case_detail::format_number(f->get());
  params.fail(key, "not a single value", "a number, a boolean or a string");
}

}  // namespace

Suite load_suite(const fs::path& path) {
  const std::string text = io::read_file_bytes(path);
  const Document doc(text, path);
  const fs::path dir = path.parent_path();
  for (const auto& [key, node] : doc.root()) {
    if (key.str() != "suite" && key.str() != "pair") {
      doc.fail(node.source(), key.str(), case_detail::format_value(node), "unknown section",
               "[suite] and [[pair]]");
    }
  }
  Suite s;
  s.source = path;
  const Section suite(doc, "suite", doc.root().get("suite"),
                      {"name", "description", "baseline", "tolerance", "tolerances"});
  s.name = suite.string("name", kNameAllowed).value_or(path.stem().string());
  if (!safe_name(s.name)) suite.fail("name", "not usable as a file name", kNameAllowed);
  (void)suite.string("description", "a string");
  const auto baseline = suite.string("baseline", "a file name, relative to the suite file");
  if (!baseline) suite.fail_missing("baseline", "a file name, relative to the suite file");
  s.baseline = dir / *baseline;
  s.tolerance = suite.number_or("tolerance", Range::non_negative(1.0), "skill", 0.01);
  if (suite.has("tolerances")) {
    const toml::node* tn = suite.node("tolerances");
    std::vector<std::string> ids;
    if (const auto* t = tn->as_table()) {
      for (const auto& [k, v] : *t) ids.emplace_back(k.str());
    }
    const Section tol(doc, "suite.tolerances", tn, ids, suite.where());
    for (const std::string& id : ids) {
      s.tolerances[id] = tol.required_number(id, Range::non_negative(1.0), "skill");
    }
  }

  const toml::node* pairs = doc.root().get("pair");
  const toml::array* arr = pairs == nullptr ? nullptr : pairs->as_array();
  if (pairs != nullptr && arr == nullptr) {
    doc.fail(pairs->source(), "pair", case_detail::format_value(*pairs), "not an array of tables",
             "[[pair]] entries");
  }
  if (arr == nullptr || arr->empty()) {
    doc.fail(doc.root().source(), "pair", "(none)", "the suite lists no pair",
             "one or more [[pair]] tables with case and closure");
  }
  std::set<std::string> seen;
  for (std::size_t i = 0; i < arr->size(); ++i) {
    const toml::node& node = *arr->get(i);
    const std::string name = "pair[" + std::to_string(i + 1) + "]";
    const Section p(doc, name, &node, {"case", "closure", "name", "params"});
    SuitePair sp;
    sp.where = doc.location(node.source());
    const auto case_file = p.string("case", "a case file, relative to the suite file");
    if (!case_file) p.fail_missing("case", "a case file, relative to the suite file");
    sp.case_path = dir / *case_file;
    if (!fs::exists(sp.case_path)) p.fail("case", "no such file", "an existing case file");
    const auto closure = p.string("closure", "a closure name (`plateau closures`)");
    if (!closure) p.fail_missing("closure", "a closure name (`plateau closures`)");
    sp.closure = *closure;
    sp.name = p.string("name", kNameAllowed).value_or(sp.closure);
    if (!safe_name(sp.name)) p.fail("name", "not usable as a file name", kNameAllowed);
    if (p.has("params")) {
      const toml::node* pn = p.node("params");
      std::vector<std::string> keys;
      if (const auto* t = pn->as_table()) {
        for (const auto& [k, v] : *t) keys.emplace_back(k.str());
      }
      const Section params(doc, name + ".params", pn, keys, p.where());
      for (const std::string& k : keys) {
        sp.sets.push_back(sp.closure + "." + k + "=" + param_text(params, k));
      }
    }
    const std::string key = fs::weakly_canonical(sp.case_path).string() + "\n" + sp.name;
    if (!seen.insert(key).second) {
      p.fail("name", "the same case has this pair name twice", "a name unique within its case");
    }
    s.pairs.push_back(std::move(sp));
  }
  return s;
}

std::string pair_id(const std::string& case_name, const std::string& name) {
  return case_name + "/" + name;
}

nlohmann::json baseline_to_json(const Baseline& b, const std::string& suite_name) {
  nlohmann::json j;
  j["plateau_baseline"] = 1;
  j["suite"] = suite_name;
  j["solver"] = b.solver;
  j["truths"] = b.truths;
  j["note"] =
      "skills by stable metric id (ARCHITECTURE.md); 'overall' is the overall skill. Written by "
      "plateau regress --update-baseline; never edit by hand.";
  j["skills"] = b.skills;
  return j;
}

Baseline load_baseline(const fs::path& path) {
  const std::string text = io::read_file_bytes(path);
  Baseline b;
  try {
    const nlohmann::json j = nlohmann::json::parse(text);
    if (!j.contains("plateau_baseline")) throw std::runtime_error("no plateau_baseline key");
    b.solver = j.at("solver").get<std::string>();
    b.truths = j.at("truths").get<std::map<std::string, std::string>>();
    b.skills = j.at("skills").get<std::map<std::string, std::map<std::string, double>>>();
  } catch (const std::exception& e) {
    throw CaseError(path.string() + ": not a plateau baseline (" + e.what() + ")");
  }
  return b;
}

Baseline make_baseline(const std::vector<PairRun>& runs,
                       const std::map<std::string, std::string>& truths,
                       const std::string& solver) {
  Baseline b;
  b.solver = solver;
  b.truths = truths;
  for (const PairRun& r : runs) {
    if (r.skills) b.skills[pair_id(r.case_name, r.name)] = *r.skills;
  }
  return b;
}

std::string kind_name(MetricChange::Kind k) {
  switch (k) {
    case MetricChange::Kind::regressed:
      return "regressed";
    case MetricChange::Kind::improved:
      return "improved";
    case MetricChange::Kind::changed:
      return "changed";
    case MetricChange::Kind::missing:
      return "missing";
    case MetricChange::Kind::added:
      return "new";
  }
  return "?";
}

bool PairComparison::failed() const {
  if (!failure.empty()) return true;
  return std::any_of(changes.begin(), changes.end(), [](const MetricChange& m) {
    return m.kind == MetricChange::Kind::regressed || m.kind == MetricChange::Kind::missing;
  });
}

bool RegressReport::regressed() const { return failures() > 0; }

int RegressReport::failures() const {
  return static_cast<int>(std::count_if(pairs.begin(), pairs.end(),
                                        [](const PairComparison& p) { return p.failed(); }));
}

RegressReport compare_to_baseline(const Suite& suite, const Baseline& baseline, const Baseline& now,
                                  const std::vector<PairRun>& runs) {
  RegressReport r;
  r.suite = suite.name;
  r.solver = now.solver;
  r.baseline_solver = baseline.solver;
  r.solver_changed = !baseline.solver.empty() && baseline.solver != now.solver;
  for (const auto& [case_name, key] : now.truths) {
    const auto it = baseline.truths.find(case_name);
    if (it == baseline.truths.end()) {
      r.truth_changes.push_back("case " + case_name + " is new to the baseline (truth " +
                                key.substr(0, 12) + ")");
    } else if (it->second != key) {
      r.truth_changes.push_back("the truth of case " + case_name + " changed (" +
                                it->second.substr(0, 12) + " -> " + key.substr(0, 12) +
                                "): skills are compared all the same");
    }
  }
  std::set<std::string> current;
  for (const PairRun& run : runs) {
    PairComparison pc;
    pc.case_name = run.case_name;
    pc.name = run.name;
    pc.failure = run.failure;
    pc.wall_s = run.wall_s;
    const std::string id = pair_id(run.case_name, run.name);
    current.insert(id);
    const auto old = baseline.skills.find(id);
    pc.in_baseline = old != baseline.skills.end();
    if (pc.in_baseline && run.skills) {
      for (const auto& [metric, was] : old->second) {
        MetricChange m;
        m.id = metric;
        m.old_skill = was;
        m.tolerance = suite.tolerance_of(metric);
        const auto it = run.skills->find(metric);
        if (it == run.skills->end()) {
          m.kind = MetricChange::Kind::missing;
          pc.changes.push_back(m);
          continue;
        }
        m.new_skill = it->second;
        const double drop = was - it->second;
        if (!(drop <= m.tolerance)) {  // a NaN skill falls too
          m.kind = MetricChange::Kind::regressed;
        } else if (it->second > was) {
          m.kind = MetricChange::Kind::improved;
        } else if (it->second < was) {
          m.kind = MetricChange::Kind::changed;
        } else {
          continue;
        }
        pc.changes.push_back(m);
      }
      for (const auto& [metric, skill] : *run.skills) {
        if (old->second.count(metric) == 0) {
          MetricChange m;
          m.id = metric;
          m.kind = MetricChange::Kind::added;
          m.new_skill = skill;
          m.tolerance = suite.tolerance_of(metric);
          pc.changes.push_back(m);
        }
      }
    }
    r.pairs.push_back(std::move(pc));
  }
  for (const auto& [id, skills] : baseline.skills) {
    if (current.count(id) == 0) r.dropped.push_back(id);
  }
  return r;
}

nlohmann::json report_to_json(const RegressReport& r, const Baseline& now) {
  nlohmann::json j;
  j["suite"] = r.suite;
  j["regressed"] = r.regressed();
  j["failures"] = r.failures();
  j["pairs_run"] = r.pairs.size();
  j["solver"] = r.solver;
  j["baseline_solver"] = r.baseline_solver;
  j["solver_changed"] = r.solver_changed;
  j["truth_changes"] = r.truth_changes;
  j["dropped_from_suite"] = r.dropped;
  nlohmann::json pairs = nlohmann::json::array();
  for (const PairComparison& p : r.pairs) {
    nlohmann::json x;
    x["case"] = p.case_name;
    x["name"] = p.name;
    x["status"] = p.failed() ? "failed" : (p.in_baseline ? "passed" : "new");
    x["in_baseline"] = p.in_baseline;
    if (!p.failure.empty()) x["failure"] = p.failure;
    nlohmann::json ch = nlohmann::json::array();
    for (const MetricChange& m : p.changes) {
      ch.push_back({{"id", m.id},
                    {"kind", kind_name(m.kind)},
                    {"old", m.old_skill ? nlohmann::json(*m.old_skill) : nlohmann::json(nullptr)},
                    {"new", m.new_skill ? nlohmann::json(*m.new_skill) : nlohmann::json(nullptr)},
                    {"tolerance", m.tolerance}});
    }
    x["changes"] = std::move(ch);
    const auto s = now.skills.find(pair_id(p.case_name, p.name));
    if (s != now.skills.end()) x["skills"] = s->second;
    pairs.push_back(std::move(x));
  }
  j["pairs"] = std::move(pairs);
  return j;
}

}  // namespace plateau
