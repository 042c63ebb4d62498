#pragma once
// Reading a TOML document section by section, with one form for every complaint:
//
//   FILE:LINE:COLUMN: key 'section.key' = VALUE: what is wrong; allowed: what is allowed
//
// A Section knows every key it may hold, so an unknown key is caught where it is written (with a
// suggestion when it is a near miss), and every accessor checks type and range. Internal to
// harness/case/: the case layout itself lives in case.cpp.

#include <cstdint>
#include <filesystem>
#include <limits>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include <toml++/toml.h>  // Debian ships toml.h only (no toml.hpp)

namespace plateau::case_detail {

// An interval of allowed numbers; an infinite end is left unwritten ("> 0", ">= 0").
struct Range {
  double lo = -std::numeric_limits<double>::infinity();
  double hi = std::numeric_limits<double>::infinity();
  bool lo_open = false;
  bool hi_open = false;

  static Range positive(double max = std::numeric_limits<double>::infinity()) {
    return {0.0, max, true, false};
  }
  static Range non_negative(double max = std::numeric_limits<double>::infinity()) {
    return {0.0, max, false, false};
  }
  static Range closed(double min, double max) { return {min, max, false, false}; }

  [[nodiscard]] bool contains(double v) const;
  [[nodiscard]] std::string describe() const;  // "a number in (0, 20000]", "a number > 0"
};

// A value as the case file wrote it, for messages: strings quoted, numbers in round-trip form,
// arrays and tables inline (long ones shortened).
std::string format_value(const toml::node& node);
// A number in round-trip (shortest exact) form.
std::string format_number(double v);

class Document {
 public:
  // Parses `text`; a TOML syntax error becomes a CaseError naming the position and the line.
  Document(std::string_view text, std::filesystem::path path);

  [[nodiscard]] const toml::table& root() const { return root_; }
  [[nodiscard]] const std::filesystem::path& path() const { return path_; }

  // "FILE:LINE:COLUMN" (LINE:COLUMN 1:1 when the region has no position).
  [[nodiscard]] std::string location(const toml::source_region& where) const;

  [[noreturn]] void fail(const toml::source_region& where, std::string_view key,
                         std::string_view value, std::string_view what,
                         std::string_view allowed) const;

 private:
  std::filesystem::path path_;
  toml::table root_;
};

class Section {
 public:
  // `name` is the dotted section name ("basin", "scoring.weights"); `node` its table in the
  // document or nullptr when absent; `keys` every key the section may hold. An unknown key, or a
  // node that is not a table, fails here.
  Section(const Document& doc, std::string name, const toml::node* node,
          std::vector<std::string> keys, const toml::source_region& parent_where = {});

  [[nodiscard]] bool present() const { return table_ != nullptr; }
  [[nodiscard]] bool has(std::string_view key) const { return node(key) != nullptr; }
  [[nodiscard]] const toml::node* node(std::string_view key) const;
  [[nodiscard]] const toml::table* table() const { return table_; }
  [[nodiscard]] const std::string& name() const { return name_; }
  [[nodiscard]] std::string qualified(std::string_view key) const;
  // Where the section starts (its header), or the file's start when it is absent.
  [[nodiscard]] const toml::source_region& where() const { return where_; }

  // Numbers: a TOML integer is accepted where a float is expected. Non-finite values fail.
  [[nodiscard]] std::optional<double> number(std::string_view key, const Range& range,
                                             std::string_view unit) const;
  [[nodiscard]] double number_or(std::string_view key, const Range& range, std::string_view unit,
                                 double fallback) const;
  [[nodiscard]] double required_number(std::string_view key, const Range& range,
                                       std::string_view unit) const;
  [[nodiscard]] std::optional<std::int64_t> integer(std::string_view key, std::int64_t lo,
                                                    std::int64_t hi) const;
  [[nodiscard]] std::int64_t required_integer(std::string_view key, std::int64_t lo,
                                              std::int64_t hi) const;
  [[nodiscard]] std::optional<std::string> string(std::string_view key,
                                                  std::string_view allowed) const;
  // One of `choices`; `fallback` when absent.
  [[nodiscard]] std::string choice(std::string_view key, const std::vector<std::string>& choices,
                                   std::string_view fallback) const;
  // An array of numbers with a count in [min_count, max_count], each inside `range`.
  [[nodiscard]] std::optional<std::vector<double>> number_array(std::string_view key,
                                                                const Range& range,
                                                                std::string_view unit,
                                                                std::size_t min_count,
                                                                std::size_t max_count) const;
  [[nodiscard]] std::optional<std::vector<std::int64_t>> integer_array(std::string_view key,
                                                                       std::int64_t lo,
                                                                       std::int64_t hi) const;
  [[nodiscard]] std::optional<std::vector<std::string>> string_array(
      std::string_view key, std::string_view allowed) const;

  // Complaints about a key that is present (positioned at its value) or absent (positioned at
  // the section, or at the file when the section is absent).
  [[noreturn]] void fail(std::string_view key, std::string_view what,
                         std::string_view allowed) const;
  [[noreturn]] void fail_at(const toml::node& at, std::string_view key, std::string_view what,
                            std::string_view allowed) const;
  [[noreturn]] void fail_missing(std::string_view key, std::string_view allowed) const;

 private:
  [[nodiscard]] const toml::node& value_node(std::string_view key) const;

  const Document* doc_;
  std::string name_;
  const toml::table* table_ = nullptr;
  std::vector<std::string> keys_;
  toml::source_region where_;
};

// The TOML type of a node in words ("a string", "an integer", "an array", ...).
std::string_view type_words(const toml::node& node);

}  // namespace plateau::case_detail
