// compare, tune and regress under `mpirun -n 2` against one process (STUDIES.md: runs dealt to
// ranks in a fixed order, rank 0 gathers in evaluation order and writes; ARCHITECTURE.md: results
// bit for bit the same for 1 and 2 MPI ranks). The check values are the one-process run's own
// files: the claim under test is equality, so wall times (the scorecards' timing block, which no
// comparison reads) are the only thing left out.

#include <unistd.h>
#include <gtest/gtest.h>

#include <algorithm>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

#include <nlohmann/json.hpp>

namespace {

namespace fs = std::filesystem;

fs::path scratch(const std::string& name) {
  const fs::path d =
      fs::temp_directory_path() / ("plateau-test-mpi-" + name + "-" + std::to_string(::getpid()));
  fs::remove_all(d);
  fs::create_directories(d);
  return d;
}

std::string read(const fs::path& p) {
  std::ifstream f(p, std::ios::binary);
  std::ostringstream s;
  s << f.rdbuf();
  return s.str();
}

int sh(const std::string& cmd) {
  const int rc = std::system(cmd.c_str());
  return WIFEXITED(rc) ? WEXITSTATUS(rc) : -1;
}

// One process, or two ranks; each run single-threaded so that two ranks fit on two cores.
int plateau(const std::string& args, bool mpi) {
  const std::string exe = std::string(PLATEAU_EXECUTABLE) + " --threads 1 -q ";
  if (!mpi) return sh(exe + args);
  // Sanitizer build: OpenMPI keeps allocations for the life of a process and unloads its
  // plug-ins (dlclose) before LeakSanitizer looks, so their frames cannot be named and no
  // suppression matches them. The ranks therefore run without leak checking; the same commands
  // run as one process above, with it.
  const char* asan = std::getenv("ASAN_OPTIONS");
  const std::string options = std::string(asan != nullptr ? asan : "") + ":detect_leaks=0";
  return sh("ASAN_OPTIONS='" + options + "' " + PLATEAU_MPIEXEC + " " + PLATEAU_MPI_FLAGS +
            " -n 2 " + exe + args);
}

std::string tiny() { return std::string(PLATEAU_SOURCE_DIR) + "/cases/tiny_2layer.toml"; }
std::string twin() { return std::string(PLATEAU_SOURCE_DIR) + "/cases/nightly_twin_2layer.toml"; }

nlohmann::json without_timing(nlohmann::json card) {
  card.erase("timing");
  return card;
}

TEST(MpiStudies, CompareGivesTheSameScorecardsAsOneProcess) {
  const fs::path d = scratch("compare");
  const std::string common = "compare " + tiny() +
                             " -c none,constant,eady,eddy_energy,flux_limited --cache " +
                             (d / "cache").string();
  ASSERT_EQ(plateau(common + " --out " + (d / "one").string(), false), 0);
  ASSERT_EQ(plateau(common + " --out " + (d / "two").string(), true), 0);
  const auto one = nlohmann::json::parse(read(d / "one" / "compare.json"));
  const auto two = nlohmann::json::parse(read(d / "two" / "compare.json"));
  ASSERT_EQ(one.at("scorecards").size(), 5U);
  for (const auto& [name, card] : one.at("scorecards").items()) {
    ASSERT_TRUE(two.at("scorecards").contains(name)) << name;
    EXPECT_EQ(without_timing(card), without_timing(two.at("scorecards").at(name))) << name;
    const std::string file = "score-" + name + ".json";
    EXPECT_EQ(without_timing(nlohmann::json::parse(read(d / "one" / file))),
              without_timing(nlohmann::json::parse(read(d / "two" / file))))
        << file;
    EXPECT_TRUE(fs::exists(d / "two" / ("run-" + name + ".nc"))) << name;
  }
  for (std::size_t i = 0; i < one.at("ranking").size(); ++i) {
    EXPECT_EQ(one["ranking"][i]["closure"], two["ranking"][i]["closure"]);
    EXPECT_EQ(one["ranking"][i]["overall"], two["ranking"][i]["overall"]);
  }
}

TEST(MpiStudies, TuneWritesTheSameLogAsOneProcess) {
  const fs::path d = scratch("tune");
  for (const std::string method : {"grid --budget 5", "bobyqa --starts 2 --budget 10"}) {
    const std::string common = "tune " + twin() + " -c constant --objective transport,energy " +
                               "--method " + method + " --cache " + (d / "cache").string();
    ASSERT_EQ(plateau(common + " --out " + (d / "one").string() + " --fresh", false), 0);
    ASSERT_EQ(plateau(common + " --out " + (d / "two").string() + " --fresh", true), 0);
    const std::string log = read(d / "one" / "tune-log.jsonl");
    EXPECT_GT(std::count(log.begin(), log.end(), '\n'), 4) << method;
    EXPECT_EQ(log, read(d / "two" / "tune-log.jsonl")) << method;
  }
}

TEST(MpiStudies, RegressJudgesTheSameAsOneProcess) {
  const fs::path d = scratch("regress");
  std::ofstream(d / "suite.toml") << "[suite]\nbaseline = \"base.json\"\n"
                                  << "[[pair]]\ncase = \"" << tiny() << "\"\nclosure = \"none\"\n"
                                  << "[[pair]]\ncase = \"" << tiny() << "\"\nclosure = \"eady\"\n"
                                  << "[[pair]]\ncase = \"" << twin()
                                  << "\"\nclosure = \"constant\"\n";
  const std::string common =
      "regress " + (d / "suite.toml").string() + " --cache " + (d / "cache").string();
  ASSERT_EQ(plateau(common + " --update-baseline --out " + (d / "one").string(), false), 0);
  // Two ranks against the one-process baseline: no skill may move at all.
  ASSERT_EQ(plateau(common + " --out " + (d / "two").string(), true), 0);
  const auto j = nlohmann::json::parse(read(d / "two" / "regress.json"));
  EXPECT_FALSE(j.at("regressed").get<bool>());
  ASSERT_EQ(j.at("pairs").size(), 3U);
  for (const auto& p : j.at("pairs")) EXPECT_TRUE(p.at("changes").empty()) << p.dump();
}

}  // namespace
