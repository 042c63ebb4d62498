// The truth and its cache, the eddy statistics, and scorecards end to end:
// - eddy statistics against Reynolds averaging (mean of a product minus the product of the
//   means; common practice) on two hand-built states whose answer follows from the bilinearity
//   of the Jacobian and the discrete eigenvalue of the 5-point Laplacian on a sine mode
//   (common practice: -(4/dx^2) sin^2(k dx/2) - (4/dy^2) sin^2(l dy/2));
// - the friction tendency of a sine mode against PHYSICS.md's D_k = A2 lap zeta - r zeta_N;
// - the cache: reuse, a changed byte (SHA-256 mismatch), truncation, what the key covers, and
//   an interrupted truth that resumes to the same bits;
// - the scorecard of a small case: the same bits in two runs and with 1 and 2 threads.

#include <gtest/gtest.h>
#include <omp.h>

#include <cmath>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <numbers>
#include <string>

#include "harness/case/case.hpp"
#include "harness/study/evaluate.hpp"
#include "harness/truth/eddy_stats.hpp"
#include "harness/truth/truth.hpp"

namespace plateau {
namespace {

namespace fs = std::filesystem;

fs::path scratch(const std::string& name) {
  const fs::path d = fs::temp_directory_path() / ("plateau-test-truth-" + name);
  fs::remove_all(d);
  fs::create_directories(d);
  return d;
}

bool same_bits(const Field& a, const Field& b) {
  return a.size() == b.size() &&
         std::memcmp(a.data(), b.data(), sizeof(double) * static_cast<std::size_t>(a.size())) == 0;
}
bool same_bits(const std::vector<Field>& a, const std::vector<Field>& b) {
  if (a.size() != b.size()) return false;
  for (std::size_t k = 0; k < a.size(); ++k) {
    if (!same_bits(a[k], b[k])) return false;
  }
  return true;
}

bool same_truth(const TruthData& a, const TruthData& b) {
  return same_bits(a.record.mean_psi, b.record.mean_psi) &&
         same_bits(a.eddy.forcing_transient, b.eddy.forcing_transient) &&
         same_bits(a.eddy.forcing_subfilter, b.eddy.forcing_subfilter) &&
         same_bits(a.eddy.flux_x_transient, b.eddy.flux_x_transient) &&
         same_bits(a.eddy.storage, b.eddy.storage) && same_bits(a.friction, b.friction) &&
         a.record.snapshot_t == b.record.snapshot_t &&
         a.record.energy_window_end == b.record.energy_window_end &&
         a.record.budget_integral.wind == b.record.budget_integral.wind &&
         a.record.series.size() == b.record.series.size() &&
         a.record.series.back().total == b.record.series.back().total;
}

Case tiny_case() { return load_case(fs::path(PLATEAU_SOURCE_DIR) / "cases" / "tiny_2layer.toml"); }

// ---- eddy statistics ------------------------------------------------------------------------

TEST(EddyStatistics, ReynoldsAveragesOfTwoOppositeStates) {
  const Case c = tiny_case();
  const Model coarse = make_coarse_model(c);
  const Grid& g = coarse.grid();
  // A barotropic sine mode: the stretching term vanishes, and the 5-point Laplacian of the
  // mode is the mode times its discrete eigenvalue.
  const double kx = std::numbers::pi / g.lx_m;
  const double ly = 2.0 * std::numbers::pi / g.ly_m;
  Field p = g.zeros();
  for (int j = 0; j <= g.ny; ++j) {
    for (int i = 0; i <= g.nx; ++i) p(i, j) = 1e4 * std::sin(kx * g.x(i)) * std::sin(ly * g.y(j));
  }
  const double lambda = -4.0 / (g.dx * g.dx) * std::pow(std::sin(kx * g.dx / 2), 2) -
                        4.0 / (g.dy * g.dy) * std::pow(std::sin(ly * g.dy / 2), 2);
  EddyStatisticsOptions o;
  o.start_after_step = 0;
  o.sample_every = 1;
  EddyStatisticsHook hook(coarse, coarse, o);
  ModelState a = coarse.state_from_psi({p, p});
  ModelState b = coarse.state_from_psi({Field(-p), Field(-p)});
  a.step = 1;
  a.t = 1.0;
  b.step = 2;
  b.t = 2.0;
  hook.after_step(a);
  hook.after_step(b);
  const EddyStatistics s = hook.finish();
  ASSERT_EQ(s.samples, 2);
  double pmax = 0.0;
  double fmax = 0.0;
  double err_psi = 0.0;
  double err_fx = 0.0;
  double err_fy = 0.0;
  double err_forcing = 0.0;
  for (std::size_t k = 0; k < 2; ++k) {
    for (int j = 1; j < g.ny; ++j) {
      for (int i = 1; i < g.nx; ++i) {
        // Mean psi is zero; mean(u q) = u_P (lambda P): the planetary parts cancel.
        const double u = -(p(i, j + 1) - p(i, j - 1)) / (2 * g.dy);
        const double v = (p(i + 1, j) - p(i - 1, j)) / (2 * g.dx);
        const double q = lambda * p(i, j);
        pmax = std::max(pmax, std::abs(p(i, j)));
        fmax = std::max(fmax, std::abs(u * q) + std::abs(v * q));
        err_psi = std::max(err_psi, std::abs(s.mean_psi[k](i, j)));
        err_fx = std::max(err_fx, std::abs(s.flux_x_transient[k](i, j) - u * q));
        err_fy = std::max(err_fy, std::abs(s.flux_y_transient[k](i, j) - v * q));
        // e_T = mean J(psi, q) - J(0, beta y) = J(P, lambda P) = 0 (the Arakawa Jacobian is
        // antisymmetric), and the subfilter part is zero for r = 1.
        err_forcing = std::max(err_forcing, std::abs(s.forcing_transient[k](i, j)) +
                                                std::abs(s.forcing_subfilter[k](i, j)));
      }
    }
  }
  EXPECT_LT(err_psi, 1e-12 * pmax);
  EXPECT_GT(fmax, 0.0);
  EXPECT_LT(err_fx, 1e-12 * fmax);
  EXPECT_LT(err_fy, 1e-12 * fmax);
  EXPECT_LT(err_forcing, 1e-12 * fmax / g.dx);
  // Storage: q went from +lambda P to -lambda P over 1 s.
  EXPECT_NEAR(s.storage[0](4, 4), -2.0 * lambda * p(4, 4), 1e-12 * std::abs(lambda * pmax));
}

TEST(EddyStatistics, FrictionTendencyOfASineMode) {
  const Case c = tiny_case();
  const Model coarse = make_coarse_model(c);
  const Grid& g = coarse.grid();
  const double kx = std::numbers::pi / g.lx_m;
  const double ly = std::numbers::pi / g.ly_m;
  Field p = g.zeros();
  for (int j = 0; j <= g.ny; ++j) {
    for (int i = 0; i <= g.nx; ++i) p(i, j) = 1e4 * std::sin(kx * g.x(i)) * std::sin(ly * g.y(j));
  }
  const double lambda = -4.0 / (g.dx * g.dx) * std::pow(std::sin(kx * g.dx / 2), 2) -
                        4.0 / (g.dy * g.dy) * std::pow(std::sin(ly * g.dy / 2), 2);
  const std::vector<Field> d = friction_tendency(coarse, {p, p});
  const double a2 = c.coarse.viscosity_m2_per_s;
  const double r = c.friction.bottom_drag_per_s;
  // Free slip: zeta = 0 on the walls, where the mode is 0 too, so zeta = lambda P everywhere
  // and D = A2 lambda^2 P (top), A2 lambda^2 P - r lambda P (bottom): PHYSICS.md section 1.
  double scale = 0.0;
  double e_top = 0.0;
  double e_bottom = 0.0;
  for (int j = 1; j < g.ny; ++j) {
    for (int i = 1; i < g.nx; ++i) {
      const double top = a2 * lambda * lambda * p(i, j);
      const double bottom = top - r * lambda * p(i, j);
      scale = std::max(scale, std::abs(bottom));
      e_top = std::max(e_top, std::abs(d[0](i, j) - top));
      e_bottom = std::max(e_bottom, std::abs(d[1](i, j) - bottom));
    }
  }
  EXPECT_LT(e_top, 1e-10 * scale);
  EXPECT_LT(e_bottom, 1e-10 * scale);
}

// ---- the cache ------------------------------------------------------------------------------

TEST(TruthCache, ReuseChangedByteAndTruncation) {
  const Case c = tiny_case();
  TruthOptions o;
  o.cache_dir = scratch("cache");
  std::string notices;
  o.notice = [&](const std::string& m) { notices += m + "\n"; };
  const TruthResult first = obtain_truth(c, o);
  EXPECT_FALSE(first.reused);
  EXPECT_TRUE(fs::exists(first.entry / "manifest.json"));
  EXPECT_EQ(first.entry.filename().string(), truth_key(c));

  const TruthResult again = obtain_truth(c, o);
  EXPECT_TRUE(again.reused);
  EXPECT_TRUE(same_truth(first.data, again.data));

  // One byte changed in place, size kept: the SHA-256 no longer matches.
  const fs::path nc = first.entry / "truth.nc";
  {
    std::fstream f(nc, std::ios::in | std::ios::out | std::ios::binary);
    f.seekp(static_cast<std::streamoff>(fs::file_size(nc) / 2));
    char ch = 0;
    f.read(&ch, 1);
    f.seekp(static_cast<std::streamoff>(fs::file_size(nc) / 2));
    ch = static_cast<char>(ch ^ 0x5a);
    f.write(&ch, 1);
  }
  const TruthResult changed = obtain_truth(c, o);
  EXPECT_FALSE(changed.reused);
  EXPECT_NE(changed.rejected.find("SHA-256"), std::string::npos) << changed.rejected;
  EXPECT_NE(notices.find("recomputing"), std::string::npos);
  EXPECT_TRUE(same_truth(first.data, changed.data));  // recomputed to the same bits

  fs::resize_file(nc, fs::file_size(nc) - 100);
  const TruthResult truncated = obtain_truth(c, o);
  EXPECT_FALSE(truncated.reused);
  EXPECT_NE(truncated.rejected.find("truncated"), std::string::npos) << truncated.rejected;
  EXPECT_TRUE(same_truth(first.data, truncated.data));

  TruthOptions forced = o;
  forced.force = true;
  const TruthResult f = obtain_truth(c, forced);
  EXPECT_FALSE(f.reused);
  EXPECT_TRUE(same_truth(first.data, f.data));
}

TEST(TruthCache, KeyCoversWhatTheTruthDependsOn) {
  const Case c = tiny_case();
  const std::string k = truth_key(c);
  EXPECT_EQ(k.size(), 64U);
  const auto key_with = [&](auto&& change) {
    Case d = c;
    change(d);
    return truth_key(d);
  };
  // The truth's own friction, the coarse grid (the contents live there), the spin-up and the
  // wind change it ...
  EXPECT_NE(key_with([](Case& d) { d.truth.viscosity_m2_per_s = 2600; }), k);
  EXPECT_NE(key_with([](Case& d) { d.coarse.nx = d.coarse.ny = 8; }), k);
  EXPECT_NE(key_with([](Case& d) { d.run.spinup_s *= 0.8; }), k);
  EXPECT_NE(key_with([](Case& d) { d.wind.tau0_n_per_m2 = 0.11; }), k);
  EXPECT_NE(key_with([](Case& d) { d.scoring.apriori_target = AprioriTarget::subfilter; }), k);
  // ... the coarse model's own viscosity and time step, the checkpoint interval and the case's
  // name and description do not (they do not change what the truth holds).
  EXPECT_EQ(key_with([](Case& d) { d.coarse.viscosity_m2_per_s = 30000; }), k);
  EXPECT_EQ(key_with([](Case& d) { d.coarse.dt_s = 3600; }), k);
  EXPECT_EQ(key_with([](Case& d) { d.run.checkpoint_interval_s *= 0.5; }), k);
  EXPECT_EQ(key_with([](Case& d) {
              d.name = "renamed";
              d.description = "another text";
            }),
            k);
}

TEST(TruthCache, InterruptedTruthResumesToTheSameBits) {
  const Case c = tiny_case();
  TruthOptions whole;
  whole.cache_dir = scratch("whole");
  const TruthResult ref = obtain_truth(c, whole);

  TruthOptions part;
  part.cache_dir = scratch("part");
  part.stop_after_step = 3000;  // after the spin-up (2190 steps), between checkpoints
  EXPECT_THROW((void)obtain_truth(c, part), RunInterrupted);
  EXPECT_FALSE(fs::exists(part.cache_dir / truth_key(c) / "manifest.json"));
  part.stop_after_step = -1;
  const TruthResult resumed = obtain_truth(c, part);
  EXPECT_TRUE(resumed.resumed);
  EXPECT_TRUE(same_truth(ref.data, resumed.data));
}

// ---- scorecards end to end ------------------------------------------------------------------

std::string card_without_timing(const Scorecard& card) {
  nlohmann::json j = scorecard_to_json(card);
  j.erase("timing");
  return j.dump();
}

TEST(ScoreEndToEnd, ScorecardReproducesAcrossRunsAndThreads) {
  // The truth on 96^2 nodes so that the solver's threads engage (harness/model/grid.hpp).
  Case c = tiny_case();
  c.truth.nx = 96;  // r = 6
  c.truth.ny = 96;
  c.truth.dt_s = 1800;  // dx = 10.4 km: half the step keeps the boundary-current CFL below 0.5
  c.run.length_s = 0.2 * 365 * 86400;
  c.run.spinup_s = 0.1 * 365 * 86400;
  TruthOptions o;
  o.cache_dir = scratch("score");
  omp_set_num_threads(1);
  const TruthResult t1 = obtain_truth(c, o);
  TruthOptions o2;
  o2.cache_dir = scratch("score2");
  omp_set_num_threads(2);
  const TruthResult t2 = obtain_truth(c, o2);
  omp_set_num_threads(1);
  EXPECT_TRUE(same_truth(t1.data, t2.data));

  const Candidate k = make_candidate(c, "eady", {});
  const Evaluation a = evaluate(c, t1.data, k, {});
  const Evaluation b = evaluate(c, t2.data, k, {});
  EXPECT_EQ(card_without_timing(a.card), card_without_timing(b.card));
  EXPECT_GT(a.card.metrics.size(), 20U);
  // Every category holds scored metrics here, a priori included.
  for (Category cat : kCategories) EXPECT_TRUE(a.card.category_skill(cat).has_value());
  // The truth's eddies and the closure's fluxes are both there: the a priori slope is finite.
  const Metric* slope = a.card.find("a_priori.L1.slope");
  ASSERT_NE(slope, nullptr);
  ASSERT_TRUE(slope->candidate.has_value());
  EXPECT_TRUE(std::isfinite(*slope->candidate));
}

}  // namespace
}  // namespace plateau
