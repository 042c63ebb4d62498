// plateau report DIR [--out FILE] [--truth FILE]: the HTML report of a results folder
// (harness/report/report.hpp): one self-contained page and each figure as figures/NAME.svg.
// The figure code lives in harness/report/; this file only parses, prints and picks the exit
// code.

#include <iostream>
#include <memory>

#include <CLI/CLI.hpp>

#include "harness/cli/cli.hpp"
#include "harness/report/report.hpp"

namespace plateau::cli {

namespace {

struct ReportCommandOptions {
  std::filesystem::path dir;
  report::ReportOptions report;
};

}  // namespace

int print_report_summary(const report::ReportResult& r, const GlobalOptions& global,
                         std::ostream& out, std::ostream& err) {
  for (const std::string& w : r.warnings) print_warning(err, w);
  if (global.quiet) return kExitOk;
  out << "report: " << r.figures.size() << " figures";
  if (!r.skipped.empty()) {
    out << "; not shown:";
    for (std::size_t i = 0; i < r.skipped.size(); ++i) out << (i ? ";" : "") << " " << r.skipped[i];
  }
  out << "\n  wrote   " << r.html.string() << "\n  wrote   " << r.figures.size() << " figures in "
      << (r.html.parent_path() / "figures").string() << "/\n"
      << "  open it with any browser (no network needed), e.g. xdg-open " << r.html.string()
      << '\n';
  return kExitOk;
}

void add_report_command(CLI::App& app, Invocation& invocation) {
  auto opts = std::make_shared<ReportCommandOptions>();
  CLI::App* cmd = app.add_subcommand(
      "report", "an HTML report with figures (and figures/*.svg) from a results folder");
  cmd->add_option("dir", opts->dir, "results folder (of score, compare, tune or regress)")
      ->required()
      ->check(CLI::ExistingDirectory);
  cmd->add_option("--out", opts->report.out, "the HTML file (default DIR/report.html)");
  cmd->add_option("--truth", opts->report.truth,
                  "the truth's truth.nc (default: as compare.json or score-*.json record it)")
      ->check(CLI::ExistingFile);
  cmd->callback([opts, &invocation]() {
    const report::ReportResult r = report::write_report(opts->dir, opts->report);
    invocation.exit_code = print_report_summary(r, invocation.global, std::cout, std::cerr);
  });
}

}  // namespace plateau::cli
