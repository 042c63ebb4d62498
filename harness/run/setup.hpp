#pragma once
// From a validated case to the model of one of its two grids.

#include <string>

#include "harness/case/case.hpp"
#include "harness/model/model.hpp"

namespace plateau {

enum class GridRole { truth, coarse };

[[nodiscard]] const char* role_name(GridRole role);
[[nodiscard]] const GridSpec& grid_spec(const Case& c, GridRole role);
[[nodiscard]] Grid make_grid(const Case& c, GridRole role);
[[nodiscard]] ModelParams make_model_params(const Case& c, GridRole role);

}  // namespace plateau
