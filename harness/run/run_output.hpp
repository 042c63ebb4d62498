#pragma once
// A run's record as a NetCDF-4 file following the CF conventions: the time-mean psi and q per
// layer, the barotropic transport streamfunction, snapshots along time, and the energy series
// with every budget term (in joules and watts: the model's m^5 s^-2 times rho0).

#include <filesystem>
#include <string>
#include <vector>

#include "harness/io/netcdf.hpp"
#include "harness/model/model.hpp"
#include "harness/run/run.hpp"

namespace plateau {

// Extra 2-D per-layer diagnostic fields a closure adds (its K map, say), time means.
struct ExtraField {
  std::string name;
  std::string units;
  std::string long_name;
  std::vector<Field> per_layer;  // one Field per layer (or per interface)
  bool on_interfaces = false;
};

void write_run_netcdf(const RunRecord& record, const Model& model,
                      const std::filesystem::path& path, const io::FileDescription& description,
                      const std::vector<ExtraField>& extra = {});

}  // namespace plateau
