#include "harness/cli/progress.hpp"

#include <unistd.h>

#include <cmath>
#include <memory>
#include <optional>

namespace plateau::cli {
namespace {

constexpr double kYearS = 365.0 * 86400.0;  // a model year (README)

struct ProgressState {
  int last_bucket = -1;
  bool origin_set = false;
  double origin_model_s = 0.0;
  double origin_wall_s = 0.0;
  std::int64_t origin_step = 0;
  double last_print_wall_s = -1.0;
};

}  // namespace

std::string format_duration(double s) {
  if (!std::isfinite(s) || s < 0.0) return "-";
  char buf[32];
  if (s < 90.0) {
    std::snprintf(buf, sizeof buf, "%.0f s", s);
  } else if (s < 5400.0) {
    std::snprintf(buf, sizeof buf, "%.1f min", s / 60.0);
  } else if (s < 2.0 * 86400.0) {
    std::snprintf(buf, sizeof buf, "%.1f h", s / 3600.0);
  } else {
    std::snprintf(buf, sizeof buf, "%.1f days", s / 86400.0);
  }
  return buf;
}

std::function<void(const Progress&)> progress_printer(std::string label, bool quiet, bool terminal,
                                                      std::FILE* stream) {
  if (quiet) return {};
  auto state = std::make_shared<ProgressState>();
  return [label = std::move(label), terminal, stream, state](const Progress& p) {
    ProgressState& st = *state;
    if (!st.origin_set) {
      st.origin_set = true;
      st.origin_model_s = p.model_time_s;
      st.origin_wall_s = p.wall_s;
      st.origin_step = p.step;
    }
    const double frac =
        p.total_steps > 0 ? static_cast<double>(p.step) / static_cast<double>(p.total_steps) : 1.0;
    const bool done = p.step >= p.total_steps;
    const double years = p.model_time_s / kYearS;
    const double wall = p.wall_s - st.origin_wall_s;
    const double model = (p.model_time_s - st.origin_model_s) / kYearS;
    const std::int64_t steps = p.step - st.origin_step;
    std::string rate = "-";
    std::string left = done ? "0 s" : "-";
    if (wall > 0.0 && steps > 0) {
      char buf[48];
      const double per_hour = model / (wall / 3600.0);
      std::snprintf(buf, sizeof buf,
                    per_hour >= 100.0 ? "%.0f" : (per_hour >= 1.0 ? "%.1f" : "%.2g"), per_hour);
      rate = buf;
      if (!done) {
        left = format_duration(wall / static_cast<double>(steps) *
                               static_cast<double>(p.total_steps - p.step));
      }
    }
    char line[512];
    std::snprintf(line, sizeof line, "%s %5.1f%%  %.2f model years  %s years/hour  %s left",
                  label.c_str(), 100.0 * frac, years, rate.c_str(), left.c_str());
    if (terminal) {
      // At most ten redraws a second; the last one always.
      if (!done && st.last_print_wall_s >= 0.0 && p.wall_s - st.last_print_wall_s < 0.1) return;
      st.last_print_wall_s = p.wall_s;
      std::fprintf(stream, "\r%s\033[K%s", line, done ? "\n" : "");
      std::fflush(stream);
      return;
    }
    const int bucket = static_cast<int>(std::floor(frac * 100.0 / kLogEveryPercent + 1e-9));
    if (bucket == st.last_bucket && !done) return;
    if (done && st.last_bucket == bucket) return;
    st.last_bucket = bucket;
    std::fprintf(stream, "%s\n", line);
  };
}

std::function<void(const Progress&)> progress_printer(std::string label, bool quiet) {
  return progress_printer(std::move(label), quiet, ::isatty(::fileno(stderr)) != 0, stderr);
}

}  // namespace plateau::cli
