#include "harness/closure_host/parameters.hpp"

#include <algorithm>
#include <charconv>
#include <cmath>
#include <cstdint>
#include <system_error>

namespace plateau {
namespace {

bool is_name_char(char c) {
  return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '_' ||
         c == '-';
}

// Levenshtein distance, for "did you mean".
std::size_t distance(std::string_view a, std::string_view b) {
  std::vector<std::size_t> row(b.size() + 1);
  for (std::size_t j = 0; j <= b.size(); ++j) row[j] = j;
  for (std::size_t i = 1; i <= a.size(); ++i) {
    std::size_t diag = row[0];
    row[0] = i;
    for (std::size_t j = 1; j <= b.size(); ++j) {
      const std::size_t up = row[j];
      row[j] = std::min({row[j] + 1, row[j - 1] + 1, diag + (a[i - 1] == b[j - 1] ? 0U : 1U)});
      diag = up;
    }
  }
  return row[b.size()];
}

const closure::Param* find_param(const closure::Info& info, std::string_view key) {
  for (const closure::Param& p : info.params) {
    if (p.name == key) return &p;
  }
  return nullptr;
}

[[noreturn]] void fail(const std::string& where, const closure::Info& info, std::string_view key,
                       std::string_view value, std::string_view what, std::string_view allowed) {
  throw CaseError(where + ": closure '" + info.name + "', parameter '" + std::string(key) +
                  "' = " + std::string(value) + ": " + std::string(what) +
                  "; allowed: " + std::string(allowed));
}

[[noreturn]] void fail_unknown(const std::string& where, const closure::Info& info,
                               std::string_view key, std::string_view value) {
  std::string names;
  std::string near;
  std::size_t best = 3;  // suggest only near misses
  for (const closure::Param& p : info.params) {
    names += (names.empty() ? "" : ", ") + p.name;
    const std::size_t d = distance(key, p.name);
    if (d < best) {
      best = d;
      near = p.name;
    }
  }
  std::string what = "not a parameter of this closure";
  if (!near.empty()) what += " (did you mean '" + near + "'?)";
  fail(where, info, key, value, what,
       names.empty() ? std::string("no parameters (this closure takes none)") : names);
}

std::string table_location(const std::filesystem::path& file, int line, int column) {
  return file.string() + ":" + std::to_string(std::max(line, 1)) + ":" +
         std::to_string(std::max(column, 1));
}

}  // namespace

std::string format_real(double v) {
  char buf[64];
  const auto r = std::to_chars(buf, buf + sizeof buf, v);
  return {buf, r.ptr};
}

std::string kind_name(closure::ParamKind kind) {
  switch (kind) {
    case closure::ParamKind::real:
      return "real";
    case closure::ParamKind::integer:
      return "int";
    case closure::ParamKind::boolean:
      return "bool";
    case closure::ParamKind::choice:
      return "choice";
  }
  return "?";
}

std::string describe_default(const closure::Param& p) {
  switch (p.kind) {
    case closure::ParamKind::real:
      return format_real(p.default_value);
    case closure::ParamKind::integer:
      return std::to_string(static_cast<long long>(p.default_value));
    case closure::ParamKind::boolean:
      return p.default_value != 0.0 ? "true" : "false";
    case closure::ParamKind::choice:
      return p.default_choice;
  }
  return "";
}

std::string describe_range(const closure::Param& p) {
  switch (p.kind) {
    case closure::ParamKind::real:
      return std::string(p.min_open ? "(" : "[") + format_real(p.min) + ", " + format_real(p.max) +
             (p.max_open ? ")" : "]");
    case closure::ParamKind::integer:
      return "[" + std::to_string(static_cast<long long>(p.min)) + ", " +
             std::to_string(static_cast<long long>(p.max)) + "]";
    case closure::ParamKind::boolean:
      return "true|false";
    case closure::ParamKind::choice: {
      std::string s;
      for (const std::string& c : p.choices) s += (s.empty() ? "" : "|") + c;
      return s;
    }
  }
  return "";
}

std::string describe_allowed(const closure::Param& p) {
  const std::string unit = p.unit.empty() ? "" : ", unit " + p.unit;
  switch (p.kind) {
    case closure::ParamKind::real:
      return "a real number in " + describe_range(p) + unit;
    case closure::ParamKind::integer:
      return "an integer in " + describe_range(p) + unit;
    case closure::ParamKind::boolean:
      return "true or false";
    case closure::ParamKind::choice:
      return "one of " + describe_range(p);
  }
  return "";
}

closure::Params::Value parse_param_value(const closure::Info& info, const closure::Param& p,
                                         std::string_view text, const std::string& where) {
  closure::Params::Value v;
  const char* first = text.data();
  const char* last = text.data() + text.size();
  switch (p.kind) {
    case closure::ParamKind::real: {
      double x = 0.0;
      const auto r = std::from_chars(first, last, x);
      if (r.ec != std::errc() || r.ptr != last) {
        fail(where, info, p.name, text, "wrong type: not a number", describe_allowed(p));
      }
      if (!std::isfinite(x)) fail(where, info, p.name, text, "not finite", describe_allowed(p));
      if (!p.contains(x)) fail(where, info, p.name, text, "out of range", describe_allowed(p));
      v.number = x;
      return v;
    }
    case closure::ParamKind::integer: {
      std::int64_t x = 0;
      const auto r = std::from_chars(first, last, x);
      if (r.ec != std::errc() || r.ptr != last) {
        fail(where, info, p.name, text, "wrong type: not an integer", describe_allowed(p));
      }
      const auto xd = static_cast<double>(x);
      if (!p.contains(xd)) fail(where, info, p.name, text, "out of range", describe_allowed(p));
      v.number = xd;
      return v;
    }
    case closure::ParamKind::boolean:
      if (text == "true") {
        v.number = 1.0;
      } else if (text == "false") {
        v.number = 0.0;
      } else {
        fail(where, info, p.name, text, "wrong type: not a boolean", describe_allowed(p));
      }
      return v;
    case closure::ParamKind::choice:
      if (std::find(p.choices.begin(), p.choices.end(), text) == p.choices.end()) {
        fail(where, info, p.name, text, "not a known choice", describe_allowed(p));
      }
      v.text = std::string(text);
      return v;
  }
  return v;
}

ParamOverride parse_override(std::string_view text) {
  ParamOverride o;
  o.written = "--set " + std::string(text);
  const auto eq = text.find('=');
  const auto dot = text.find('.');
  auto bad = [&](const std::string& what) {
    throw CaseError(o.written + ": " + what +
                    "; allowed: CLOSURE.KEY=VALUE, e.g. eady.alpha=0.02, or closure.KEY=VALUE "
                    "for the closure chosen with -c");
  };
  if (eq == std::string_view::npos) bad("no '='");
  if (dot == std::string_view::npos || dot > eq) bad("no '.' between closure and key");
  o.closure = std::string(text.substr(0, dot));
  o.key = std::string(text.substr(dot + 1, eq - dot - 1));
  o.value = std::string(text.substr(eq + 1));
  auto name_ok = [](std::string_view s) {
    return !s.empty() && std::all_of(s.begin(), s.end(), is_name_char);
  };
  if (!name_ok(o.closure)) bad("'" + o.closure + "' is not a closure name");
  if (!name_ok(o.key)) bad("'" + o.key + "' is not a parameter name");
  if (o.value.empty()) bad("empty value");
  // TOML-style quotes around a choice are accepted and dropped.
  if (o.value.size() >= 2 && o.value.front() == '"' && o.value.back() == '"') {
    o.value = o.value.substr(1, o.value.size() - 2);
  }
  return o;
}

closure::Params default_params(const closure::Info& info) {
  closure::Params out;
  for (const closure::Param& p : info.params) {
    closure::Params::Value v;
    v.number = p.default_value;
    v.text = p.default_choice;
    out.set(p.name, v);
  }
  return out;
}

closure::Params resolve_params(const closure::Info& info, const ClosureChoice* table,
                               const std::filesystem::path& case_file,
                               std::span<const ParamOverride> overrides) {
  closure::Params out = default_params(info);
  if (table != nullptr) {
    for (const auto& [key, value] : table->params) {
      const std::string where =
          table_location(case_file, value.line, value.column) + ": [closure." + info.name + "]";
      const closure::Param* p = find_param(info, key);
      if (p == nullptr) fail_unknown(where, info, key, value.text);
      out.set(key, parse_param_value(info, *p, value.text, where));
    }
  }
  for (const ParamOverride& o : overrides) {
    if (o.closure != "closure" && o.closure != info.name) {
      throw CaseError(o.written + ": sets a parameter of closure '" + o.closure +
                      "', but this run uses closure '" + info.name + "'; allowed: " + info.name +
                      ".KEY=VALUE or closure.KEY=VALUE");
    }
    const closure::Param* p = find_param(info, o.key);
    if (p == nullptr) fail_unknown(o.written, info, o.key, o.value);
    out.set(o.key, parse_param_value(info, *p, o.value, o.written));
  }
  return out;
}

std::string canonical_text(const closure::Info& info, const closure::Params& p) {
  std::string s;
  for (const closure::Param& d : info.params) {
    if (!s.empty()) s += ' ';
    s += d.name + "=";
    switch (d.kind) {
      case closure::ParamKind::real:
        s += format_real(p.real(d.name));
        break;
      case closure::ParamKind::integer:
        s += std::to_string(p.integer(d.name));
        break;
      case closure::ParamKind::boolean:
        s += p.flag(d.name) ? "true" : "false";
        break;
      case closure::ParamKind::choice:
        s += p.choice(d.name);
        break;
    }
  }
  return s;
}

}  // namespace plateau
