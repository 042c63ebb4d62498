#pragma once
// The one exception type of the io room. Every failure to read or write a file (netCDF,
// checkpoint, atomic write) throws IoError; its message names the file and, where there is one,
// the variable or blob, and the system's or the library's own reason. The command line maps it
// to exit code 2 (bad input file) or reports it as is.

#include <filesystem>
#include <stdexcept>
#include <string>
#include <utility>

namespace plateau::io {

class IoError : public std::runtime_error {
 public:
  IoError(std::filesystem::path path, const std::string& message)
      : std::runtime_error(message), path_(std::move(path)) {}

  // The file the error is about (may be empty for a misuse caught before any file is named).
  [[nodiscard]] const std::filesystem::path& path() const noexcept { return path_; }

 private:
  std::filesystem::path path_;
};

}  // namespace plateau::io
