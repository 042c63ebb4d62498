#pragma once
// Type-I discrete sine transform of the interior nodes, (nx-1) x (ny-1), with FFTW's RODFT00 in
// both directions. Unnormalised: forward then backward multiplies by 4 nx ny.
//
// Reproducibility: every plan is made single-threaded through one mutex (FFTW's planner is not
// thread-safe). With FFTW_MEASURE the planner's choice can differ between runs, and with it the
// last bits, so measured plans are taken from a wisdom file kept in the cache folder
// (set_wisdom_file); without one, plans are made with FFTW_ESTIMATE, which is deterministic.
// Executing one plan from several threads on different buffers is safe (FFTW's new-array
// execute); each caller owns its own aligned buffers.

#include <fftw3.h>

#include <filesystem>
#include <memory>

namespace plateau {

// Where measured plans are remembered. Empty: plan with FFTW_ESTIMATE. Call before planning.
void set_wisdom_file(const std::filesystem::path& path);
std::filesystem::path wisdom_file();

// An FFTW-aligned buffer of doubles.
struct FftwBuffer {
  double* data = nullptr;
  std::size_t size = 0;
  FftwBuffer() = default;
  explicit FftwBuffer(std::size_t n);
  FftwBuffer(const FftwBuffer&) = delete;
  FftwBuffer& operator=(const FftwBuffer&) = delete;
  FftwBuffer(FftwBuffer&& o) noexcept;
  FftwBuffer& operator=(FftwBuffer&& o) noexcept;
  ~FftwBuffer();
};

class SineTransform2D {
 public:
  // nx, ny count grid intervals; the transform acts on the (nx-1) x (ny-1) interior, x fastest.
  SineTransform2D(int nx, int ny);
  SineTransform2D(const SineTransform2D&) = delete;
  SineTransform2D& operator=(const SineTransform2D&) = delete;
  ~SineTransform2D();

  // In place on an aligned buffer of (nx-1)(ny-1) doubles. RODFT00 is its own inverse up to
  // the factor 4 nx ny.
  void apply(double* buffer) const;
  [[nodiscard]] int mx() const { return mx_; }
  [[nodiscard]] int my() const { return my_; }
  [[nodiscard]] double normalisation() const { return 4.0 * (mx_ + 1) * (my_ + 1); }

 private:
  int mx_;
  int my_;
  fftw_plan plan_ = nullptr;
};

}  // namespace plateau
