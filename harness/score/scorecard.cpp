#include "harness/score/scorecard.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <ostream>
#include <utility>

namespace plateau {
namespace {

nlohmann::json number(double x) {
  if (!std::isfinite(x)) return nullptr;
  return x;
}

nlohmann::json number(const std::optional<double>& x) {
  if (!x) return nullptr;
  return number(*x);
}

nlohmann::json numbers(const std::vector<double>& v) {
  nlohmann::json a = nlohmann::json::array();
  for (const double x : v) a.push_back(number(x));
  return a;
}

std::string fmt(double x) {
  char buf[32];
  std::snprintf(buf, sizeof buf, "%.4g", x);
  return buf;
}

std::string fmt(const std::optional<double>& x) { return x ? fmt(*x) : std::string("-"); }

constexpr const char* kAggregation =
    "skill = max(0, 1 - error); category skill = mean skill of its scored metrics; overall = "
    "sum(weight * category skill) / sum(weight) over the categories with scored metrics";

}  // namespace

std::string category_name(Category c) {
  switch (c) {
    case Category::plateau:
      return "plateau";
    case Category::transport:
      return "transport";
    case Category::energy:
      return "energy";
    case Category::a_priori:
      return "a_priori";
  }
  return "unknown";
}

double skill_from_error(double e) {
  if (!std::isfinite(e)) return 0.0;
  return std::max(0.0, 1.0 - e);
}

double relative_error(double truth, double candidate) {
  if (truth == 0.0) return candidate == 0.0 ? 0.0 : 1.0;
  return std::abs(candidate - truth) / std::abs(truth);
}

double relative_profile_error(const std::vector<double>& truth,
                              const std::vector<double>& candidate) {
  double tt = 0.0;
  double dd = 0.0;
  double cc = 0.0;
  const std::size_t n = std::min(truth.size(), candidate.size());
  for (std::size_t i = 0; i < n; ++i) {
    const double d = candidate[i] - truth[i];
    tt += truth[i] * truth[i];
    cc += candidate[i] * candidate[i];
    dd += d * d;
  }
  if (!(tt > 0.0)) return cc > 0.0 ? 1.0 : 0.0;
  return std::sqrt(dd / tt);
}

Metric make_metric(std::string id, Category category, std::string unit, std::optional<double> truth,
                   std::optional<double> candidate, double error, std::string scale) {
  Metric m;
  m.id = std::move(id);
  m.category = category;
  m.unit = std::move(unit);
  m.truth = truth;
  m.candidate = candidate;
  m.error = std::isfinite(error) ? std::abs(error) : 1.0;
  m.skill = skill_from_error(m.error);
  m.scale = std::move(scale);
  return m;
}

double CategoryWeights::of(Category c) const {
  switch (c) {
    case Category::plateau:
      return plateau;
    case Category::transport:
      return transport;
    case Category::energy:
      return energy;
    case Category::a_priori:
      return a_priori;
  }
  return 0.0;
}

std::optional<double> Timing::cost_ratio() const {
  if (!truth_wall_s || !candidate_wall_s || !(*truth_wall_s > 0.0)) return std::nullopt;
  return *candidate_wall_s / *truth_wall_s;
}

std::optional<double> Scorecard::category_skill(Category c) const {
  double s = 0.0;
  int n = 0;
  for (const Metric& m : metrics) {
    if (m.category != c || !m.scored) continue;
    s += m.skill;
    ++n;
  }
  if (n == 0) return std::nullopt;
  return s / n;
}

double Scorecard::overall() const {
  double ws = 0.0;
  double w = 0.0;
  for (const Category c : kCategories) {
    const std::optional<double> s = category_skill(c);
    if (!s) continue;
    ws += weights.of(c) * *s;
    w += weights.of(c);
  }
  return w > 0.0 ? ws / w : 0.0;
}

const Metric* Scorecard::find(std::string_view id) const {
  for (const Metric& m : metrics) {
    if (m.id == id) return &m;
  }
  return nullptr;
}

nlohmann::json scorecard_to_json(const Scorecard& card) {
  nlohmann::json j;
  j["case"] = card.case_name;
  j["closure"] = card.closure;
  j["overall"] = number(card.overall());
  j["aggregation"] = kAggregation;
  j["a_priori_target"] = card.apriori_target;
  nlohmann::json weights;
  nlohmann::json categories;
  for (const Category c : kCategories) {
    const std::string name = category_name(c);
    weights[name] = number(card.weights.of(c));
    nlohmann::json cat;
    cat["skill"] = number(card.category_skill(c));
    cat["weight"] = number(card.weights.of(c));
    nlohmann::json ms = nlohmann::json::object();
    for (const Metric& m : card.metrics) {
      if (m.category != c) continue;
      nlohmann::json x;
      x["truth"] = number(m.truth);
      x["candidate"] = number(m.candidate);
      x["unit"] = m.unit;
      x["error"] = number(m.error);
      x["skill"] = number(m.skill);
      x["scale"] = m.scale;
      x["scored"] = m.scored;
      if (!m.note.empty()) x["note"] = m.note;
      if (!m.levels.empty() || !m.profiles.empty()) {
        nlohmann::json p;
        p["levels"] = numbers(m.levels);
        p["level_unit"] = m.level_unit;
        for (const Profile& pr : m.profiles) {
          p["curves"][pr.name] = {{"truth", numbers(pr.truth)},
                                  {"candidate", numbers(pr.candidate)}};
        }
        x["profile"] = std::move(p);
      }
      ms[m.id] = std::move(x);
    }
    cat["metrics"] = std::move(ms);
    categories[name] = std::move(cat);
  }
  j["weights"] = std::move(weights);
  j["categories"] = std::move(categories);
  j["warnings"] = card.warnings;
  nlohmann::json t;
  t["truth_wall_s"] = number(card.timing.truth_wall_s);
  t["candidate_wall_s"] = number(card.timing.candidate_wall_s);
  t["cost_ratio"] = number(card.timing.cost_ratio());
  t["note"] = "wall times only: no skill, comparison or baseline reads this block";
  j["timing"] = std::move(t);
  return j;
}

void print_scorecard(std::ostream& out, const Scorecard& card) {
  struct Row {
    std::string cells[7];
  };
  std::vector<Row> rows;
  rows.push_back({{"metric", "truth", "candidate", "unit", "error", "skill", "scale"}});
  for (const Category c : kCategories) {
    for (const Metric& m : card.metrics) {
      if (m.category != c) continue;
      rows.push_back({{m.id, fmt(m.truth), fmt(m.candidate), m.unit, fmt(m.error),
                       m.scored ? fmt(m.skill) : std::string("(info)"), m.scale}});
    }
  }
  std::size_t width[6] = {0, 0, 0, 0, 0, 0};
  for (const Row& r : rows) {
    for (std::size_t k = 0; k < 6; ++k) width[k] = std::max(width[k], r.cells[k].size());
  }
  const auto pad = [](const std::string& s, std::size_t w, bool right) {
    const std::string fill(w > s.size() ? w - s.size() : 0, ' ');
    return right ? fill + s : s + fill;
  };
  out << "scorecard: case " << card.case_name << ", closure " << card.closure << "\n";
  for (const Row& row : rows) {
    out << pad(row.cells[0], width[0], false);
    for (std::size_t k = 1; k < 6; ++k) {
      out << "  " << pad(row.cells[k], width[k], k != 3);
    }
    out << "  " << row.cells[6] << "\n";
  }
  out << "\n";
  for (const Category c : kCategories) {
    const std::optional<double> s = card.category_skill(c);
    out << pad(category_name(c) + " skill", 16, false) << "  " << (s ? fmt(*s) : "-")
        << "  (weight " << fmt(card.weights.of(c)) << ")\n";
  }
  out << pad("overall skill", 16, false) << "  " << fmt(card.overall()) << "\n";
  if (!card.apriori_target.empty()) out << "a priori target: " << card.apriori_target << "\n";
  for (const std::string& w : card.warnings) out << "warning: " << w << "\n";
  const std::optional<double> ratio = card.timing.cost_ratio();
  if (card.timing.truth_wall_s || card.timing.candidate_wall_s) {
    out << "timing: truth " << fmt(card.timing.truth_wall_s) << " s, candidate "
        << fmt(card.timing.candidate_wall_s) << " s, cost ratio " << fmt(ratio) << "\n";
  }
}

}  // namespace plateau
