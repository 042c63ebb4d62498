#pragma once
// Progress of long runs on stderr: on a terminal one line rewritten in place (percent, model
// years done, simulated years per wall-clock hour, time left); in a log a line every 10%.

#include <cstdio>
#include <functional>
#include <string>

#include "harness/run/run.hpp"

namespace plateau::cli {

// A progress callback for RunOptions::progress; `label` starts each line. Quiet: none.
std::function<void(const Progress&)> progress_printer(std::string label, bool quiet);

}  // namespace plateau::cli
