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
  // Planning a measured plan the wisdom already holds returns that same plan at once.
  plan_ = fftw_plan_r2r_2d(my_, mx_, scratch.data, scratch.data, FFTW_RODFT00, FFTW_RODFT00, flags);
  if (plan_ == nullptr) throw std::runtime_error("FFTW could not plan a sine transform");
  if (measure) save_wisdom_locked();
}

SineTransform2D::~SineTransform2D() {
  const std::lock_guard<std::mutex> lock(planner_mutex());
  if (plan_ != nullptr) fftw_destroy_plan(plan_);
}

void SineTransform2D::apply(double* buffer) const { fftw_execute_r2r(plan_, buffer, buffer); }

}  // namespace plateau
