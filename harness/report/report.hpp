#pragma once
// The HTML report of a results folder (ARCHITECTURE.md, the results folder layout): one
// self-contained page, every figure inline SVG with a caption, no script, no font and no
// stylesheet fetched; each figure also as figures/NAME.svg beside the page.
//
// Sections, each left out (and named in ReportResult::skipped) when its files are absent:
//   skills          compare.json or score-*.json: ranking table and skill bars per category
//   maps            run-*.nc + the truth's truth.nc: time-mean q per layer (truth | closure |
//                   difference) under mean-psi contours; barotropic transport maps
//   q-psi           scatter of q against psi - c per sheltered layer, truth and closure overlaid
//   series          total energy and barotropic transport over time, truth and closures
//   tune            tune-log.jsonl: skill against each parameter, a map for two parameters
//   regress         regress.json: skill changes against the baseline
// The truth is found through compare.json's truth.entry (the cache folder) or a score JSON's
// "truth" (the truth.nc path); truth fields are coarse-grained, in the coarse model's units,
// and truth q is computed from its psi with the coarse model's operators (SCORING.md).

#include <filesystem>
#include <string>
#include <vector>

namespace plateau::report {

struct ReportOptions {
  std::filesystem::path out;  // the HTML file; empty: DIR/report.html
  // Overrides the truth.nc to use (empty: from compare.json or a score JSON).
  std::filesystem::path truth;
};

struct ReportResult {
  std::filesystem::path html;
  std::vector<std::filesystem::path> figures;  // figures/NAME.svg, in page order
  std::vector<std::string> skipped;            // "tune: no tune-log.jsonl", ...
  std::vector<std::string> warnings;           // files present but unreadable, and why
};

// Reads DIR, writes the page and the SVG files (atomically: io/atomic_file.hpp). Throws
// io::IoError when DIR holds none of the files above or a file cannot be written.
ReportResult write_report(const std::filesystem::path& dir, const ReportOptions& options = {});

}  // namespace plateau::report
