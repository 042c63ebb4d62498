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
//
// The 2-D transform is done as its two passes, the x transforms of every row and then the y
// transforms of every column, each pass in a fixed number of blocks (one plan per block), so
// that threads can share one mode's transform (inversion.cpp). The blocks depend on the grid
// size only, never on the thread count, and apply() runs the same plans one after the other:
// the result is bit-identical however the blocks are spread over threads.

#include <fftw3.h>

#include <filesystem>
#include <memory>
#include <vector>

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
  // the factor 4 nx ny. The same as apply_rows for every block, then apply_columns for every
  // block.
  void apply(double* buffer) const;
  [[nodiscard]] int mx() const { return mx_; }
  [[nodiscard]] int my() const { return my_; }
  [[nodiscard]] double normalisation() const { return 4.0 * (mx_ + 1) * (my_ + 1); }

  // The transform in parts. Blocks 0..blocks()-1 of each pass: block b of the rows covers buffer
  // rows row_begin(b) <= r < row_begin(b + 1) (r = j - 1), block b of the columns buffer columns
  // col_begin(b) <= c < col_begin(b + 1). Every row block of a buffer must be done before any
  // of its column blocks.
  [[nodiscard]] int blocks() const { return static_cast<int>(row_plans_.size()); }
  [[nodiscard]] int row_begin(int block) const {
    return row_bounds_[static_cast<std::size_t>(block)];
  }
  [[nodiscard]] int col_begin(int block) const {
    return col_bounds_[static_cast<std::size_t>(block)];
  }
  void apply_rows(double* buffer, int block) const;     // x transforms of the block's rows
  void apply_columns(double* buffer, int block) const;  // y transforms of the block's columns

 private:
  int mx_;
  int my_;
  std::vector<int> row_bounds_;  // blocks() + 1 entries, 0 .. my
  std::vector<int> col_bounds_;  // blocks() + 1 entries, 0 .. mx
  std::vector<fftw_plan> row_plans_;
  std::vector<fftw_plan> col_plans_;
};

}  // namespace plateau
