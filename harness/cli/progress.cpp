#include "harness/cli/progress.hpp"

#include <unistd.h>

#include <cmath>
#include <memory>

namespace plateau::cli {

std::function<void(const Progress&)> progress_printer(std::string label, bool quiet) {
  if (quiet) return {};
  const bool tty = ::isatty(::fileno(stderr)) != 0;
  auto last_decile = std::make_shared<int>(-1);
  return [label = std::move(label), tty, last_decile](const Progress& p) {
    const double frac =
        p.total_steps > 0 ? static_cast<double>(p.step) / static_cast<double>(p.total_steps) : 1.0;
    const double years = p.model_time_s / (365.0 * 86400.0);
    const double rate = p.wall_s > 0 ? years / (p.wall_s / 3600.0) : 0.0;  // model years per hour
    const double left = frac > 0 ? p.wall_s * (1.0 - frac) / frac : 0.0;
    const bool done = p.step >= p.total_steps;
    if (tty) {
      std::fprintf(stderr, "\r%s %5.1f%%  %.2f model years  %.1f years/hour  %.0f s left   %s",
                   label.c_str(), 100.0 * frac, years, rate, left, done ? "\n" : "");
      std::fflush(stderr);
      return;
    }
    const int decile = static_cast<int>(std::floor(frac * 10.0 + 1e-9));
    if (decile == *last_decile) return;
    *last_decile = decile;
    std::fprintf(stderr, "%s %3.0f%%  %.2f model years  %.1f years/hour  %.0f s left\n",
                 label.c_str(), 100.0 * frac, years, rate, left);
  };
}

}  // namespace plateau::cli
