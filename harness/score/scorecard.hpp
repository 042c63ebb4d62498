#pragma once
// The scorecard: every metric with its truth and candidate values, its error and how that error
// was scaled, its skill, the category skills and the overall skill (SCORING.md, aggregation).
//
//   skill s_i = max(0, 1 - e_i), e_i >= 0 the scaled error before clipping
//   category skill = mean of the skills of its scored metrics (reported-only metrics excluded)
//   overall = sum_c w_c S_c / sum_c w_c over the categories that hold scored metrics
//
// Wall times live in a separate timing block that no skill reads, so that a scorecard
// reproduces bit for bit.

#include <iosfwd>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include <nlohmann/json.hpp>

namespace plateau {

enum class Category { plateau, transport, energy, a_priori };
inline constexpr Category kCategories[] = {Category::plateau, Category::transport, Category::energy,
                                           Category::a_priori};
std::string category_name(Category c);

// A metric that is a profile over levels (contour levels of psi, say): both runs' curves.
struct Profile {
  std::string name;
  std::vector<double> truth;
  std::vector<double> candidate;
};

struct Metric {
  std::string id;  // stable dotted name, e.g. plateau.L2.anticyclonic.homogeneity
  Category category = Category::plateau;
  std::string unit;             // of the truth and candidate values
  std::optional<double> truth;  // nothing when undefined (an empty plateau mask)
  std::optional<double> candidate;
  double error = 0.0;  // e >= 0 before clipping
  double skill = 0.0;  // max(0, 1 - e)
  std::string scale;   // how e was formed from the values
  bool scored = true;  // false: reported only, not part of the category mean
  std::string note;
  // Profile metrics: the abscissa (and its unit) and the curves; error formed from them.
  std::string level_unit;
  std::vector<double> levels;
  std::vector<Profile> profiles;
};

// max(0, 1 - e); 0 for a non-finite e.
double skill_from_error(double e);
// |c - t| / |t|; for t = 0: 0 when c = 0, else 1.
double relative_error(double truth, double candidate);
// ||c - t||_2 / ||t||_2 over the levels; for ||t|| = 0: 0 when c is all zero, else 1.
double relative_profile_error(const std::vector<double>& truth,
                              const std::vector<double>& candidate);

// A scored metric with error e; skill from e.
Metric make_metric(std::string id, Category category, std::string unit, std::optional<double> truth,
                   std::optional<double> candidate, double error, std::string scale);

struct CategoryWeights {
  double plateau = 1.0;
  double transport = 1.0;
  double energy = 1.0;
  double a_priori = 1.0;
  [[nodiscard]] double of(Category c) const;
};

struct Timing {
  std::optional<double> truth_wall_s;
  std::optional<double> candidate_wall_s;
  // candidate / truth, when both are known and the truth's is positive.
  [[nodiscard]] std::optional<double> cost_ratio() const;
};

struct Scorecard {
  std::string case_name;
  std::string closure;
  std::string apriori_target;  // the a priori target used ("" when not scored)
  CategoryWeights weights;
  std::vector<Metric> metrics;
  std::vector<std::string> warnings;
  Timing timing;

  // Mean skill of the category's scored metrics; nothing when it has none.
  [[nodiscard]] std::optional<double> category_skill(Category c) const;
  // Weighted mean of the category skills that exist; 0 when none does.
  [[nodiscard]] double overall() const;
  // The metric with this id, or nullptr.
  [[nodiscard]] const Metric* find(std::string_view id) const;
};

// Top level: overall, aggregation, weights, categories {plateau, transport, energy, a_priori}
// each with skill (null when it has no scored metric), weight and metrics (an object keyed by
// metric id), warnings, and timing. Non-finite numbers never appear (written as null).
nlohmann::json scorecard_to_json(const Scorecard& card);

// An aligned table: one line per metric with truth, candidate, unit, error, skill and scale,
// grouped by category, then the category and overall skills, warnings and timing.
void print_scorecard(std::ostream& out, const Scorecard& card);

}  // namespace plateau
