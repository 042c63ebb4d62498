#include "harness/study/dispatch.hpp"

#include <omp.h>

#include <algorithm>
#include <atomic>
#include <cmath>
#include <cstdint>
#include <cstdlib>
#include <cstring>
#include <exception>
#include <iostream>
#include <limits>
#include <mutex>
#include <optional>
#include <stdexcept>
#include <thread>

#include "harness/run/run.hpp"

#ifdef PLATEAU_HAVE_MPI
#include <mpi.h>
#endif

namespace plateau {

namespace {

bool env_set(const char* name) {
  const char* v = std::getenv(name);
  return v != nullptr && *v != '\0';
}

#ifdef PLATEAU_HAVE_MPI
void check(int rc, const char* what) {
  if (rc != MPI_SUCCESS) throw std::runtime_error(std::string("MPI: ") + what + " failed");
}
#endif

}  // namespace

bool started_by_mpi_launcher() {
  // OpenMPI's mpirun, then the PMI/PMIx variables other launchers and batch schedulers set.
  return env_set("OMPI_COMM_WORLD_SIZE") || env_set("PMIX_RANK") || env_set("PMI_SIZE") ||
         env_set("PMI_RANK");
}

Ranks::Ranks(bool use_mpi) {
#ifdef PLATEAU_HAVE_MPI
  if (!use_mpi || !started_by_mpi_launcher()) return;
  int initialised = 0;
  check(MPI_Initialized(&initialised), "MPI_Initialized");
  if (initialised == 0) {
    // Only the thread that runs the study calls MPI; the workers only evaluate.
    int provided = 0;
    check(MPI_Init_thread(nullptr, nullptr, MPI_THREAD_FUNNELED, &provided), "MPI_Init_thread");
  }
  mpi_ = true;
  check(MPI_Comm_rank(MPI_COMM_WORLD, &rank_), "MPI_Comm_rank");
  check(MPI_Comm_size(MPI_COMM_WORLD, &size_), "MPI_Comm_size");
  MPI_Comm local = MPI_COMM_NULL;
  check(MPI_Comm_split_type(MPI_COMM_WORLD, MPI_COMM_TYPE_SHARED, rank_, MPI_INFO_NULL, &local),
        "MPI_Comm_split_type");
  check(MPI_Comm_size(local, &local_size_), "MPI_Comm_size");
  MPI_Comm_free(&local);
#else
  (void)use_mpi;
#endif
}

Ranks::~Ranks() {
#ifdef PLATEAU_HAVE_MPI
  if (!mpi_) return;
  int finalised = 0;
  MPI_Finalized(&finalised);
  if (finalised == 0) MPI_Finalize();
#endif
}

Ranks& Ranks::world() {
  static Ranks r(true);
  return r;
}

Ranks& Ranks::single() {
  static Ranks r(false);
  return r;
}

void Ranks::abort(int code) const {
#ifdef PLATEAU_HAVE_MPI
  if (mpi_) MPI_Abort(MPI_COMM_WORLD, code);
#endif
  std::exit(code);
}

std::vector<std::vector<std::string>> Ranks::all_gather(
    const std::vector<std::string>& mine) const {
  std::vector<std::vector<std::string>> all(static_cast<std::size_t>(size_));
  if (!mpi_ || size_ == 1) {
    all.front() = mine;
    return all;
  }
#ifdef PLATEAU_HAVE_MPI
  // One buffer per rank: each string as an 8-byte length and its bytes.
  std::string buf;
  for (const std::string& s : mine) {
    const std::uint64_t n = s.size();
    buf.append(reinterpret_cast<const char*>(&n), sizeof n);
    buf += s;
  }
  if (buf.size() > static_cast<std::size_t>(std::numeric_limits<int>::max())) {
    throw std::runtime_error("MPI: a rank's results exceed 2 GiB");
  }
  int len = static_cast<int>(buf.size());
  std::vector<int> lens(static_cast<std::size_t>(size_));
  check(MPI_Allgather(&len, 1, MPI_INT, lens.data(), 1, MPI_INT, MPI_COMM_WORLD), "MPI_Allgather");
  std::vector<int> displs(lens.size());
  long long total = 0;
  for (std::size_t r = 0; r < lens.size(); ++r) {
    if (total > std::numeric_limits<int>::max()) {
      throw std::runtime_error("MPI: the gathered results exceed 2 GiB");
    }
    displs[r] = static_cast<int>(total);
    total += lens[r];
  }
  std::string everything(static_cast<std::size_t>(total), '\0');
  check(MPI_Allgatherv(buf.data(), len, MPI_CHAR, everything.data(), lens.data(), displs.data(),
                       MPI_CHAR, MPI_COMM_WORLD),
        "MPI_Allgatherv");
  for (std::size_t r = 0; r < lens.size(); ++r) {
    std::size_t at = static_cast<std::size_t>(displs[r]);
    const std::size_t end = at + static_cast<std::size_t>(lens[r]);
    while (at < end) {
      std::uint64_t n = 0;
      std::memcpy(&n, everything.data() + at, sizeof n);
      at += sizeof n;
      all[r].emplace_back(everything, at, static_cast<std::size_t>(n));
      at += static_cast<std::size_t>(n);
    }
  }
#endif
  return all;
}

std::string Ranks::broadcast(const std::string& from_root) const {
  if (!mpi_ || size_ == 1) return from_root;
#ifdef PLATEAU_HAVE_MPI
  std::uint64_t n = from_root.size();
  check(MPI_Bcast(&n, 1, MPI_UINT64_T, 0, MPI_COMM_WORLD), "MPI_Bcast");
  std::string s = rank_ == 0 ? from_root : std::string(static_cast<std::size_t>(n), '\0');
  if (n > static_cast<std::uint64_t>(std::numeric_limits<int>::max())) {
    throw std::runtime_error("MPI: a broadcast exceeds 2 GiB");
  }
  check(MPI_Bcast(s.data(), static_cast<int>(n), MPI_CHAR, 0, MPI_COMM_WORLD), "MPI_Bcast");
  return s;
#else
  return from_root;
#endif
}

int threads_per_rank(const Ranks& ranks, int threads) {
  if (threads > 0) return threads;
  const int hw = std::max(1, static_cast<int>(std::thread::hardware_concurrency()));
  return std::max(1, hw / std::max(1, ranks.local_size()));
}

std::vector<std::string> spread(const Ranks& ranks, std::size_t n, int threads,
                                const std::function<std::string(std::size_t)>& work,
                                const std::function<void(std::size_t, const std::string&)>& done) {
  const auto size = static_cast<std::size_t>(ranks.size());
  const auto rank = static_cast<std::size_t>(ranks.rank());
  std::vector<std::size_t> mine;
  for (std::size_t i = rank; i < n; i += size) mine.push_back(i);

  std::vector<std::string> local(mine.size());
  std::atomic<std::size_t> next{0};
  std::mutex done_mutex;
  std::exception_ptr failure;
  auto worker = [&]() {
    omp_set_num_threads(1);  // each evaluation single-threaded: the workers are the parallelism
    for (std::size_t k = next++; k < mine.size(); k = next++) {
      try {
        local[k] = work(mine[k]);
        if (done) {
          const std::lock_guard<std::mutex> lock(done_mutex);
          done(mine[k], local[k]);
        }
      } catch (...) {
        const std::lock_guard<std::mutex> lock(done_mutex);
        if (!failure) failure = std::current_exception();
      }
    }
  };
  const std::size_t workers =
      std::min<std::size_t>(mine.size(), static_cast<std::size_t>(std::max(1, threads)));
  std::vector<std::thread> pool;
  for (std::size_t w = 1; w < workers; ++w) pool.emplace_back(worker);
  if (workers > 0) worker();
  for (std::thread& t : pool) t.join();
  if (failure) {
    if (size == 1) std::rethrow_exception(failure);
    try {
      std::rethrow_exception(failure);
    } catch (const std::exception& e) {
      std::cerr << "plateau: error on rank " << rank << ": " << e.what() << '\n';
    } catch (...) {
      std::cerr << "plateau: error on rank " << rank << '\n';
    }
    ranks.abort(2);
  }
  if (size == 1) return local;

  const std::vector<std::vector<std::string>> all = ranks.all_gather(local);
  std::vector<std::string> out(n);
  for (std::size_t r = 0; r < all.size(); ++r) {
    for (std::size_t k = 0; k < all[r].size(); ++k) out[r + k * size] = all[r][k];
  }
  return out;
}

// ---- wire form --------------------------------------------------------------------------------

namespace {

nlohmann::json num(double x) {
  if (!std::isfinite(x)) return nullptr;
  return x;
}
nlohmann::json num(const std::optional<double>& x) {
  if (!x || !std::isfinite(*x)) return nullptr;
  return *x;
}
nlohmann::json nums(const std::vector<double>& v) {
  nlohmann::json a = nlohmann::json::array();
  for (const double x : v) a.push_back(num(x));
  return a;
}
double real_of(const nlohmann::json& j) {
  return j.is_null() ? std::numeric_limits<double>::quiet_NaN() : j.get<double>();
}
std::optional<double> opt_of(const nlohmann::json& j) {
  if (j.is_null()) return std::nullopt;
  return j.get<double>();
}
std::vector<double> reals_of(const nlohmann::json& j) {
  std::vector<double> v;
  v.reserve(j.size());
  for (const nlohmann::json& x : j) v.push_back(real_of(x));
  return v;
}

}  // namespace

std::string worker_result(const std::function<nlohmann::json()>& run, const char* failure_key) {
  nlohmann::json r;
  try {
    r = run();
  } catch (const NumericalFailure& e) {
    r = nlohmann::json::object();
    r[failure_key] = e.what();
  } catch (const RunInterrupted&) {
    r = nlohmann::json::object();
    r["interrupted"] = true;
  }
  return r.dump();
}

nlohmann::json evaluation_to_wire(const Evaluation& e) {
  const Scorecard& c = e.card;
  nlohmann::json j;
  j["netcdf"] = e.netcdf.string();
  j["wall_s"] = num(e.wall_s);
  j["max_substeps"] = e.max_substeps;
  nlohmann::json card;
  card["case"] = c.case_name;
  card["closure"] = c.closure;
  card["apriori_target"] = c.apriori_target;
  card["weights"] = {num(c.weights.plateau), num(c.weights.transport), num(c.weights.energy),
                     num(c.weights.a_priori)};
  card["warnings"] = c.warnings;
  card["timing"] = {num(c.timing.truth_wall_s), num(c.timing.candidate_wall_s)};
  nlohmann::json ms = nlohmann::json::array();
  for (const Metric& m : c.metrics) {
    nlohmann::json x;
    x["id"] = m.id;
    x["category"] = static_cast<int>(m.category);
    x["unit"] = m.unit;
    x["truth"] = num(m.truth);
    x["candidate"] = num(m.candidate);
    x["error"] = num(m.error);
    x["skill"] = num(m.skill);
    x["scale"] = m.scale;
    x["scored"] = m.scored;
    x["note"] = m.note;
    x["level_unit"] = m.level_unit;
    x["levels"] = nums(m.levels);
    nlohmann::json ps = nlohmann::json::array();
    for (const Profile& p : m.profiles) {
      ps.push_back({{"name", p.name}, {"truth", nums(p.truth)}, {"candidate", nums(p.candidate)}});
    }
    x["profiles"] = std::move(ps);
    ms.push_back(std::move(x));
  }
  card["metrics"] = std::move(ms);
  j["card"] = std::move(card);
  return j;
}

Evaluation evaluation_from_wire(const nlohmann::json& j) {
  Evaluation e;
  e.netcdf = j.at("netcdf").get<std::string>();
  e.wall_s = real_of(j.at("wall_s"));
  e.max_substeps = j.at("max_substeps").get<int>();
  const nlohmann::json& card = j.at("card");
  Scorecard& c = e.card;
  c.case_name = card.at("case").get<std::string>();
  c.closure = card.at("closure").get<std::string>();
  c.apriori_target = card.at("apriori_target").get<std::string>();
  const nlohmann::json& w = card.at("weights");
  c.weights = {real_of(w.at(0)), real_of(w.at(1)), real_of(w.at(2)), real_of(w.at(3))};
  c.warnings = card.at("warnings").get<std::vector<std::string>>();
  c.timing.truth_wall_s = opt_of(card.at("timing").at(0));
  c.timing.candidate_wall_s = opt_of(card.at("timing").at(1));
  for (const nlohmann::json& x : card.at("metrics")) {
    Metric m;
    m.id = x.at("id").get<std::string>();
    m.category = static_cast<Category>(x.at("category").get<int>());
    m.unit = x.at("unit").get<std::string>();
    m.truth = opt_of(x.at("truth"));
    m.candidate = opt_of(x.at("candidate"));
    m.error = real_of(x.at("error"));
    m.skill = real_of(x.at("skill"));
    m.scale = x.at("scale").get<std::string>();
    m.scored = x.at("scored").get<bool>();
    m.note = x.at("note").get<std::string>();
    m.level_unit = x.at("level_unit").get<std::string>();
    m.levels = reals_of(x.at("levels"));
    for (const nlohmann::json& p : x.at("profiles")) {
      m.profiles.push_back(
          {p.at("name").get<std::string>(), reals_of(p.at("truth")), reals_of(p.at("candidate"))});
    }
    c.metrics.push_back(std::move(m));
  }
  return e;
}

}  // namespace plateau
