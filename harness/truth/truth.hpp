#pragma once
// The truth of a case: its eddy-resolving run on the truth grid, reduced to what scoring needs
// on the coarse grid, and cached under a hash of everything that produced it (ARCHITECTURE.md,
// the truth cache).
//
// A cache entry is a folder named by the 64-hex key, holding
//   manifest.json   the key, the text it hashes, and each file's size and SHA-256
//   truth.nc        coarse-grid contents, in the model's own units (exact doubles): time means,
//                   eddy statistics (harness/truth/eddy_stats.hpp), friction, snapshots, the
//                   energy series and budget integrals
//   truth-grid.nc   the run on its own grid (time means, energy series): for people and reports
//   lock            flock()ed while a process computes or checks the entry
//   checkpoints/    while the run is under way; an interrupted truth resumes from here
// The manifest is written last, so an entry without one is incomplete. An entry whose manifest,
// key, sizes or hashes do not match is rejected with a message saying which and is recomputed.
//
// The key covers: the basin, layers, wind and friction, the truth grid and time step, run
// length, spin-up, snapshot and series intervals, the statistics interval, the coarse grid (the
// contents live on it), the a priori target, the truth's own closure with its parameters (an
// identical-twin truth), the cache format, and the solver version (project version and the hash
// of the sources under harness/model/).

#include <atomic>
#include <cstdint>
#include <filesystem>
#include <functional>
#include <optional>
#include <stdexcept>
#include <string>
#include <vector>

#include "harness/case/case.hpp"
#include "harness/model/model.hpp"
#include "harness/run/run.hpp"
#include "harness/truth/eddy_stats.hpp"

namespace plateau {

inline constexpr int kTruthCacheFormat = 1;
// Eddy statistics are sampled once per model day (at least once per step): eddies decorrelate
// over weeks, so daily samples over a multi-year window resolve their means at about 2% of a
// step's cost.
inline constexpr double kStatisticsIntervalS = 86400.0;

// A cache entry that cannot be used (exit code 2 when it cannot be recomputed either).
class TruthCacheError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

// The contents of an entry, everything on the coarse grid.
struct TruthData {
  std::string key;
  // Time means of every step after spin-up, coarse-grained; snapshots (filtered psi) at the
  // snapshot interval; the energy series (on the truth grid) and budget integrals. final_state
  // is empty.
  RunRecord record;
  EddyStatistics eddy;
  std::vector<Field> friction;  // filter(D_truth(mean psi)), s^-2
  double wall_s = 0.0;          // the truth run's wall time (timing only)
  int truth_nx = 0;
  int truth_ny = 0;
};

// --cache DIR, else PLATEAU_CACHE_DIR, else ${XDG_CACHE_HOME:-$HOME/.cache}/plateau.
std::filesystem::path truth_cache_dir(const std::filesystem::path& option);

// The canonical text the key hashes (one "name = value" line each, numbers in round-trip form)
// and its SHA-256.
std::string truth_key_text(const Case& c);
std::string truth_key(const Case& c);

struct TruthOptions {
  std::filesystem::path cache_dir;  // resolved (truth_cache_dir)
  bool force = false;               // recompute even when a valid entry exists
  std::function<void(const Progress&)> progress;
  std::function<void(const std::string&)> notice;  // reuse, rejection and waiting messages
  const std::atomic<bool>* stop_flag = nullptr;
  std::int64_t stop_after_step = -1;  // tests: stop as if killed (the checkpoint stays)
};

struct TruthResult {
  TruthData data;
  std::filesystem::path entry;
  bool reused = false;   // loaded from a valid entry
  bool resumed = false;  // continued an interrupted run
  std::string rejected;  // why an existing entry was not used (empty: none was there)
};

// Loads the case's entry if valid (unless forced), else runs the truth (resuming an interrupted
// one) and writes the entry. Throws NumericalFailure and RunInterrupted as run_model does.
TruthResult obtain_truth(const Case& c, const TruthOptions& options);

// Reads and verifies the case's entry folder; throws TruthCacheError saying what does not match
// (manifest, key, a file's size or SHA-256) and io::IoError when a file cannot be read.
TruthData load_truth_entry(const Case& c, const std::filesystem::path& entry);

// The truth's models: the run (truth grid, or the coarse grid for an identical-twin case) and
// the coarse model the contents live on.
Model make_truth_model(const Case& c);
Model make_coarse_model(const Case& c);
RunSchedule case_schedule(const Case& c);

}  // namespace plateau
