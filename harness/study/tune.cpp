#include "harness/study/tune.hpp"

#include <fcntl.h>
#include <sys/file.h>
#include <unistd.h>
#include <nlopt.hpp>

#include <algorithm>
#include <cmath>
#include <condition_variable>
#include <fstream>
#include <map>
#include <mutex>
#include <random>
#include <sstream>
#include <thread>
#include <utility>

#include "harness/closure_host/parameters.hpp"
#include "harness/closure_host/registry.hpp"
#include "harness/io/atomic_file.hpp"
#include "harness/io/error.hpp"
#include "harness/study/evaluate.hpp"
#include "plateau/version.hpp"

namespace plateau {

namespace fs = std::filesystem;

namespace {

std::size_t uz(int k) { return static_cast<std::size_t>(k); }

// ---- parameters and objective -----------------------------------------------------------------

double parse_number(const std::string& text, const std::string& where) {
  std::size_t used = 0;
  double v = 0.0;
  try {
    v = std::stod(text, &used);
  } catch (const std::exception&) {
    used = 0;
  }
  if (used == 0 || used != text.size() || !std::isfinite(v)) {
    throw CaseError(where + ": '" + text + "' is not a number");
  }
  return v;
}

bool fixed_by(const std::vector<std::string>& sets, const std::string& closure_name,
              const std::string& key) {
  for (const std::string& s : sets) {
    const ParamOverride o = parse_override(s);
    if ((o.closure == closure_name || o.closure == "closure") && o.key == key) return true;
  }
  return false;
}

}  // namespace

std::string method_name(TuneMethod m) {
  switch (m) {
    case TuneMethod::grid:
      return "grid";
    case TuneMethod::bobyqa:
      return "bobyqa";
    case TuneMethod::neldermead:
      return "neldermead";
    case TuneMethod::sbplx:
      return "sbplx";
    case TuneMethod::cobyla:
      return "cobyla";
  }
  return "?";
}

TuneMethod parse_method(const std::string& text) {
  std::string t;
  for (char ch : text) {
    if (ch != '-' && ch != '_') {
      t += static_cast<char>(std::tolower(static_cast<unsigned char>(ch)));
    }
  }
  if (t == "grid") return TuneMethod::grid;
  if (t == "bobyqa") return TuneMethod::bobyqa;
  if (t == "neldermead" || t == "nm") return TuneMethod::neldermead;
  if (t == "sbplx" || t == "subplex") return TuneMethod::sbplx;
  if (t == "cobyla") return TuneMethod::cobyla;
  throw CaseError("--method " + text +
                  ": unknown; allowed: grid, bobyqa, neldermead, sbplx, cobyla");
}

bool is_sequential(TuneMethod m) { return m != TuneMethod::grid; }

double TuneParam::value(double u) const {
  const double t = std::clamp(u, 0.0, 1.0);
  double v = 0.0;
  if (t == 0.0 || t == 1.0) {
    v = t == 0.0 ? lo : hi;  // the ends exactly (exp(log(x)) need not give x back)
  } else if (log_scale) {
    v = std::exp(std::log(lo) + t * (std::log(hi) - std::log(lo)));
  } else {
    v = lo + t * (hi - lo);
  }
  v = std::clamp(v, lo, hi);  // exp(log(x)) may leave the range by an ulp
  return integer ? std::round(v) : v;
}

std::vector<TuneParam> tune_parameters(const closure::Info& info,
                                       const std::vector<std::string>& ranges,
                                       const std::vector<std::string>& sets) {
  auto declared = [&](const std::string& key, const std::string& where) -> const closure::Param& {
    for (const closure::Param& p : info.params) {
      if (p.name == key) return p;
    }
    std::string names;
    for (const closure::Param& p : info.params) names += (names.empty() ? "" : ", ") + p.name;
    throw CaseError(where + ": closure '" + info.name + "' has no parameter '" + key +
                    "'; allowed: " + names);
  };
  auto from_declaration = [](const closure::Param& p) {
    TuneParam t;
    t.name = p.name;
    t.unit = p.unit;
    const double inset = 1e-9 * (p.max - p.min);
    t.lo = p.min_open ? p.min + inset : p.min;
    t.hi = p.max_open ? p.max - inset : p.max;
    t.log_scale = p.is_log_scale && t.lo > 0.0;
    t.integer = p.kind == closure::ParamKind::integer;
    return t;
  };

  std::vector<TuneParam> out;
  if (ranges.empty()) {
    for (const closure::Param& p : info.params) {
      const bool numeric =
          p.kind == closure::ParamKind::real || p.kind == closure::ParamKind::integer;
      if (p.is_tunable && numeric && !fixed_by(sets, info.name, p.name)) {
        out.push_back(from_declaration(p));
      }
    }
    if (out.empty()) {
      throw CaseError("closure '" + info.name +
                      "' has no tunable parameter left to tune (see `plateau closures`; name one "
                      "with --param KEY=LO:HI)");
    }
    return out;
  }
  for (const std::string& r : ranges) {
    const std::string where = "--param " + r;
    const auto eq = r.find('=');
    const auto colon = r.find(':', eq == std::string::npos ? 0 : eq);
    if (eq == std::string::npos || colon == std::string::npos || eq == 0) {
      throw CaseError(where + ": expected KEY=LO:HI (e.g. k_m2_per_s=100:5000)");
    }
    std::string key = r.substr(0, eq);
    if (const auto dot = key.find('.'); dot != std::string::npos) {
      const std::string owner = key.substr(0, dot);
      if (owner != info.name && owner != "closure") {
        throw CaseError(where + ": names closure '" + owner + "', but the tune is of '" +
                        info.name + "'");
      }
      key = key.substr(dot + 1);
    }
    const closure::Param& p = declared(key, where);
    if (p.kind != closure::ParamKind::real && p.kind != closure::ParamKind::integer) {
      throw CaseError(where + ": '" + key + "' is " + kind_name(p.kind) +
                      "; only real and integer parameters are tuned (fix it with --set)");
    }
    if (fixed_by(sets, info.name, key)) {
      throw CaseError(where + ": '" + key + "' is also fixed with --set");
    }
    for (const TuneParam& t : out) {
      if (t.name == key) throw CaseError(where + ": '" + key + "' is given twice");
    }
    TuneParam t = from_declaration(p);
    const double lo = parse_number(r.substr(eq + 1, colon - eq - 1), where);
    const double hi = parse_number(r.substr(colon + 1), where);
    if (!(lo < hi)) throw CaseError(where + ": LO must be below HI");
    if (!p.contains(lo) || !p.contains(hi)) {
      throw CaseError(where + ": the range leaves the declared " + describe_range(p));
    }
    t.lo = lo;
    t.hi = hi;
    t.log_scale = p.is_log_scale;
    if (t.log_scale && lo <= 0.0) {
      throw CaseError(where + ": '" + key + "' is searched in log space: LO must be positive");
    }
    out.push_back(t);
  }
  return out;
}

Objective parse_objective(const std::string& text) {
  Objective o;
  o.text = text;
  if (text == "overall" || text.empty()) {
    o.text = "overall";
    return o;
  }
  std::stringstream in(text);
  std::string part;
  while (std::getline(in, part, ',')) {
    bool found = false;
    for (const Category c : kCategories) {
      if (category_name(c) == part) {
        if (std::find(o.categories.begin(), o.categories.end(), c) != o.categories.end()) {
          throw CaseError("--objective " + text + ": '" + part + "' is listed twice");
        }
        o.categories.push_back(c);
        found = true;
      }
    }
    if (!found) {
      throw CaseError("--objective " + text + ": unknown category '" + part +
                      "'; allowed: overall, or one or more (comma-separated) of plateau, "
                      "transport, energy, a_priori");
    }
  }
  return o;
}

namespace {

bool chosen(const Objective& o, Category c) {
  return o.categories.empty() ||
         std::find(o.categories.begin(), o.categories.end(), c) != o.categories.end();
}

}  // namespace

double objective_error(const Scorecard& card, const Objective& objective) {
  double ws = 0.0;
  double w = 0.0;
  for (const Category c : kCategories) {
    if (!chosen(objective, c)) continue;
    double s = 0.0;
    int n = 0;
    for (const Metric& m : card.metrics) {
      if (m.category != c || !m.scored) continue;
      s += std::isfinite(m.error) ? std::min(m.error, kFailedError) : kFailedError;
      ++n;
    }
    if (n == 0) continue;
    ws += card.weights.of(c) * (s / n);
    w += card.weights.of(c);
  }
  return w > 0.0 ? ws / w : kFailedError;
}

double objective_skill(const Scorecard& card, const Objective& objective) {
  double ws = 0.0;
  double w = 0.0;
  for (const Category c : kCategories) {
    if (!chosen(objective, c)) continue;
    const std::optional<double> s = card.category_skill(c);
    if (!s) continue;
    ws += card.weights.of(c) * *s;
    w += card.weights.of(c);
  }
  return w > 0.0 ? ws / w : 0.0;
}

// ---- the log ------------------------------------------------------------------------------------

namespace {

nlohmann::json evaluation_json(const TuneEvaluation& e, const std::vector<TuneParam>& params) {
  nlohmann::json j;
  j["n"] = e.index;
  j["start"] = e.start;
  j["u"] = e.u;
  nlohmann::json p = nlohmann::json::object();
  for (std::size_t k = 0; k < params.size(); ++k) p[params[k].name] = e.values[k];
  j["params"] = std::move(p);
  j["objective"] = e.objective;
  j["skill"] = e.skill;
  j["overall"] = e.overall;
  nlohmann::json cats = nlohmann::json::object();
  for (std::size_t k = 0; k < std::size(kCategories); ++k) {
    cats[category_name(kCategories[k])] =
        e.categories[k] ? nlohmann::json(*e.categories[k]) : nlohmann::json(nullptr);
  }
  j["categories"] = std::move(cats);
  if (!e.failure.empty()) j["failed"] = e.failure;
  return j;
}

TuneEvaluation evaluation_from_json(const nlohmann::json& j, const std::vector<TuneParam>& params) {
  TuneEvaluation e;
  e.index = j.at("n").get<int>();
  e.start = j.at("start").get<int>();
  e.u = j.at("u").get<std::vector<double>>();
  for (const TuneParam& p : params) e.values.push_back(j.at("params").at(p.name).get<double>());
  e.objective = j.at("objective").get<double>();
  e.skill = j.at("skill").get<double>();
  e.overall = j.at("overall").get<double>();
  for (const Category c : kCategories) {
    const nlohmann::json& v = j.at("categories").at(category_name(c));
    e.categories.push_back(v.is_null() ? std::nullopt : std::optional<double>(v.get<double>()));
  }
  if (j.contains("failed")) e.failure = j.at("failed").get<std::string>();
  return e;
}

// What one rank answers for one point: the numbers the log keeps, or that it was interrupted.
nlohmann::json point_result(const Evaluation& ev, const Objective& objective) {
  nlohmann::json r;
  r["objective"] = objective_error(ev.card, objective);
  r["skill"] = objective_skill(ev.card, objective);
  r["overall"] = ev.card.overall();
  nlohmann::json cats = nlohmann::json::array();
  for (const Category c : kCategories) {
    const auto s = ev.card.category_skill(c);
    cats.push_back(s ? nlohmann::json(*s) : nlohmann::json(nullptr));
  }
  r["categories"] = std::move(cats);
  return r;
}

class TuneLog {
 public:
  TuneLog(fs::path path, bool writer) : path_(std::move(path)), writer_(writer) {}
  ~TuneLog() {
    if (lock_fd_ >= 0) ::close(lock_fd_);
  }
  TuneLog(const TuneLog&) = delete;
  TuneLog& operator=(const TuneLog&) = delete;

  // One writer per folder: a second tune into the same log would interleave its lines.
  void lock() {
    const fs::path dir = path_.parent_path().empty() ? fs::path(".") : path_.parent_path();
    fs::create_directories(dir);
    lock_fd_ = ::open(dir.c_str(), O_RDONLY | O_DIRECTORY | O_CLOEXEC);
    if (lock_fd_ < 0) throw io::IoError(dir, "cannot open " + dir.string());
    if (::flock(lock_fd_, LOCK_EX | LOCK_NB) != 0) {
      throw TuneLogError("another tune is writing " + path_.string() +
                         "; wait for it or tune into another --out");
    }
  }

  // Reads the existing log (rank 0 reads, every rank parses the same text) and checks its
  // header; writes a fresh header when there is none (or `fresh`).
  void open(const nlohmann::json& header, bool fresh, const Ranks& ranks,
            const std::vector<TuneParam>& params) {
    if (writer_) lock();
    std::string text;
    if (ranks.is_root() && !fresh && fs::exists(path_)) text = io::read_file_bytes(path_);
    text = ranks.broadcast(text);
    // A killed writer can leave a last line without its newline: drop it.
    const auto last_newline = text.rfind('\n');
    const std::string whole =
        last_newline == std::string::npos ? "" : text.substr(0, last_newline + 1);
    std::vector<std::string> lines;
    std::stringstream in(whole);
    for (std::string line; std::getline(in, line);) {
      if (!line.empty()) lines.push_back(line);
    }
    if (!lines.empty()) {
      nlohmann::json h;
      try {
        h = nlohmann::json::parse(lines.front());
      } catch (const nlohmann::json::exception&) {
        throw TuneLogError(path_.string() + ":1: not a tune log header");
      }
      if (h != header) {
        throw TuneLogError(path_.string() +
                           " belongs to a different tune (case, truth, closure, parameters, "
                           "method, objective or budget differ); pass --fresh to start over or "
                           "--out to tune elsewhere");
      }
      for (std::size_t i = 1; i < lines.size(); ++i) {
        try {
          const TuneEvaluation e = evaluation_from_json(nlohmann::json::parse(lines[i]), params);
          if (e.index != static_cast<int>(i - 1)) throw TuneLogError("out of order");
          entries_.push_back(e);
        } catch (const std::exception& e) {
          throw TuneLogError(path_.string() + ":" + std::to_string(i + 1) +
                             ": damaged evaluation line (" + e.what() +
                             "); pass --fresh to start over");
        }
      }
    }
    if (!writer_) return;
    if (lines.empty() || whole.size() != text.size()) {
      std::string keep = header.dump() + "\n";
      for (std::size_t i = 1; i < lines.size(); ++i) keep += lines[i] + "\n";
      io::write_text_atomic(path_, keep);
    }
    out_.open(path_, std::ios::app | std::ios::binary);
    if (!out_) throw io::IoError(path_, "cannot append to " + path_.string());
  }

  [[nodiscard]] const std::vector<TuneEvaluation>& replay() const { return entries_; }

  void append(const TuneEvaluation& e, const std::vector<TuneParam>& params) {
    if (!writer_) return;
    out_ << evaluation_json(e, params).dump() << '\n';
    out_.flush();
    if (!out_) throw io::IoError(path_, "cannot append to " + path_.string());
  }

 private:
  fs::path path_;
  bool writer_;
  std::vector<TuneEvaluation> entries_;
  std::ofstream out_;
  int lock_fd_ = -1;
};

// ---- evaluating rounds of points ----------------------------------------------------------------

struct Point {
  int start = 0;
  std::vector<double> u;
};

class Evaluator {
 public:
  Evaluator(const Case& c, const TruthData& truth, const std::string& closure_name,
            const TuneOptions& o, std::vector<TuneParam> params, TuneLog& log, TuneResult& result)
      : case_(c),
        truth_(truth),
        closure_(closure_name),
        o_(o),
        params_(std::move(params)),
        ranks_(o.ranks != nullptr ? *o.ranks : Ranks::single()),
        log_(log),
        result_(result) {}

  // Evaluates the points in order (replaying from the log while it lasts) and appends them.
  // Returns their objectives; nothing when the tune must stop (interrupted, or the test's stop).
  std::optional<std::vector<double>> evaluate(const std::vector<Point>& points) {
    std::vector<double> f;
    std::vector<Point> fresh;
    for (const Point& p : points) {
      const auto n = result_.evaluations.size();
      if (n < log_.replay().size() && fresh.empty()) {
        const TuneEvaluation& e = log_.replay()[n];
        if (e.start != p.start || e.u != p.u) {
          throw TuneLogError(
              "the tune log diverges from this tune at evaluation " + std::to_string(n) +
              " (another build or solver answered differently); pass --fresh to start over");
        }
        record(e, true);
        f.push_back(e.objective);
      } else {
        fresh.push_back(p);
      }
    }
    if (fresh.empty()) return f;
    if (o_.stop_after_evaluations >= 0) {
      const auto left =
          o_.stop_after_evaluations - static_cast<std::int64_t>(result_.evaluations.size());
      if (left <= 0) return std::nullopt;
      if (static_cast<std::size_t>(left) < fresh.size()) {
        fresh.resize(static_cast<std::size_t>(left));
      }
    }
    // Every rank must agree to stop, or some would wait in the gather for the others: rank 0's
    // flag decides.
    bool stop = o_.stop_flag != nullptr && o_.stop_flag->load();
    if (ranks_.size() > 1) stop = ranks_.broadcast(stop ? "stop" : "go") == "stop";
    if (stop) return std::nullopt;

    const std::vector<std::string> answers = spread(
        ranks_, fresh.size(), o_.threads, [&](std::size_t i) { return run_point(fresh[i]); });
    bool stopped = fresh.size() + f.size() < points.size();
    for (std::size_t i = 0; i < fresh.size(); ++i) {
      const nlohmann::json r = nlohmann::json::parse(answers[i]);
      if (r.contains("interrupted")) {
        stopped = true;
        break;  // later answers would leave a gap in the evaluation order
      }
      TuneEvaluation e;
      e.index = static_cast<int>(result_.evaluations.size());
      e.start = fresh[i].start;
      e.u = fresh[i].u;
      e.values = values(e.u);
      if (r.contains("failed")) {
        e.failure = r["failed"].get<std::string>();
        e.categories.assign(std::size(kCategories), std::nullopt);
      } else {
        e.objective = r["objective"].get<double>();
        e.skill = r["skill"].get<double>();
        e.overall = r["overall"].get<double>();
        for (const nlohmann::json& v : r["categories"]) {
          e.categories.push_back(v.is_null() ? std::nullopt
                                             : std::optional<double>(v.get<double>()));
        }
      }
      log_.append(e, params_);
      record(e, false);
      f.push_back(e.objective);
    }
    if (stopped) return std::nullopt;
    return f;
  }

  [[nodiscard]] std::vector<double> values(const std::vector<double>& u) const {
    std::vector<double> v;
    for (std::size_t k = 0; k < params_.size(); ++k) v.push_back(params_[k].value(u[k]));
    return v;
  }

 private:
  void record(const TuneEvaluation& e, bool replayed) {
    result_.evaluations.push_back(e);
    if (replayed) ++result_.replayed;
    if (o_.on_evaluation && ranks_.is_root()) o_.on_evaluation(e, replayed);
  }

  std::string run_point(const Point& p) const {
    std::vector<std::string> sets = o_.sets;
    const std::vector<double> v = values(p.u);
    for (std::size_t k = 0; k < params_.size(); ++k) {
      sets.push_back(closure_ + "." + params_[k].name + "=" + format_real(v[k]));
    }
    // "failed": the key of the tune log's records.
    return worker_result(
        [&] {
          const Candidate cand = make_candidate(case_, closure_, sets);
          EvaluationOptions eo;  // no files: the log is the tune's record
          eo.stop_flag = o_.stop_flag;
          return point_result(plateau::evaluate(case_, truth_, cand, eo), o_.objective);
        },
        "failed");
  }

  const Case& case_;
  const TruthData& truth_;
  std::string closure_;
  const TuneOptions& o_;
  std::vector<TuneParam> params_;
  const Ranks& ranks_;
  TuneLog& log_;
  TuneResult& result_;
};

// ---- methods ------------------------------------------------------------------------------------

int grid_points_for(int dims, int budget, int asked) {
  if (asked > 0) return asked;
  int p = 2;
  while (std::pow(p + 1, dims) <= budget) ++p;
  return p;
}

void run_grid(Evaluator& ev, std::size_t dims, int points, std::size_t round_size,
              TuneResult& result) {
  std::size_t total = 1;
  for (std::size_t k = 0; k < dims; ++k) total *= static_cast<std::size_t>(points);
  std::vector<Point> round;
  for (std::size_t n = 0; n < total; ++n) {
    Point p;
    p.u.resize(dims);
    std::size_t rest = n;
    for (std::size_t k = dims; k-- > 0;) {  // the last parameter varies fastest
      const std::size_t j = rest % static_cast<std::size_t>(points);
      rest /= static_cast<std::size_t>(points);
      p.u[k] = static_cast<double>(j) / (points - 1);
    }
    round.push_back(std::move(p));
    if (round.size() == round_size || n + 1 == total) {
      if (!ev.evaluate(round)) {
        result.interrupted = true;
        return;
      }
      round.clear();
    }
  }
  result.stops.push_back("grid of " + std::to_string(total) + " points evaluated");
}

nlopt::algorithm nlopt_algorithm(TuneMethod m) {
  switch (m) {
    case TuneMethod::bobyqa:
      return nlopt::LN_BOBYQA;
    case TuneMethod::neldermead:
      return nlopt::LN_NELDERMEAD;
    case TuneMethod::sbplx:
      return nlopt::LN_SBPLX;
    case TuneMethod::cobyla:
    case TuneMethod::grid:
      break;
  }
  return nlopt::LN_COBYLA;
}

std::string nlopt_result_text(nlopt::result r) {
  switch (r) {
    case nlopt::SUCCESS:
      return "converged";
    case nlopt::STOPVAL_REACHED:
      return "objective target reached";
    case nlopt::FTOL_REACHED:
      return "objective change below tolerance";
    case nlopt::XTOL_REACHED:
      return "step below --xtol";
    case nlopt::MAXEVAL_REACHED:
      return "evaluation budget spent";
    case nlopt::MAXTIME_REACHED:
      return "time limit";
    default:
      return "stopped (code " + std::to_string(static_cast<int>(r)) + ")";
  }
}

// Starting points: the centre of the cube for one start; otherwise a Latin hypercube (cell
// centres, permutations from a fixed seed, so every run and rank draws the same).
std::vector<std::vector<double>> start_points(std::size_t dims, int starts) {
  std::vector<std::vector<double>> x(uz(starts), std::vector<double>(dims, 0.5));
  if (starts == 1) return x;
  std::mt19937_64 rng(20261202ULL);  // the engine's sequence is fixed by the C++ standard
  for (std::size_t k = 0; k < dims; ++k) {
    std::vector<int> perm(uz(starts));
    for (int s = 0; s < starts; ++s) perm[uz(s)] = s;
    for (int s = starts - 1; s > 0; --s) {
      const auto j = static_cast<int>(rng() % static_cast<std::uint64_t>(s + 1));
      std::swap(perm[uz(s)], perm[uz(j)]);
    }
    for (int s = 0; s < starts; ++s) x[uz(s)][k] = (perm[uz(s)] + 0.5) / starts;
  }
  return x;
}

// The optimisers run on threads of their own; each blocks in its objective until the round it
// posted into has been evaluated. This thread gathers the rounds.
void run_optimisers(Evaluator& ev, TuneMethod method, std::size_t dims, const TuneOptions& o,
                    TuneResult& result) {
  const int starts = o.starts;
  struct Slot {
    bool pending = false;
    bool answered = false;
    bool finished = false;
    bool stop = false;
    std::vector<double> u;
    double f = 0.0;
    std::string why;
  };
  std::vector<Slot> slots(uz(starts));
  std::mutex m;
  std::condition_variable cv;
  const std::vector<std::vector<double>> x0 = start_points(dims, starts);

  auto optimiser = [&](int s) {
    Slot& slot = slots[uz(s)];
    std::string why;
    try {
      nlopt::opt opt(nlopt_algorithm(method), static_cast<unsigned>(dims));
      opt.set_lower_bounds(0.0);
      opt.set_upper_bounds(1.0);
      opt.set_xtol_abs(o.xtol);
      opt.set_initial_step(0.25);
      opt.set_maxeval(o.budget / starts + (s < o.budget % starts ? 1 : 0));
      auto fn = [&](const std::vector<double>& u) -> double {
        std::unique_lock<std::mutex> lock(m);
        slot.u = u;
        slot.pending = true;
        cv.notify_all();
        cv.wait(lock, [&] { return slot.answered; });
        slot.answered = false;
        if (slot.stop) throw nlopt::forced_stop();
        return slot.f;
      };
      using Fn = decltype(fn);
      opt.set_min_objective([](const std::vector<double>& u, std::vector<double>& /*grad*/,
                               void* data) { return (*static_cast<Fn*>(data))(u); },
                            &fn);
      std::vector<double> x = x0[uz(s)];
      double fmin = 0.0;
      why = nlopt_result_text(opt.optimize(x, fmin));
    } catch (const nlopt::forced_stop&) {
      why = "interrupted";
    } catch (const std::exception& e) {
      why = std::string("optimiser stopped: ") + e.what();
    }
    const std::lock_guard<std::mutex> lock(m);
    slot.why = why;
    slot.finished = true;
    cv.notify_all();
  };

  std::vector<std::thread> threads;
  threads.reserve(uz(starts));
  for (int s = 0; s < starts; ++s) threads.emplace_back(optimiser, s);
  std::exception_ptr failure;
  bool stopping = false;
  for (;;) {
    std::vector<Point> round;
    std::vector<int> who;
    {
      std::unique_lock<std::mutex> lock(m);
      cv.wait(lock, [&] {
        return std::all_of(slots.begin(), slots.end(),
                           [](const Slot& sl) { return sl.finished || sl.pending; });
      });
      for (int s = 0; s < starts; ++s) {
        if (slots[uz(s)].pending) {
          round.push_back({s, slots[uz(s)].u});
          who.push_back(s);
        }
      }
    }
    if (round.empty()) break;
    std::optional<std::vector<double>> f;
    if (!stopping) {
      try {
        f = ev.evaluate(round);
      } catch (...) {
        failure = std::current_exception();
      }
    }
    if (!f) stopping = true;
    const std::lock_guard<std::mutex> lock(m);
    for (std::size_t i = 0; i < who.size(); ++i) {
      Slot& sl = slots[uz(who[i])];
      sl.pending = false;
      sl.answered = true;
      sl.stop = stopping;
      if (f) sl.f = (*f)[i];
    }
    cv.notify_all();
  }
  for (std::thread& t : threads) t.join();
  if (failure) std::rethrow_exception(failure);
  result.interrupted = stopping;
  for (const Slot& sl : slots) result.stops.push_back(sl.why);
}

}  // namespace

TuneResult run_tune(const Case& c, const TruthData& truth, const std::string& closure_name,
                    const TuneOptions& o) {
  const closure::Info* info = find_registered_closure(closure_name);
  if (info == nullptr) {
    throw CaseError("closure '" + closure_name +
                    "' is not known; allowed: " + registered_closure_names());
  }
  if (o.budget < 1) throw CaseError("--budget must be at least 1");
  if (o.starts < 1) throw CaseError("--starts must be at least 1");
  if (o.method == TuneMethod::grid && o.grid_points == 1) {
    throw CaseError("--points must be at least 2");
  }
  TuneResult result;
  result.params = tune_parameters(*info, o.ranges, o.sets);
  const std::size_t dims = result.params.size();
  // The fixed values (case table + --set) that every evaluation shares, checked now.
  const Candidate base = make_candidate(c, closure_name, o.sets);
  const Ranks& ranks = o.ranks != nullptr ? *o.ranks : Ranks::single();

  const int points = grid_points_for(static_cast<int>(dims), o.budget, o.grid_points);
  if (o.method == TuneMethod::grid && std::pow(points, static_cast<double>(dims)) > o.budget) {
    throw CaseError("a grid of " + std::to_string(points) + " points per parameter over " +
                    std::to_string(dims) + " parameters exceeds --budget " +
                    std::to_string(o.budget));
  }

  nlohmann::json header;
  header["plateau_tune"] = 1;
  header["case"] = c.name;
  header["truth_key"] = truth.key;
  header["solver"] = std::string(kProjectVersion) + " " + kModelHash;
  header["closure"] = closure_name;
  // The values the tune does not vary (the tuned ones' case-file values do not matter).
  std::string fixed;
  std::istringstream words(canonical_text(*info, base.params));
  for (std::string w; words >> w;) {
    const bool tuned =
        std::any_of(result.params.begin(), result.params.end(),
                    [&](const TuneParam& p) { return w.rfind(p.name + "=", 0) == 0; });
    if (!tuned) fixed += (fixed.empty() ? "" : " ") + w;
  }
  header["fixed"] = fixed;
  header["method"] = method_name(o.method);
  header["objective"] = o.objective.text;
  header["budget"] = o.budget;
  if (o.method == TuneMethod::grid) {
    header["points"] = points;
  } else {
    header["starts"] = o.starts;
    header["xtol"] = o.xtol;
  }
  nlohmann::json ps = nlohmann::json::array();
  for (const TuneParam& p : result.params) {
    ps.push_back({{"name", p.name},
                  {"unit", p.unit},
                  {"lo", p.lo},
                  {"hi", p.hi},
                  {"log", p.log_scale},
                  {"integer", p.integer}});
  }
  header["parameters"] = std::move(ps);

  result.log = o.out_dir / kTuneLogName;
  TuneLog log(result.log, ranks.is_root());
  log.open(header, o.fresh, ranks, result.params);

  const std::size_t width =
      static_cast<std::size_t>(std::max(1, o.threads)) * static_cast<std::size_t>(ranks.size());
  Evaluator ev(c, truth, closure_name, o, result.params, log, result);
  if (o.method == TuneMethod::grid) {
    result.parallelism =
        "grid points evaluated " + std::to_string(width) + " at a time (threads x ranks)";
    run_grid(ev, dims, points, width, result);
  } else {
    result.parallelism =
        o.starts > 1
            ? std::to_string(o.starts) + " independent starts side by side, one optimiser each (" +
                  std::to_string(std::min<std::size_t>(width, uz(o.starts))) +
                  " evaluations at a time)"
            : "one optimiser asks for one point at a time: no parallel speed-up (use --starts M "
              "or --method grid for that)";
    run_optimisers(ev, o.method, dims, o, result);
  }

  for (const TuneEvaluation& e : result.evaluations) {
    if (!e.failure.empty()) continue;
    if (result.best < 0 || e.objective < result.evaluations[uz(result.best)].objective) {
      result.best = e.index;
    }
  }
  return result;
}

std::string case_file_lines(const std::string& closure_name, const TuneResult& r,
                            const std::vector<std::string>& sets) {
  if (r.best < 0) return "";
  const TuneEvaluation& b = r.evaluations[uz(r.best)];
  std::ostringstream s;
  s << "[closure." << closure_name << "]\n";
  for (std::size_t k = 0; k < r.params.size(); ++k) {
    s << r.params[k].name << " = " << format_real(b.values[k]) << "\n";
  }
  // The values fixed with --set belong to the result too.
  const closure::Info* info = find_registered_closure(closure_name);
  for (const std::string& text : sets) {
    const ParamOverride o = parse_override(text);
    if ((o.closure != closure_name && o.closure != "closure") || info == nullptr) continue;
    bool quoted = false;
    for (const closure::Param& p : info->params) {
      if (p.name == o.key) quoted = p.kind == closure::ParamKind::choice;
    }
    s << o.key << " = " << (quoted ? "\"" + o.value + "\"" : o.value) << "\n";
  }
  return s.str();
}

}  // namespace plateau
