#pragma once
// Deterministic content hashes. SHA-256 (FIPS 180-4) names cache entries: a truth cache key is
// the SHA-256 of a canonical text of everything the truth depends on, so two cases that differ
// in any input never share an entry, whatever the number of entries. FNV-1a 64 is the cheap
// integrity check of a checkpoint: it detects truncation and any single changed byte (each
// step is a bijection of the state), which is what a checksum of our own files must do; it is
// not meant to resist deliberate collisions.
//
// Both are computed here, byte for byte the same on every machine.

#include <array>
#include <cstddef>
#include <cstdint>
#include <filesystem>
#include <span>
#include <string>
#include <string_view>

namespace plateau::io {

using Sha256Digest = std::array<std::uint8_t, 32>;

// Incremental SHA-256: update() any number of times, then digest() once. The result depends
// only on the concatenation of the bytes given, not on how they were split.
class Sha256 {
 public:
  Sha256();
  Sha256& update(std::span<const std::byte> bytes);
  Sha256& update(std::string_view text);
  // Finish and return the digest; the object is spent afterwards (update/digest throw
  // std::logic_error).
  [[nodiscard]] Sha256Digest digest();

 private:
  void compress(const std::uint8_t* block);

  std::array<std::uint32_t, 8> state_;
  std::array<std::uint8_t, 64> block_{};
  std::size_t block_used_ = 0;
  std::uint64_t total_bytes_ = 0;
  bool finished_ = false;
};

// Lower-case hexadecimal, two digits per byte, most significant first.
[[nodiscard]] std::string to_hex(std::span<const std::uint8_t> bytes);

// SHA-256 of a text (or any bytes) as 64 lower-case hex digits.
[[nodiscard]] std::string sha256_hex(std::string_view bytes);

// SHA-256 of a file's contents as 64 hex digits. Throws IoError naming the file.
[[nodiscard]] std::string sha256_file_hex(const std::filesystem::path& path);

inline constexpr std::uint64_t kFnv1a64Offset = 0xcbf29ce484222325ULL;
inline constexpr std::uint64_t kFnv1a64Prime = 0x00000100000001b3ULL;

// FNV-1a 64 of `bytes`, continuing from `state` (pass a previous result to hash in pieces).
[[nodiscard]] std::uint64_t fnv1a64(std::span<const std::byte> bytes,
                                    std::uint64_t state = kFnv1a64Offset) noexcept;

}  // namespace plateau::io
