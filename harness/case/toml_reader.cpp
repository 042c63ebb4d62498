#include "harness/case/toml_reader.hpp"

#include <algorithm>
#include <charconv>
#include <cmath>
#include <sstream>
#include <utility>

#include "harness/case/case.hpp"

namespace plateau::case_detail {
namespace {

constexpr std::size_t kMaxShownValue = 72;  // characters of a long array or table in a message

std::string quote_string(std::string_view s) {
  std::string out = "\"";
  for (char c : s) {
    if (c == '"' || c == '\\') {
      out += '\\';
      out += c;
    } else if (c == '\n') {
      out += "\\n";
    } else if (c == '\t') {
      out += "\\t";
    } else {
      out += c;
    }
  }
  return out + "\"";
}

std::string shortened(std::string s) {
  if (s.size() > kMaxShownValue) {
    s.resize(kMaxShownValue - 3);
    s += "...";
  }
  return s;
}

// Levenshtein distance, for "did you mean" on a near-miss key.
std::size_t edit_distance(std::string_view a, std::string_view b) {
  std::vector<std::size_t> row(b.size() + 1);
  for (std::size_t j = 0; j <= b.size(); ++j) row[j] = j;
  for (std::size_t i = 1; i <= a.size(); ++i) {
    std::size_t diagonal = row[0];
    row[0] = i;
    for (std::size_t j = 1; j <= b.size(); ++j) {
      const std::size_t above = row[j];
      const std::size_t cost = a[i - 1] == b[j - 1] ? 0 : 1;
      row[j] = std::min({row[j] + 1, row[j - 1] + 1, diagonal + cost});
      diagonal = above;
    }
  }
  return row[b.size()];
}

std::string join(const std::vector<std::string>& items, std::string_view separator) {
  std::string out;
  for (std::size_t i = 0; i < items.size(); ++i) {
    if (i > 0) out += separator;
    out += items[i];
  }
  return out;
}

std::string with_unit(const std::string& what, std::string_view unit) {
  return unit.empty() ? what : what + ", unit " + std::string(unit);
}

std::string nth(std::size_t index) { return "element " + std::to_string(index + 1); }

}  // namespace

bool Range::contains(double v) const {
  const bool above = lo_open ? v > lo : v >= lo;
  const bool below = hi_open ? v < hi : v <= hi;
  return above && below;
}

std::string Range::describe() const {
  const bool has_lo = std::isfinite(lo);
  const bool has_hi = std::isfinite(hi);
  if (has_lo && has_hi) {
    return std::string("a number in ") + (lo_open ? "(" : "[") + format_number(lo) + ", " +
           format_number(hi) + (hi_open ? ")" : "]");
  }
  if (has_lo) return std::string("a number ") + (lo_open ? "> " : ">= ") + format_number(lo);
  if (has_hi) return std::string("a number ") + (hi_open ? "< " : "<= ") + format_number(hi);
  return "a finite number";
}

std::string format_number(double v) {
  char buf[64];
  const auto result = std::to_chars(buf, buf + sizeof buf, v);
  return std::string(buf, result.ptr);
}

std::string_view type_words(const toml::node& node) {
  switch (node.type()) {
    case toml::node_type::table:
      return "a table";
    case toml::node_type::array:
      return "an array";
    case toml::node_type::string:
      return "a string";
    case toml::node_type::integer:
      return "an integer";
    case toml::node_type::floating_point:
      return "a float";
    case toml::node_type::boolean:
      return "a boolean";
    case toml::node_type::date:
      return "a date";
    case toml::node_type::time:
      return "a time";
    case toml::node_type::date_time:
      return "a date-time";
    case toml::node_type::none:
      break;
  }
  return "nothing";
}

std::string format_value(const toml::node& node) {
  std::ostringstream os;
  if (const auto* s = node.as_string()) return quote_string(s->get());
  if (const auto* i = node.as_integer()) return std::to_string(i->get());
  if (const auto* f = node.as_floating_point()) {
    // A float keeps its point, as TOML writes it, so that 128.0 and 128 read differently.
    std::string text = format_number(f->get());
    if (std::isfinite(f->get()) && text.find_first_of(".e") == std::string::npos) text += ".0";
    return text;
  }
  if (const auto* b = node.as_boolean()) return b->get() ? "true" : "false";
  if (const auto* d = node.as_date()) {
    os << d->get();
    return os.str();
  }
  if (const auto* t = node.as_time()) {
    os << t->get();
    return os.str();
  }
  if (const auto* dt = node.as_date_time()) {
    os << dt->get();
    return os.str();
  }
  if (const auto* a = node.as_array()) {
    std::string out = "[";
    for (std::size_t i = 0; i < a->size(); ++i) {
      if (i > 0) out += ", ";
      out += format_value(*a->get(i));
      if (out.size() > kMaxShownValue) break;
    }
    return shortened(out + "]");
  }
  if (const auto* t = node.as_table()) {
    std::string out = "{";
    bool first = true;
    for (auto&& [k, v] : *t) {
      out += first ? " " : ", ";
      first = false;
      out += std::string(k.str()) + " = " + format_value(v);
      if (out.size() > kMaxShownValue) break;
    }
    return shortened(out + (first ? "}" : " }"));
  }
  return "?";
}

// ---------------------------------------------------------------------------------------------

Document::Document(std::string_view text, std::filesystem::path path) : path_(std::move(path)) {
  const std::string source_name = path_.string();
  try {
    root_ = toml::parse(text, std::string_view(source_name));
  } catch (const toml::parse_error& e) {
    const auto& begin = e.source().begin;
    // Quote the offending line so that the message shows the key and value as written.
    std::string line_text;
    std::size_t line_no = 1;
    std::size_t start = 0;
    while (line_no < begin.line && start < text.size()) {
      const std::size_t nl = text.find('\n', start);
      if (nl == std::string_view::npos) {
        start = text.size();
        break;
      }
      start = nl + 1;
      ++line_no;
    }
    if (start < text.size()) {
      const std::size_t end = std::min(text.find('\n', start), text.size());
      line_text = std::string(text.substr(start, end - start));
      while (!line_text.empty() && (line_text.back() == '\r' || line_text.back() == ' ')) {
        line_text.pop_back();
      }
    }
    std::ostringstream msg;
    msg << source_name << ':' << std::max<std::uint32_t>(begin.line, 1) << ':'
        << std::max<std::uint32_t>(begin.column, 1) << ": TOML syntax error: " << e.description();
    if (!line_text.empty()) msg << "; the line reads: " << line_text;
    throw CaseError(msg.str());
  }
}

std::string Document::location(const toml::source_region& where) const {
  const auto line = where.begin.line == 0 ? 1U : where.begin.line;
  const auto column = where.begin.column == 0 ? 1U : where.begin.column;
  return path_.string() + ":" + std::to_string(line) + ":" + std::to_string(column);
}

void Document::fail(const toml::source_region& where, std::string_view key, std::string_view value,
                    std::string_view what, std::string_view allowed) const {
  std::string msg = location(where) + ": key '" + std::string(key) + "' = " + std::string(value) +
                    ": " + std::string(what) + "; allowed: " + std::string(allowed);
  throw CaseError(msg);
}

// ---------------------------------------------------------------------------------------------

Section::Section(const Document& doc, std::string name, const toml::node* node,
                 std::vector<std::string> keys, const toml::source_region& parent_where)
    : doc_(&doc), name_(std::move(name)), keys_(std::move(keys)), where_(parent_where) {
  if (node == nullptr) return;
  if (!node->is_table()) {
    doc.fail(node->source(), name_, format_value(*node),
             "wrong type: " + std::string(type_words(*node)), "a table, written [" + name_ + "]");
  }
  table_ = node->as_table();
  if (table_->source().begin.line != 0) where_ = table_->source();
  for (auto&& [k, v] : *table_) {
    const std::string key(k.str());
    if (std::find(keys_.begin(), keys_.end(), key) != keys_.end()) continue;
    std::string what = name_.empty() ? "unknown section" : "unknown key";
    std::string best;
    std::size_t best_distance = 3;  // suggest only near misses: at most two edits
    for (const auto& candidate : keys_) {
      const std::size_t d = edit_distance(key, candidate);
      if (d < best_distance) {
        best_distance = d;
        best = candidate;
      }
    }
    if (!best.empty()) what += " (did you mean '" + best + "'?)";
    const toml::source_region& at = k.source().begin.line != 0 ? k.source() : v.source();
    doc.fail(at, qualified(key), format_value(v), what,
             keys_.empty() ? std::string("no keys here") : join(keys_, ", "));
  }
}

std::string Section::qualified(std::string_view key) const {
  return name_.empty() ? std::string(key) : name_ + "." + std::string(key);
}

const toml::node* Section::node(std::string_view key) const {
  return table_ == nullptr ? nullptr : table_->get(key);
}

const toml::node& Section::value_node(std::string_view key) const {
  const toml::node* n = node(key);
  if (n == nullptr) fail_missing(key, "a value");
  return *n;
}

void Section::fail(std::string_view key, std::string_view what, std::string_view allowed) const {
  const toml::node& n = value_node(key);
  doc_->fail(n.source(), qualified(key), format_value(n), what, allowed);
}

void Section::fail_at(const toml::node& at, std::string_view key, std::string_view what,
                      std::string_view allowed) const {
  doc_->fail(at.source(), qualified(key), format_value(value_node(key)), what, allowed);
}

void Section::fail_missing(std::string_view key, std::string_view allowed) const {
  const std::string what = present() ? "required key missing from [" + name_ + "]"
                                     : "required section [" + name_ + "] missing";
  doc_->fail(where_, qualified(key), "(missing)", what, allowed);
}

std::optional<double> Section::number(std::string_view key, const Range& range,
                                      std::string_view unit) const {
  const toml::node* n = node(key);
  if (n == nullptr) return std::nullopt;
  const std::string allowed = with_unit(range.describe(), unit);
  double v = 0.0;
  if (const auto* i = n->as_integer()) {
    v = static_cast<double>(i->get());
  } else if (const auto* f = n->as_floating_point()) {
    v = f->get();
  } else {
    fail(key, "wrong type: " + std::string(type_words(*n)), allowed);
  }
  if (!std::isfinite(v)) fail(key, "not a finite number", allowed);
  if (!range.contains(v)) fail(key, "out of range", allowed);
  return v;
}

double Section::number_or(std::string_view key, const Range& range, std::string_view unit,
                          double fallback) const {
  return number(key, range, unit).value_or(fallback);
}

double Section::required_number(std::string_view key, const Range& range,
                                std::string_view unit) const {
  const auto v = number(key, range, unit);
  if (!v) fail_missing(key, with_unit(range.describe(), unit));
  return *v;
}

std::optional<std::int64_t> Section::integer(std::string_view key, std::int64_t lo,
                                             std::int64_t hi) const {
  const toml::node* n = node(key);
  if (n == nullptr) return std::nullopt;
  const std::string allowed =
      "an integer in [" + std::to_string(lo) + ", " + std::to_string(hi) + "]";
  const auto* i = n->as_integer();
  if (i == nullptr) fail(key, "wrong type: " + std::string(type_words(*n)), allowed);
  if (i->get() < lo || i->get() > hi) fail(key, "out of range", allowed);
  return i->get();
}

std::int64_t Section::required_integer(std::string_view key, std::int64_t lo,
                                       std::int64_t hi) const {
  const auto v = integer(key, lo, hi);
  if (!v) {
    fail_missing(key, "an integer in [" + std::to_string(lo) + ", " + std::to_string(hi) + "]");
  }
  return *v;
}

std::optional<std::string> Section::string(std::string_view key, std::string_view allowed) const {
  const toml::node* n = node(key);
  if (n == nullptr) return std::nullopt;
  const auto* s = n->as_string();
  if (s == nullptr) fail(key, "wrong type: " + std::string(type_words(*n)), allowed);
  return s->get();
}

std::string Section::choice(std::string_view key, const std::vector<std::string>& choices,
                            std::string_view fallback) const {
  std::vector<std::string> shown;
  shown.reserve(choices.size());
  for (const auto& c : choices) shown.push_back(quote_string(c));
  const std::string allowed = "one of " + join(shown, ", ");
  const auto s = string(key, allowed);
  if (!s) return std::string(fallback);
  if (std::find(choices.begin(), choices.end(), *s) == choices.end()) {
    fail(key, "not a known choice", allowed);
  }
  return *s;
}

std::optional<std::vector<double>> Section::number_array(std::string_view key, const Range& range,
                                                         std::string_view unit,
                                                         std::size_t min_count,
                                                         std::size_t max_count) const {
  const toml::node* n = node(key);
  if (n == nullptr) return std::nullopt;
  const std::string count = min_count == max_count
                                ? std::to_string(min_count)
                                : std::to_string(min_count) + " to " + std::to_string(max_count);
  const std::string allowed =
      "an array of " + count + " numbers, each " + with_unit(range.describe(), unit);
  const auto* a = n->as_array();
  if (a == nullptr) fail(key, "wrong type: " + std::string(type_words(*n)), allowed);
  if (a->size() < min_count || a->size() > max_count) {
    fail(key, "has " + std::to_string(a->size()) + " elements", allowed);
  }
  std::vector<double> out;
  for (std::size_t i = 0; i < a->size(); ++i) {
    const toml::node& e = *a->get(i);
    double v = 0.0;
    if (const auto* iv = e.as_integer()) {
      v = static_cast<double>(iv->get());
    } else if (const auto* fv = e.as_floating_point()) {
      v = fv->get();
    } else {
      fail_at(e, key, nth(i) + " has the wrong type: " + std::string(type_words(e)), allowed);
    }
    if (!std::isfinite(v)) fail_at(e, key, nth(i) + " is not a finite number", allowed);
    if (!range.contains(v)) {
      fail_at(e, key, nth(i) + " = " + format_value(e) + " is out of range", allowed);
    }
    out.push_back(v);
  }
  return out;
}

std::optional<std::vector<std::int64_t>> Section::integer_array(std::string_view key,
                                                                std::int64_t lo,
                                                                std::int64_t hi) const {
  const toml::node* n = node(key);
  if (n == nullptr) return std::nullopt;
  const std::string allowed =
      "an array of integers, each in [" + std::to_string(lo) + ", " + std::to_string(hi) + "]";
  const auto* a = n->as_array();
  if (a == nullptr) fail(key, "wrong type: " + std::string(type_words(*n)), allowed);
  std::vector<std::int64_t> out;
  for (std::size_t i = 0; i < a->size(); ++i) {
    const toml::node& e = *a->get(i);
    const auto* iv = e.as_integer();
    if (iv == nullptr) {
      fail_at(e, key, nth(i) + " has the wrong type: " + std::string(type_words(e)), allowed);
    }
    if (iv->get() < lo || iv->get() > hi) {
      fail_at(e, key, nth(i) + " = " + format_value(e) + " is out of range", allowed);
    }
    out.push_back(iv->get());
  }
  return out;
}

std::optional<std::vector<std::string>> Section::string_array(std::string_view key,
                                                              std::string_view allowed) const {
  const toml::node* n = node(key);
  if (n == nullptr) return std::nullopt;
  const auto* a = n->as_array();
  if (a == nullptr) fail(key, "wrong type: " + std::string(type_words(*n)), allowed);
  std::vector<std::string> out;
  for (std::size_t i = 0; i < a->size(); ++i) {
    const toml::node& e = *a->get(i);
    const auto* s = e.as_string();
    if (s == nullptr) {
      fail_at(e, key, nth(i) + " has the wrong type: " + std::string(type_words(e)), allowed);
    }
    out.push_back(s->get());
  }
  return out;
}

}  // namespace plateau::case_detail
