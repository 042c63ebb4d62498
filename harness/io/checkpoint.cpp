#include "harness/io/checkpoint.hpp"

#include <bit>
#include <cstring>
#include <limits>
#include <utility>

#include "harness/io/atomic_file.hpp"
#include "harness/io/error.hpp"
#include "harness/io/hash.hpp"

namespace plateau::io {
namespace {

constexpr std::string_view kMagic = "PLTCKPT1";
constexpr std::size_t kTrailerBytes = 8;  // the checksum
// magic + version + file size: enough to say what the file is before trusting anything else.
constexpr std::size_t kPreambleBytes = kMagic.size() + 4 + 8;

void put_u64(std::string& out, std::uint64_t v) {
  for (int i = 0; i < 8; ++i) {
    out.push_back(static_cast<char>(static_cast<std::uint8_t>(v >> (8 * i))));
  }
}

void put_u32(std::string& out, std::uint32_t v) {
  for (int i = 0; i < 4; ++i) {
    out.push_back(static_cast<char>(static_cast<std::uint8_t>(v >> (8 * i))));
  }
}

void put_string(std::string& out, std::string_view s) {
  put_u64(out, s.size());
  out.append(s);
}

std::uint64_t load_u64(std::string_view bytes, std::size_t at) {
  std::uint64_t v = 0;
  for (std::size_t i = 0; i < 8; ++i) {
    v |= std::uint64_t{static_cast<std::uint8_t>(bytes[at + i])} << (8 * i);
  }
  return v;
}

std::uint32_t load_u32(std::string_view bytes, std::size_t at) {
  std::uint32_t v = 0;
  for (std::size_t i = 0; i < 4; ++i) {
    v |= std::uint32_t{static_cast<std::uint8_t>(bytes[at + i])} << (8 * i);
  }
  return v;
}

std::uint64_t checksum(std::string_view bytes) {
  return fnv1a64(std::as_bytes(std::span<const char>(bytes.data(), bytes.size())));
}

const char* kind_name(std::uint8_t kind) {
  switch (kind) {
    case 1:
      return "doubles";
    case 2:
      return "int64 values";
    case 3:
      return "a string";
    default:
      return "an unknown kind";
  }
}

IoError malformed_blob(const std::filesystem::path& path, std::string_view blob,
                       std::string_view problem) {
  std::string message = "checkpoint '" + path.string() + "' is malformed: blob '";
  message.append(blob).append("' ").append(problem);
  return {path, message};
}

// A bounds-checked cursor over the verified body of a checkpoint. Reading past the end can only
// happen if the writer and reader disagree on the format (the checksum has already passed).
class Cursor {
 public:
  Cursor(std::string_view bytes, std::size_t at, const std::filesystem::path& path)
      : bytes_(bytes), at_(at), path_(path) {}

  std::size_t at() const { return at_; }

  void need(std::uint64_t n, const char* what) const {
    if (n > bytes_.size() - at_) {
      throw IoError(path_, "checkpoint '" + path_.string() + "' is malformed: " + what +
                               " runs past the end of the data");
    }
  }
  std::uint64_t u64(const char* what) {
    need(8, what);
    const std::uint64_t v = load_u64(bytes_, at_);
    at_ += 8;
    return v;
  }
  std::uint8_t u8(const char* what) {
    need(1, what);
    return static_cast<std::uint8_t>(bytes_[at_++]);
  }
  std::string text(const char* what) {
    const std::uint64_t n = u64(what);
    need(n, what);
    std::string s(bytes_.substr(at_, static_cast<std::size_t>(n)));
    at_ += static_cast<std::size_t>(n);
    return s;
  }
  void skip(std::uint64_t n, const char* what) {
    need(n, what);
    at_ += static_cast<std::size_t>(n);
  }

 private:
  std::string_view bytes_;
  std::size_t at_;
  const std::filesystem::path& path_;
};

}  // namespace

CheckpointWriter::CheckpointWriter(std::string key) : key_(std::move(key)) {}

void CheckpointWriter::add_blob(std::string_view name, Kind kind, std::uint64_t count,
                                std::string payload) {
  for (const Blob& b : blobs_) {
    if (b.name == name) {
      throw IoError({}, "checkpoint blob '" + std::string(name) + "' added twice");
    }
  }
  blobs_.push_back(Blob{std::string(name), kind, count, std::move(payload)});
}

void CheckpointWriter::add(std::string_view name, std::span<const double> values) {
  std::string payload;
  payload.reserve(8 * values.size());
  for (const double v : values) {
    put_u64(payload, std::bit_cast<std::uint64_t>(v));
  }
  add_blob(name, Kind::doubles, values.size(), std::move(payload));
}

void CheckpointWriter::add(std::string_view name, std::span<const std::int64_t> values) {
  std::string payload;
  payload.reserve(8 * values.size());
  for (const std::int64_t v : values) {
    put_u64(payload, static_cast<std::uint64_t>(v));
  }
  add_blob(name, Kind::ints, values.size(), std::move(payload));
}

void CheckpointWriter::add(std::string_view name, std::int64_t value) {
  add(name, std::span<const std::int64_t>(&value, 1));
}

void CheckpointWriter::add(std::string_view name, std::string_view text) {
  add_blob(name, Kind::text, text.size(), std::string(text));
}

void CheckpointWriter::commit(const std::filesystem::path& path) const {
  std::size_t size = kPreambleBytes + 8 + key_.size() + 8 + kTrailerBytes;
  for (const Blob& b : blobs_) {
    size += 8 + b.name.size() + 1 + 8 + b.payload.size();
  }
  std::string out;
  out.reserve(size);
  out.append(kMagic);
  put_u32(out, kCheckpointFormatVersion);
  put_u64(out, size);
  put_string(out, key_);
  put_u64(out, blobs_.size());
  for (const Blob& b : blobs_) {
    put_string(out, b.name);
    out.push_back(static_cast<char>(b.kind));
    put_u64(out, b.count);
    out.append(b.payload);
  }
  put_u64(out, checksum(out));

  AtomicFile file(path);
  file.write(out);
  file.commit();
}

CheckpointReader::CheckpointReader(const std::filesystem::path& path, std::string_view expected_key)
    : path_(path), bytes_(read_file_bytes(path)) {
  const std::string where = "checkpoint '" + path_.string() + "'";
  const std::string_view all = bytes_;
  if (all.size() < kPreambleBytes || all.substr(0, kMagic.size()) != kMagic) {
    throw IoError(path_, "'" + path_.string() +
                             "' is not a plateau checkpoint (no PLTCKPT1 "
                             "header)");
  }
  const std::uint32_t version = load_u32(all, kMagic.size());
  if (version != kCheckpointFormatVersion) {
    throw IoError(path_, where + " has format version " + std::to_string(version) +
                             "; this build reads version " +
                             std::to_string(kCheckpointFormatVersion));
  }
  const std::uint64_t declared = load_u64(all, kMagic.size() + 4);
  if (declared != all.size()) {
    throw IoError(path_, where + " is " + (all.size() < declared ? "truncated" : "corrupted") +
                             ": its header declares " + std::to_string(declared) +
                             " bytes, the file has " + std::to_string(all.size()));
  }
  if (all.size() < kPreambleBytes + kTrailerBytes) {
    throw IoError(path_, where + " is corrupted: too short for its checksum");
  }
  const std::size_t body_end = all.size() - kTrailerBytes;
  const std::uint64_t stored = load_u64(all, body_end);
  const std::uint64_t actual = checksum(all.substr(0, body_end));
  if (stored != actual) {
    throw IoError(path_, where + " is corrupted: checksum mismatch");
  }

  Cursor c(all.substr(0, body_end), kPreambleBytes, path_);
  key_ = c.text("the key");
  if (key_ != expected_key) {
    throw IoError(path_, where + " belongs to another run: its key is '" + key_ + "', expected '" +
                             std::string(expected_key) + "'");
  }
  const std::uint64_t blob_count = c.u64("the blob count");
  for (std::uint64_t i = 0; i < blob_count; ++i) {
    std::string name = c.text("a blob name");
    const std::uint8_t kind = c.u8("a blob kind");
    const std::uint64_t count = c.u64("a blob length");
    std::uint64_t payload_bytes = 0;
    if (kind == 1 || kind == 2) {
      if (count > std::numeric_limits<std::uint64_t>::max() / 8) {
        throw malformed_blob(path_, name, "is too long");
      }
      payload_bytes = 8 * count;
    } else if (kind == 3) {
      payload_bytes = count;
    } else {
      throw malformed_blob(path_, name, "has unknown kind " + std::to_string(kind));
    }
    const std::size_t offset = c.at();
    c.skip(payload_bytes, "a blob payload");
    if (entries_.contains(name)) {
      throw malformed_blob(path_, name, "appears twice");
    }
    order_.push_back(name);
    entries_.emplace(std::move(name), Entry{kind, count, offset});
  }
  if (c.at() != body_end) {
    throw IoError(path_, where + " is malformed: bytes left after the last blob");
  }
}

bool CheckpointReader::has(std::string_view name) const { return entries_.contains(name); }

std::vector<std::string> CheckpointReader::names() const { return order_; }

const CheckpointReader::Entry& CheckpointReader::find(std::string_view name,
                                                      std::uint8_t kind) const {
  const auto it = entries_.find(name);
  if (it == entries_.end()) {
    throw IoError(path_,
                  "checkpoint '" + path_.string() + "' has no blob '" + std::string(name) + "'");
  }
  if (it->second.kind != kind) {
    throw IoError(path_, "checkpoint '" + path_.string() + "': blob '" + std::string(name) +
                             "' holds " + kind_name(it->second.kind) + ", not " + kind_name(kind));
  }
  return it->second;
}

std::vector<double> CheckpointReader::get_doubles(std::string_view name) const {
  const Entry& e = find(name, 1);
  std::vector<double> out(static_cast<std::size_t>(e.count));
  for (std::size_t i = 0; i < out.size(); ++i) {
    out[i] = std::bit_cast<double>(load_u64(bytes_, e.offset + 8 * i));
  }
  return out;
}

std::vector<std::int64_t> CheckpointReader::get_ints(std::string_view name) const {
  const Entry& e = find(name, 2);
  std::vector<std::int64_t> out(static_cast<std::size_t>(e.count));
  for (std::size_t i = 0; i < out.size(); ++i) {
    out[i] = static_cast<std::int64_t>(load_u64(bytes_, e.offset + 8 * i));
  }
  return out;
}

std::int64_t CheckpointReader::get_int(std::string_view name) const {
  const Entry& e = find(name, 2);
  if (e.count != 1) {
    throw IoError(path_, "checkpoint '" + path_.string() + "': blob '" + std::string(name) +
                             "' holds " + std::to_string(e.count) + " int64 values, not one");
  }
  return static_cast<std::int64_t>(load_u64(bytes_, e.offset));
}

std::string CheckpointReader::get_string(std::string_view name) const {
  const Entry& e = find(name, 3);
  return bytes_.substr(e.offset, static_cast<std::size_t>(e.count));
}

}  // namespace plateau::io
