#pragma once
// Checkpoints for exact restarts: a binary format of our own, so that a resumed run continues
// bit for bit (doubles are stored as their raw IEEE-754 bits, never printed and re-parsed).
//
// Layout (every integer little-endian, whatever the machine):
//
//   "PLTCKPT1"                      8 bytes, magic
//   u32  format version             kCheckpointFormatVersion
//   u64  file size in bytes         the whole file, checksum included (truncation check)
//   u64  key length, key bytes      the caller's key: a checkpoint of another case is refused
//   u64  blob count
//   per blob, in the order added:
//     u64 name length, name bytes
//     u8  kind                      1 = doubles, 2 = int64 values, 3 = string
//     u64 count                     elements (doubles, int64s) or bytes (string)
//     payload                       8 bytes per double (its bits) or int64, or the string bytes
//   u64  FNV-1a 64 of every byte before it
//
// The reader checks, in order: magic, version, declared size against the actual size
// (truncation), checksum (corruption), then the key; each failure throws IoError naming the
// file and what was wrong. Files are written atomically (AtomicFile), so a crash mid-write
// leaves the previous checkpoint in place.

#include <cstdint>
#include <filesystem>
#include <functional>
#include <map>
#include <span>
#include <string>
#include <string_view>
#include <type_traits>
#include <vector>

namespace plateau::io {

inline constexpr std::uint32_t kCheckpointFormatVersion = 1;

// Collects named blobs in memory; commit() writes them all in one atomic file.
class CheckpointWriter {
 public:
  // `key` identifies what the checkpoint belongs to (e.g. a hash of the case and closure); a
  // reader given another key refuses the file.
  explicit CheckpointWriter(std::string key);

  // Each name may be added once (IoError otherwise). Blobs keep the order they were added in.
  void add(std::string_view name, std::span<const double> values);
  void add(std::string_view name, std::span<const std::int64_t> values);
  void add(std::string_view name, std::int64_t value);  // a one-element int64 blob
  void add(std::string_view name, std::string_view text);
  // A lone double would silently convert to int64: add it as a one-element span instead.
  template <typename T>
  requires std::is_floating_point_v<T>
  void add(std::string_view name, T value) = delete;

  // Serialize, checksum and write atomically to `path` (parent directories are created).
  void commit(const std::filesystem::path& path) const;

 private:
  enum class Kind : std::uint8_t { doubles = 1, ints = 2, text = 3 };
  struct Blob {
    std::string name;
    Kind kind;
    std::uint64_t count;
    std::string payload;  // raw little-endian bytes
  };
  void add_blob(std::string_view name, Kind kind, std::uint64_t count, std::string payload);

  std::string key_;
  std::vector<Blob> blobs_;
};

// Reads and verifies a whole checkpoint at construction; the getters then only look up.
class CheckpointReader {
 public:
  // Throws IoError if the file is missing, not a checkpoint, of another format version,
  // truncated, corrupted, or written with a key other than `expected_key`.
  CheckpointReader(const std::filesystem::path& path, std::string_view expected_key);

  [[nodiscard]] bool has(std::string_view name) const;
  // Blob names in the order they were written.
  [[nodiscard]] std::vector<std::string> names() const;

  // Each getter throws IoError naming the file and the blob if it is missing or of another kind.
  [[nodiscard]] std::vector<double> get_doubles(std::string_view name) const;
  [[nodiscard]] std::vector<std::int64_t> get_ints(std::string_view name) const;
  // A one-element int64 blob (as written by add(name, int64)).
  [[nodiscard]] std::int64_t get_int(std::string_view name) const;
  [[nodiscard]] std::string get_string(std::string_view name) const;

  [[nodiscard]] const std::filesystem::path& path() const noexcept { return path_; }
  [[nodiscard]] const std::string& key() const noexcept { return key_; }

 private:
  struct Entry {
    std::uint8_t kind;
    std::uint64_t count;
    std::size_t offset;  // of the payload in bytes_
  };
  const Entry& find(std::string_view name, std::uint8_t kind) const;

  std::filesystem::path path_;
  std::string bytes_;
  std::string key_;
  std::vector<std::string> order_;
  std::map<std::string, Entry, std::less<>> entries_;
};

}  // namespace plateau::io
