#pragma once
// Atomic file writes: a file is written under a temporary name in its own directory and renamed
// onto its final name only when complete, so a reader (another process, a later run, a crash
// survivor) sees either the old file, or the whole new one, never a part.
//
// The temporary name is `.NAME.tmp.PID.N` beside `NAME` (N counts reservations within the
// process, so two threads writing the same target never share a temporary). Rename is atomic
// only within one file system, hence the same directory. The data are fsync'ed before the
// rename and the directory after it, so a committed file survives a power cut.

#include <cstddef>
#include <filesystem>
#include <span>
#include <string>
#include <string_view>

namespace plateau::io {

// A reserved temporary name beside a final path. The constructor creates the final path's
// parent directories and the empty temporary file (exclusively); the destructor removes the
// temporary unless publish() has moved it onto the final name. Used by AtomicFile and by
// writers that open files through a library of their own (NetcdfWriter).
class TemporaryPath {
 public:
  explicit TemporaryPath(std::filesystem::path final_path);
  ~TemporaryPath();
  TemporaryPath(const TemporaryPath&) = delete;
  TemporaryPath& operator=(const TemporaryPath&) = delete;

  [[nodiscard]] const std::filesystem::path& temporary() const noexcept { return temporary_; }
  [[nodiscard]] const std::filesystem::path& final_path() const noexcept { return final_; }
  [[nodiscard]] bool published() const noexcept { return published_; }

  // fsync the temporary's contents (the writer must have closed it), rename it onto the final
  // name (replacing any file there) and fsync the directory. Throws IoError; on failure the
  // temporary is still removed by the destructor. Calling it twice throws.
  void publish();

 private:
  std::filesystem::path final_;
  std::filesystem::path temporary_;
  bool published_ = false;
};

// A file written atomically: write() any number of times, then commit(). Without commit() (an
// exception, an early return) the destructor removes the temporary and the final name is left
// as it was. Each write() goes straight to the kernel: hand it large pieces.
class AtomicFile {
 public:
  explicit AtomicFile(std::filesystem::path final_path);
  ~AtomicFile();
  AtomicFile(const AtomicFile&) = delete;
  AtomicFile& operator=(const AtomicFile&) = delete;

  void write(std::string_view bytes);
  void write(std::span<const std::byte> bytes);

  // Close, fsync and rename onto the final name. Throws IoError; afterwards no write is allowed.
  void commit();

  [[nodiscard]] const std::filesystem::path& final_path() const noexcept {
    return name_.final_path();
  }
  [[nodiscard]] const std::filesystem::path& temporary_path() const noexcept {
    return name_.temporary();
  }

 private:
  void close_descriptor();

  TemporaryPath name_;
  int fd_ = -1;
};

// Write `text` to `path` atomically (parent directories are created).
void write_text_atomic(const std::filesystem::path& path, std::string_view text);

// Read a whole file into a string (binary-safe). Throws IoError naming the file.
[[nodiscard]] std::string read_file_bytes(const std::filesystem::path& path);

}  // namespace plateau::io
