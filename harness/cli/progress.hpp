#pragma once
// Progress of long runs on stderr. On a terminal: one line rewritten in place with the percent
// done, model years done, simulated years per wall-clock hour and the time left. In a log (no
// terminal: CI, a redirect): a plain line every kLogEveryPercent percent and at the end, so a
// log stays short. --quiet: nothing. The rate and the time left are measured from the first
// report of this process, so a resumed run does not count the model time of its earlier life.

#include <cstdio>
#include <functional>
#include <string>

#include "harness/run/run.hpp"

namespace plateau::cli {

inline constexpr int kLogEveryPercent = 5;

// A progress callback for RunOptions::progress; `label` starts each line. Quiet: none.
std::function<void(const Progress&)> progress_printer(std::string label, bool quiet);
// The same, deciding about the terminal as told (tests).
std::function<void(const Progress&)> progress_printer(std::string label, bool quiet, bool terminal,
                                                      std::FILE* stream);

// "45 s", "3.2 min", "1.5 h", "2.1 days" (and "-" for an unknown or infinite time).
std::string format_duration(double seconds);

}  // namespace plateau::cli
