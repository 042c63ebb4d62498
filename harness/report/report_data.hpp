#pragma once
// What the report reads from a results folder, as plain data: coarse runs and the truth on the
// coarse grid (time means, snapshots, energy series), skills, a tune log and a regress file.
// Readers are tolerant: a file that is absent gives nothing, one that cannot be read gives a
// warning, so that one bad file never costs the whole report.

#include <filesystem>
#include <optional>
#include <string>
#include <vector>

#include "harness/report/figures.hpp"

namespace plateau::report {

// One run on the coarse grid: time means per layer and the series, in SI units.
struct RunFields {
  std::string label;  // closure label, or "truth"
  std::filesystem::path file;
  int nx = 0;
  int ny = 0;
  int layers = 0;
  double lx_m = 0.0;
  double ly_m = 0.0;
  double f0 = 0.0;
  double beta = 0.0;
  double rho0 = 1025.0;
  std::vector<double> thickness_m;
  std::vector<double> reduced_gravity;
  std::vector<std::vector<double>> psi;  // per layer, x fastest, m2 s-1
  std::vector<std::vector<double>> q;    // per layer, s-1 (wall nodes as stored or diagnosed)
  std::vector<double> wall_psi;          // c_k, m2 s-1
  double mean_start_s = 0.0;
  std::vector<double> series_t_s;
  std::vector<double> total_energy_j;
  std::vector<double> snapshot_t_s;
  std::vector<std::vector<std::vector<double>>> snapshot_psi;  // [time][layer] x fastest

  [[nodiscard]] GridField layer_field(const std::vector<double>& v) const;
  // sum_k H_k (psi_k - c_k) of time-mean psi, or of a snapshot (its wall values at node 0),
  // in m3 s-1.
  [[nodiscard]] std::vector<double> barotropic() const;
  [[nodiscard]] std::vector<double> barotropic_of(const std::vector<std::vector<double>>& p) const;
};

// run-NAME.nc as written by plateau (harness/run/run_output.hpp).
RunFields read_run_file(const std::filesystem::path& file, const std::string& label);
// A truth cache entry's truth.nc, on the grid of `like` (a coarse run of the same case), with q
// from psi by the coarse model's operators; throws io::IoError when the grids differ.
RunFields read_truth_file(const std::filesystem::path& file, const RunFields& like);

struct ClosureSkill {
  std::string closure;
  std::optional<double> overall;
  std::optional<double> categories[4];  // plateau, transport, energy, a_priori
  std::string failed;                   // a run that failed numerically
};

struct SkillTable {
  std::string case_name;
  std::vector<ClosureSkill> closures;  // ranked order where a ranking exists
  std::vector<int> sheltered_layers;   // 1-based, from the plateau metric ids
  std::filesystem::path truth_file;    // empty: not recorded
};
// compare.json, else every score-*.json; nothing when neither exists.
std::optional<SkillTable> read_skills(const std::filesystem::path& dir,
                                      std::vector<std::string>& warnings);

struct TuneLog {
  std::vector<AxisSpec> params;             // name, unit, log scale
  std::vector<std::vector<double>> values;  // per evaluation, per parameter
  std::vector<double> skill;
  std::optional<std::size_t> best;
  std::string closure;
};
std::optional<TuneLog> read_tune_log(const std::filesystem::path& file,
                                     std::vector<std::string>& warnings);

std::optional<std::vector<ChangeRow>> read_regress(const std::filesystem::path& file,
                                                   std::vector<std::string>& warnings);

}  // namespace plateau::report
