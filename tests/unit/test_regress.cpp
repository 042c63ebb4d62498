// regress (harness/study/regress.hpp, `plateau regress`):
// - the rules of STUDIES.md on hand-made baselines: a skill that falls by more than its
//   tolerance (per metric, by prefix, else the suite's) regresses, one that falls by less does
//   not, a missing metric or a failed run fails, a new metric or pair is reported and not failed,
//   a changed truth key is reported;
// - end to end with the executable on the tiny case: a suite passes against its own fresh
//   baseline (exit 0); after one closure's parameter is degraded it exits 1 and the JUnit XML
//   names a metric whose skill fell by more than the tolerance (checked against regress.json's
//   old and new skills); --update-baseline leaves no temporary file behind;
// - the JUnit XML's structure, as the common JUnit schema (the junit-10 XSD that CI systems
//   read) lays it out: root testsuites; testsuite children with name and tests; testcase
//   children with name and classname; failure inside a testcase with a message; the counts in
//   the attributes agree with the elements. Checked with a small element parser below (and with
//   xmllint --noout for well-formedness when it is installed).

#include <unistd.h>
#include <gtest/gtest.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <map>
#include <regex>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "harness/case/case.hpp"
#include "harness/io/atomic_file.hpp"
#include "harness/study/regress.hpp"

#ifndef PLATEAU_EXECUTABLE
#define PLATEAU_EXECUTABLE PLATEAU_BINARY_DIR "/plateau"
#endif

namespace plateau {
namespace {

namespace fs = std::filesystem;

fs::path scratch(const std::string& name) {
  const fs::path d = fs::temp_directory_path() /
                     ("plateau-test-regress-" + name + "-" + std::to_string(::getpid()));
  fs::remove_all(d);
  fs::create_directories(d);
  return d;
}

void write(const fs::path& p, const std::string& text) {
  std::ofstream f(p, std::ios::binary);
  f << text;
}

// ---- the rules --------------------------------------------------------------------------------

Suite suite_of(double tolerance, std::map<std::string, double> tolerances) {
  Suite s;
  s.name = "rules";
  s.tolerance = tolerance;
  s.tolerances = std::move(tolerances);
  return s;
}

PairRun run_of(std::map<std::string, double> skills) {
  PairRun r;
  r.case_name = "c";
  r.name = "k";
  r.skills = std::move(skills);
  return r;
}

const MetricChange* change(const PairComparison& p, const std::string& id) {
  for (const MetricChange& m : p.changes) {
    if (m.id == id) return &m;
  }
  return nullptr;
}

TEST(RegressRules, TolerancesMissingAndNewMetrics) {
  const Suite s = suite_of(0.05, {{"energy.total", 0.3}, {"transport.*", 0.2}});
  EXPECT_EQ(s.tolerance_of("energy.total"), 0.3);
  EXPECT_EQ(s.tolerance_of("transport.L1.cyclonic.sv"), 0.2);
  EXPECT_EQ(s.tolerance_of("plateau.L2.rms_q"), 0.05);

  Baseline old;
  old.solver = "v1";
  old.truths = {{"c", "aaaa"}};
  old.skills["c/k"] = {{"plateau.a", 0.9},
                       {"plateau.b", 0.9},
                       {"energy.total", 0.9},
                       {"transport.x", 0.9},
                       {"gone", 0.5}};
  const std::vector<PairRun> runs = {run_of({{"plateau.a", 0.84},    // fell 0.06 > 0.05
                                             {"plateau.b", 0.86},    // fell 0.04 <= 0.05
                                             {"energy.total", 0.7},  // fell 0.2 <= 0.3
                                             {"transport.x", 0.6},   // fell 0.3 > 0.2
                                             {"fresh", 0.1}})};
  Baseline now = make_baseline(runs, {{"c", "bbbb"}}, "v1");
  const RegressReport r = compare_to_baseline(s, old, now, runs);
  ASSERT_EQ(r.pairs.size(), 1U);
  const PairComparison& p = r.pairs[0];
  EXPECT_EQ(change(p, "plateau.a")->kind, MetricChange::Kind::regressed);
  EXPECT_EQ(change(p, "plateau.b")->kind, MetricChange::Kind::changed);
  EXPECT_EQ(change(p, "energy.total")->kind, MetricChange::Kind::changed);
  EXPECT_EQ(change(p, "transport.x")->kind, MetricChange::Kind::regressed);
  EXPECT_EQ(change(p, "gone")->kind, MetricChange::Kind::missing);  // a failure too
  EXPECT_EQ(change(p, "fresh")->kind, MetricChange::Kind::added);   // reported only
  EXPECT_TRUE(p.failed());
  EXPECT_TRUE(r.regressed());
  EXPECT_EQ(r.truth_changes.size(), 1U);  // the key of case c changed: said plainly
  EXPECT_FALSE(r.solver_changed);
}

TEST(RegressRules, NewPairsPassAndFailedRunsFail) {
  const Suite s = suite_of(0.01, {});
  Baseline old;
  old.skills["c/old"] = {{"m", 0.5}};
  PairRun fresh = run_of({{"m", 0.1}});
  fresh.name = "new";
  PairRun broken;
  broken.case_name = "c";
  broken.name = "old";
  broken.failure = "CFL 0.9 at step 12";
  const std::vector<PairRun> runs = {fresh, broken};
  const RegressReport r = compare_to_baseline(s, old, make_baseline(runs, {}, ""), runs);
  ASSERT_EQ(r.pairs.size(), 2U);
  EXPECT_FALSE(r.pairs[0].in_baseline);
  EXPECT_FALSE(r.pairs[0].failed());  // a new pair is reported, not failed
  EXPECT_TRUE(r.pairs[1].failed());   // a run that failed is a failure
  EXPECT_EQ(r.failures(), 1);
}

// ---- a minimal XML element reader, enough for the JUnit structure ------------------------------

struct Element {
  std::string name;
  std::map<std::string, std::string> attributes;
  std::vector<Element> children;
  std::string text;
};

// Parses elements, attributes and text; skips the declaration; fails on mismatched tags.
class XmlReader {
 public:
  explicit XmlReader(std::string text) : s_(std::move(text)) {}
  Element document() {
    skip_space();
    if (s_.compare(i_, 5, "<?xml") == 0) i_ = s_.find("?>", i_) + 2;
    skip_space();
    Element e = element();
    skip_space();
    EXPECT_EQ(i_, s_.size()) << "content after the root element";
    return e;
  }

 private:
  void skip_space() {
    while (i_ < s_.size() && std::isspace(static_cast<unsigned char>(s_[i_])) != 0) ++i_;
  }
  std::string name() {
    const std::size_t b = i_;
    while (i_ < s_.size() && (std::isalnum(static_cast<unsigned char>(s_[i_])) != 0 ||
                              s_[i_] == '_' || s_[i_] == '-' || s_[i_] == ':' || s_[i_] == '.')) {
      ++i_;
    }
    return s_.substr(b, i_ - b);
  }
  Element element() {
    Element e;
    if (s_[i_] != '<') throw std::runtime_error("expected '<' at " + std::to_string(i_));
    ++i_;
    e.name = name();
    for (;;) {
      skip_space();
      if (s_.compare(i_, 2, "/>") == 0) {
        i_ += 2;
        return e;
      }
      if (s_[i_] == '>') {
        ++i_;
        break;
      }
      const std::string key = name();
      if (key.empty() || s_[i_] != '=' || s_[i_ + 1] != '"') {
        throw std::runtime_error("bad attribute at " + std::to_string(i_));
      }
      i_ += 2;
      const std::size_t end = s_.find('"', i_);
      if (!e.attributes.emplace(key, s_.substr(i_, end - i_)).second) {
        throw std::runtime_error("attribute " + key + " twice");
      }
      i_ = end + 1;
    }
    for (;;) {
      const std::size_t lt = s_.find('<', i_);
      if (lt == std::string::npos) throw std::runtime_error("unterminated <" + e.name + ">");
      e.text += s_.substr(i_, lt - i_);
      i_ = lt;
      if (s_.compare(i_, 2, "</") == 0) {
        i_ += 2;
        const std::string closing = name();
        if (closing != e.name)
          throw std::runtime_error("</" + closing + "> closes <" + e.name + ">");
        skip_space();
        ++i_;  // '>'
        return e;
      }
      e.children.push_back(element());
    }
  }
  std::string s_;
  std::size_t i_ = 0;
};

// The JUnit layout (common JUnit XSD): returns the number of failures found.
int check_junit_structure(const std::string& xml) {
  const Element root = XmlReader(xml).document();
  EXPECT_EQ(root.name, "testsuites");
  int tests = 0;
  int failures = 0;
  for (const Element& suite : root.children) {
    EXPECT_EQ(suite.name, "testsuite");
    EXPECT_TRUE(suite.attributes.count("name") == 1 && !suite.attributes.at("name").empty());
    int suite_failures = 0;
    for (const Element& tc : suite.children) {
      EXPECT_EQ(tc.name, "testcase");
      EXPECT_EQ(tc.attributes.count("name"), 1U);
      EXPECT_EQ(tc.attributes.count("classname"), 1U);
      for (const Element& f : tc.children) {
        EXPECT_EQ(f.name, "failure");
        EXPECT_EQ(f.attributes.count("message"), 1U);
        EXPECT_TRUE(f.children.empty());
      }
      suite_failures += tc.children.empty() ? 0 : 1;
    }
    EXPECT_EQ(std::stoi(suite.attributes.at("tests")), static_cast<int>(suite.children.size()));
    EXPECT_EQ(std::stoi(suite.attributes.at("failures")), suite_failures);
    tests += static_cast<int>(suite.children.size());
    failures += suite_failures;
  }
  EXPECT_EQ(std::stoi(root.attributes.at("tests")), tests);
  EXPECT_EQ(std::stoi(root.attributes.at("failures")), failures);
  return failures;
}

TEST(RegressJunit, StructureOfAReportWithAFailure) {
  RegressReport r;
  r.suite = "s";
  PairComparison ok;
  ok.case_name = "a";
  ok.name = "none";
  PairComparison bad;
  bad.case_name = "a";
  bad.name = "k<&>";  // escaped in the XML
  bad.changes.push_back({"energy.total", MetricChange::Kind::regressed, 0.8, 0.5, 0.01});
  PairComparison other;
  other.case_name = "b";
  other.name = "none";
  other.failure = "non-finite q at step 3";
  r.pairs = {ok, bad, other};
  const std::string xml = junit_xml(r);
  EXPECT_EQ(check_junit_structure(xml), 2);
  EXPECT_NE(xml.find("energy.total"), std::string::npos);
  EXPECT_NE(xml.find("k&lt;&amp;&gt;"), std::string::npos);
}

// ---- end to end ---------------------------------------------------------------------------------

int run(const std::string& args) {
  const std::string cmd = std::string(PLATEAU_EXECUTABLE) + " --threads 2 -q " + args;
  const int rc = std::system(cmd.c_str());
  return WIFEXITED(rc) ? WEXITSTATUS(rc) : -1;
}

std::string suite_text(const std::string& k_value) {
  const std::string tiny = (fs::path(PLATEAU_SOURCE_DIR) / "cases" / "tiny_2layer.toml").string();
  return "[suite]\nname = \"t\"\nbaseline = \"base.json\"\ntolerance = 0.01\n\n"
         "[[pair]]\ncase = \"" +
         tiny +
         "\"\nclosure = \"none\"\n\n"
         "[[pair]]\ncase = \"" +
         tiny +
         "\"\nclosure = \"constant\"\n"
         "[pair.params]\nk_m2_per_s = " +
         k_value + "\n";
}

TEST(RegressEndToEnd, FreshBaselinePassesAndADegradedParameterFails) {
  const fs::path d = scratch("e2e");
  const std::string cache = " --cache " + (d / "cache").string();
  write(d / "suite.toml", suite_text("800"));
  ASSERT_EQ(run("regress " + (d / "suite.toml").string() + " --update-baseline --out " +
                (d / "o1").string() + cache),
            0);
  ASSERT_TRUE(fs::exists(d / "base.json"));
  for (const auto& entry : fs::directory_iterator(d)) {
    EXPECT_EQ(entry.path().filename().string().find(".tmp"), std::string::npos)
        << "a temporary file was left behind: " << entry.path();
  }
  // Against its own fresh baseline: passes.
  EXPECT_EQ(run("regress " + (d / "suite.toml").string() + " --out " + (d / "o2").string() + cache),
            0);
  EXPECT_EQ(check_junit_structure(io::read_file_bytes(d / "o2" / "regress-junit.xml")), 0);

  // The constant closure's K degraded by a factor of 25: the run is a different flow.
  write(d / "suite.toml", suite_text("20000"));
  const std::string before = io::read_file_bytes(d / "base.json");
  EXPECT_EQ(run("regress " + (d / "suite.toml").string() + " --out " + (d / "o3").string() + cache),
            1);
  EXPECT_EQ(io::read_file_bytes(d / "base.json"), before);  // judging never writes the baseline
  const std::string xml = io::read_file_bytes(d / "o3" / "regress-junit.xml");
  EXPECT_EQ(check_junit_structure(xml), 1);

  // A metric the failure names must have fallen by more than the tolerance (regress.json's
  // skills, the ones compared with the baseline).
  const nlohmann::json j = nlohmann::json::parse(io::read_file_bytes(d / "o3" / "regress.json"));
  EXPECT_TRUE(j.at("regressed").get<bool>());
  int named = 0;
  for (const nlohmann::json& p : j.at("pairs")) {
    if (p.at("name") == "none") {
      EXPECT_EQ(p.at("status"), "passed");
      continue;
    }
    EXPECT_EQ(p.at("status"), "failed");
    for (const nlohmann::json& ch : p.at("changes")) {
      if (ch.at("kind") != "regressed") continue;
      const std::string id = ch.at("id").get<std::string>();
      EXPECT_GT(ch.at("old").get<double>() - ch.at("new").get<double>(), 0.01) << id;
      EXPECT_NE(xml.find(id), std::string::npos) << "the JUnit failure should name " << id;
      ++named;
    }
  }
  EXPECT_GT(named, 0);

  if (std::system("command -v xmllint > /dev/null 2>&1") == 0) {
    EXPECT_EQ(std::system(("xmllint --noout " + (d / "o3" / "regress-junit.xml").string()).c_str()),
              0);
  }
}

TEST(RegressEndToEnd, BadSuitesAreBadInput) {
  const fs::path d = scratch("bad");
  write(d / "suite.toml", "[suite]\nbaseline = \"b.json\"\n[[pair]]\ncase = \"nope.toml\"\n");
  EXPECT_THROW((void)load_suite(d / "suite.toml"), CaseError);
  write(d / "suite.toml", "[suite]\nbaseline = \"b.json\"\nunknown = 1\n");
  EXPECT_THROW((void)load_suite(d / "suite.toml"), CaseError);
  // No baseline yet and no --update-baseline: exit code 2.
  write(d / "suite.toml", suite_text("800"));
  EXPECT_EQ(run("regress " + (d / "suite.toml").string() + " --out " + (d / "o").string() +
                " --cache " + (d / "cache").string()),
            2);
}

}  // namespace
}  // namespace plateau
