#include "harness/model/sine_transform.hpp"

#include <unistd.h>
#include <cstdio>
#include <mutex>
#include <stdexcept>
#include <string>
#include <system_error>

namespace plateau {
namespace {

std::mutex& planner_mutex() {
  static std::mutex m;
  return m;
}

std::filesystem::path& wisdom_path() {
  static std::filesystem::path p;
  return p;
}

bool wisdom_loaded = false;

// Blocks per pass of a 2-D transform: fixed, whatever the thread count (reproducibility).
constexpr int kBlocks = 2;

void save_wisdom_locked() {
  const auto& path = wisdom_path();
  if (path.empty()) return;
  std::error_code ec;
  std::filesystem::create_directories(path.parent_path(), ec);
  const auto tmp = path.string() + ".tmp." + std::to_string(::getpid());
  if (fftw_export_wisdom_to_filename(tmp.c_str()) != 0) {
    std::filesystem::rename(tmp, path, ec);
  }
  if (ec) std::filesystem::remove(tmp, ec);
}

}  // namespace

void set_wisdom_file(const std::filesystem::path& path) {
  const std::lock_guard<std::mutex> lock(planner_mutex());
  wisdom_path() = path;
  wisdom_loaded = false;
}

std::filesystem::path wisdom_file() {
  const std::lock_guard<std::mutex> lock(planner_mutex());
  return wisdom_path();
}

FftwBuffer::FftwBuffer(std::size_t n)
    : data(static_cast<double*>(fftw_malloc(sizeof(double) * (n > 0 ? n : 1)))), size(n) {
  if (data == nullptr) throw std::bad_alloc();
}
FftwBuffer::FftwBuffer(FftwBuffer&& o) noexcept : data(o.data), size(o.size) {
  o.data = nullptr;
  o.size = 0;
}
FftwBuffer& FftwBuffer::operator=(FftwBuffer&& o) noexcept {
  if (this != &o) {
    if (data != nullptr) fftw_free(data);
    data = o.data;
    size = o.size;
    o.data = nullptr;
    o.size = 0;
  }
  return *this;
}
FftwBuffer::~FftwBuffer() {
  if (data != nullptr) fftw_free(data);
}

SineTransform2D::SineTransform2D(int nx, int ny) : mx_(nx - 1), my_(ny - 1) {
  if (mx_ < 1 || my_ < 1) throw std::invalid_argument("SineTransform2D: grid too small");
  // Two blocks per pass (one per core of the build machine; measured no slower on one thread
  // than FFTW's own 2-D plan), one on tiny grids. Inner boundaries are even, so that every
  // block starts 16-byte aligned like the buffer.
  const int blocks = (mx_ >= 4 && my_ >= 4) ? kBlocks : 1;
  for (int b = 0; b <= blocks; ++b) {
    const bool inner = b > 0 && b < blocks;
    const int r = my_ * b / blocks;
    const int c = mx_ * b / blocks;
    row_bounds_.push_back(inner ? (r & ~1) : r);
    col_bounds_.push_back(inner ? (c & ~1) : c);
  }
  const std::lock_guard<std::mutex> lock(planner_mutex());
  unsigned flags = FFTW_ESTIMATE;
  const bool measure = !wisdom_path().empty();
  if (measure) {
    if (!wisdom_loaded) {
      fftw_import_wisdom_from_filename(wisdom_path().c_str());  // absent on first use: fine
      wisdom_loaded = true;
    }
    flags = FFTW_MEASURE;
  }
  const auto n = static_cast<std::size_t>(mx_) * static_cast<std::size_t>(my_);
  FftwBuffer scratch(n);
  // Each block is planned at its own offset of an aligned buffer, so its plan expects the
  // alignment that block has in every aligned buffer. Planning a measured plan the wisdom
  // already holds returns that same plan at once.
  const fftw_r2r_kind kind = FFTW_RODFT00;
  for (int b = 0; b < blocks; ++b) {
    const int r0 = row_bounds_[static_cast<std::size_t>(b)];
    const int r1 = row_bounds_[static_cast<std::size_t>(b) + 1];
    double* rp = scratch.data + static_cast<std::size_t>(r0) * static_cast<std::size_t>(mx_);
    row_plans_.push_back(fftw_plan_many_r2r(1, &mx_, r1 - r0, rp, nullptr, 1, mx_, rp, nullptr, 1,
                                            mx_, &kind, flags));
    const int c0 = col_bounds_[static_cast<std::size_t>(b)];
    const int c1 = col_bounds_[static_cast<std::size_t>(b) + 1];
    double* cp = scratch.data + c0;
    col_plans_.push_back(fftw_plan_many_r2r(1, &my_, c1 - c0, cp, nullptr, mx_, 1, cp, nullptr, mx_,
                                            1, &kind, flags));
    if (row_plans_.back() == nullptr || col_plans_.back() == nullptr) {
      for (fftw_plan p : row_plans_) {
        if (p != nullptr) fftw_destroy_plan(p);
      }
      for (fftw_plan p : col_plans_) {
        if (p != nullptr) fftw_destroy_plan(p);
      }
      throw std::runtime_error("FFTW could not plan a sine transform");
    }
  }
  if (measure) save_wisdom_locked();
}

SineTransform2D::~SineTransform2D() {
  const std::lock_guard<std::mutex> lock(planner_mutex());
  for (fftw_plan p : row_plans_) fftw_destroy_plan(p);
  for (fftw_plan p : col_plans_) fftw_destroy_plan(p);
}

void SineTransform2D::apply(double* buffer) const {
  for (int b = 0; b < blocks(); ++b) apply_rows(buffer, b);
  for (int b = 0; b < blocks(); ++b) apply_columns(buffer, b);
}

void SineTransform2D::apply_rows(double* buffer, int block) const {
  double* p = buffer + static_cast<std::size_t>(row_begin(block)) * static_cast<std::size_t>(mx_);
  fftw_execute_r2r(row_plans_[static_cast<std::size_t>(block)], p, p);
}

void SineTransform2D::apply_columns(double* buffer, int block) const {
  double* p = buffer + col_begin(block);
  fftw_execute_r2r(col_plans_[static_cast<std::size_t>(block)], p, p);
}

}  // namespace plateau
