#include "harness/io/atomic_file.hpp"

#include <fcntl.h>
#include <unistd.h>

#include <atomic>
#include <cerrno>
#include <cstring>
#include <string>
#include <system_error>
#include <utility>

#include "harness/io/error.hpp"

namespace plateau::io {
namespace {

std::string errno_text(int err) { return std::generic_category().message(err); }

// Counts reservations in this process so that temporaries of one target never collide.
std::atomic<unsigned long> temporary_counter{0};

std::filesystem::path temporary_name_for(const std::filesystem::path& final_path) {
  const std::string name = final_path.filename().string();
  if (name.empty() || name == "." || name == "..") {
    throw IoError(final_path, "cannot write '" + final_path.string() + "': not a file name");
  }
  const unsigned long n = temporary_counter.fetch_add(1);
  return final_path.parent_path() /
         ("." + name + ".tmp." + std::to_string(::getpid()) + "." + std::to_string(n));
}

// fsync a directory so that a rename inside it is durable. File systems that cannot sync a
// directory say EINVAL (or EROFS for read-only mounts of the directory itself): nothing to do.
void sync_directory(const std::filesystem::path& dir, const std::filesystem::path& for_file) {
  const std::filesystem::path d = dir.empty() ? std::filesystem::path(".") : dir;
  const int fd = ::open(d.c_str(), O_RDONLY | O_DIRECTORY | O_CLOEXEC);
  if (fd < 0) {
    const int err = errno;
    throw IoError(for_file, "cannot open directory '" + d.string() + "' to sync '" +
                                for_file.string() + "': " + errno_text(err));
  }
  const int rc = ::fsync(fd);
  const int err = errno;
  ::close(fd);
  if (rc != 0 && err != EINVAL && err != EROFS) {
    throw IoError(for_file, "cannot sync directory '" + d.string() + "' of '" + for_file.string() +
                                "': " + errno_text(err));
  }
}

}  // namespace

TemporaryPath::TemporaryPath(std::filesystem::path final_path)
    : final_(std::move(final_path)), temporary_(temporary_name_for(final_)) {
  const std::filesystem::path parent = final_.parent_path();
  if (!parent.empty()) {
    std::error_code ec;
    std::filesystem::create_directories(parent, ec);
    if (ec) {
      throw IoError(final_, "cannot create directory '" + parent.string() + "' for '" +
                                final_.string() + "': " + ec.message());
    }
  }
  const int fd = ::open(temporary_.c_str(), O_WRONLY | O_CREAT | O_EXCL | O_CLOEXEC, 0666);
  if (fd < 0) {
    const int err = errno;
    throw IoError(final_, "cannot create temporary file '" + temporary_.string() + "' for '" +
                              final_.string() + "': " + errno_text(err));
  }
  ::close(fd);
}

TemporaryPath::~TemporaryPath() {
  if (!published_) {
    std::error_code ignored;
    std::filesystem::remove(temporary_, ignored);
  }
}

void TemporaryPath::publish() {
  if (published_) {
    throw IoError(final_, "'" + final_.string() + "' was already committed");
  }
  const int fd = ::open(temporary_.c_str(), O_RDONLY | O_CLOEXEC);
  if (fd < 0) {
    const int err = errno;
    throw IoError(final_, "cannot reopen temporary file '" + temporary_.string() + "' of '" +
                              final_.string() + "': " + errno_text(err));
  }
  const int rc = ::fsync(fd);
  const int sync_err = errno;
  ::close(fd);
  if (rc != 0) {
    throw IoError(final_, "cannot sync '" + temporary_.string() + "' before renaming it to '" +
                              final_.string() + "': " + errno_text(sync_err));
  }
  if (::rename(temporary_.c_str(), final_.c_str()) != 0) {
    const int err = errno;
    throw IoError(final_, "cannot rename '" + temporary_.string() + "' to '" + final_.string() +
                              "': " + errno_text(err));
  }
  published_ = true;
  sync_directory(final_.parent_path(), final_);
}

AtomicFile::AtomicFile(std::filesystem::path final_path) : name_(std::move(final_path)) {
  fd_ = ::open(name_.temporary().c_str(), O_WRONLY | O_TRUNC | O_CLOEXEC);
  if (fd_ < 0) {
    const int err = errno;
    throw IoError(name_.final_path(), "cannot open temporary file '" + name_.temporary().string() +
                                          "' for '" + name_.final_path().string() +
                                          "': " + errno_text(err));
  }
}

AtomicFile::~AtomicFile() {
  if (fd_ >= 0) {
    ::close(fd_);
  }
  // name_ removes the temporary unless commit() published it.
}

void AtomicFile::write(std::string_view bytes) {
  write(std::as_bytes(std::span<const char>(bytes.data(), bytes.size())));
}

void AtomicFile::write(std::span<const std::byte> bytes) {
  if (fd_ < 0) {
    throw IoError(name_.final_path(),
                  "write to '" + name_.final_path().string() + "' after commit");
  }
  const std::byte* p = bytes.data();
  std::size_t left = bytes.size();
  while (left > 0) {
    const ssize_t n = ::write(fd_, p, left);
    if (n < 0) {
      const int err = errno;
      if (err == EINTR) {
        continue;
      }
      throw IoError(name_.final_path(), "cannot write '" + name_.temporary().string() + "' (for '" +
                                            name_.final_path().string() + "'): " + errno_text(err));
    }
    p += n;
    left -= static_cast<std::size_t>(n);
  }
}

void AtomicFile::close_descriptor() {
  const int fd = std::exchange(fd_, -1);
  if (::close(fd) != 0) {
    const int err = errno;
    throw IoError(name_.final_path(), "cannot close '" + name_.temporary().string() + "' (for '" +
                                          name_.final_path().string() + "'): " + errno_text(err));
  }
}

void AtomicFile::commit() {
  if (fd_ < 0) {
    throw IoError(name_.final_path(), "'" + name_.final_path().string() + "' committed twice");
  }
  close_descriptor();
  name_.publish();
}

void write_text_atomic(const std::filesystem::path& path, std::string_view text) {
  AtomicFile file(path);
  file.write(text);
  file.commit();
}

std::string read_file_bytes(const std::filesystem::path& path) {
  const int fd = ::open(path.c_str(), O_RDONLY | O_CLOEXEC);
  if (fd < 0) {
    const int err = errno;
    throw IoError(path, "cannot open '" + path.string() + "': " + errno_text(err));
  }
  std::string bytes;
  char buffer[1 << 16];
  for (;;) {
    const ssize_t n = ::read(fd, buffer, sizeof buffer);
    if (n < 0) {
      const int err = errno;
      if (err == EINTR) {
        continue;
      }
      ::close(fd);
      throw IoError(path, "cannot read '" + path.string() + "': " + errno_text(err));
    }
    if (n == 0) {
      break;
    }
    bytes.append(buffer, static_cast<std::size_t>(n));
  }
  ::close(fd);
  return bytes;
}

}  // namespace plateau::io
