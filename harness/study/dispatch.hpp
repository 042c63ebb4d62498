#pragma once
// Spreading independent evaluations over threads and MPI ranks (STUDIES.md, parallelism), and
// the wire form of an evaluation that ranks exchange.
//
// Item i of a batch goes to rank i mod size (a fixed deal); each rank runs its items on a pool
// of threads, each evaluation single-threaded; then every rank receives every result, in item
// order. Since each evaluation is deterministic, what comes back does not depend on the number
// of ranks or threads. Every rank receives everything (an all-gather, not a gather to rank 0)
// because tune's optimisers run on every rank in step and need the answers to choose the next
// points; rank 0 alone writes the study's files.
//
// MPI is initialised only when the program was started by an MPI launcher (its environment
// says so) and only by the studies that ask for it (compare, tune, regress); a build without
// MPI, or a process started without mpirun, is one rank.

#include <cstddef>
#include <functional>
#include <stdexcept>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "harness/study/evaluate.hpp"

namespace plateau {

class Ranks {
 public:
  // The process's ranks: starts MPI on first call when under an MPI launcher (and built with
  // MPI); MPI is finalised at exit.
  static Ranks& world();
  // One rank, without MPI (commands that never spread: score).
  static Ranks& single();

  [[nodiscard]] int rank() const { return rank_; }
  [[nodiscard]] int size() const { return size_; }
  [[nodiscard]] bool is_root() const { return rank_ == 0; }
  // How many ranks share this machine (for the default thread count).
  [[nodiscard]] int local_size() const { return local_size_; }

  // Every rank's strings, concatenated in rank order, on every rank.
  [[nodiscard]] std::vector<std::vector<std::string>> all_gather(
      const std::vector<std::string>& mine) const;
  // Rank 0's value on every rank.
  [[nodiscard]] std::string broadcast(const std::string& from_root) const;
  // Stops every rank (a failure on one rank that the others cannot see).
  [[noreturn]] void abort(int code) const;

  Ranks(const Ranks&) = delete;
  Ranks& operator=(const Ranks&) = delete;
  ~Ranks();

 private:
  explicit Ranks(bool use_mpi);
  int rank_ = 0;
  int size_ = 1;
  int local_size_ = 1;
  bool mpi_ = false;
};

// True when the environment shows an MPI launcher started this process.
bool started_by_mpi_launcher();

// Worker threads per rank: `threads` when given (> 0), else the machine's hardware threads
// shared among the ranks on it.
int threads_per_rank(const Ranks& ranks, int threads);

// Runs work(i) for every i < n, spread as above, and returns the results in item order on every
// rank. `done(i, result)` is called on this rank as each of its own items finishes (from the
// worker thread, one call at a time). work must not throw: a study encodes failures in its
// result; an exception that escapes anyway is rethrown here (one rank) or stops every rank.
std::vector<std::string> spread(
    const Ranks& ranks, std::size_t n, int threads,
    const std::function<std::string(std::size_t)>& work,
    const std::function<void(std::size_t, const std::string&)>& done = {});

// Runs `f` on rank 0 first, then (once rank 0 is through) on the other ranks: the truth is
// computed (or forced) once and then read by everyone. When `f` throws on rank 0 the other ranks
// throw a std::runtime_error saying so instead of running it.
template <class F>
auto root_first(const Ranks& ranks, F&& f) -> decltype(f()) {
  if (ranks.size() == 1) return f();
  if (ranks.is_root()) {
    try {
      auto r = f();
      (void)ranks.broadcast("ok");
      return r;
    } catch (...) {
      (void)ranks.broadcast("failed");
      throw;
    }
  }
  if (ranks.broadcast("") != "ok") throw std::runtime_error("rank 0 failed; see its message");
  return f();
}

// ---- the wire form of an evaluation ----------------------------------------------------------

// Everything of an Evaluation, metrics in their order, numbers exact (shortest round-trip
// text); a non-finite number travels as null and comes back as NaN (optionals: as nothing).
nlohmann::json evaluation_to_wire(const Evaluation& e);

// A study worker's result for spread(), as text: `run` returns the JSON of one finished
// evaluation; a run that fails numerically gives {failure_key: its message}, an interrupted
// one {"interrupted": true}. Other exceptions pass (spread rethrows them).
std::string worker_result(const std::function<nlohmann::json()>& run,
                          const char* failure_key = "failure");
Evaluation evaluation_from_wire(const nlohmann::json& j);

}  // namespace plateau
