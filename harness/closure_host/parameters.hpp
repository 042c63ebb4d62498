#pragma once
// A closure's parameter values, checked against its declaration: the defaults, then the case
// file's [closure.NAME] table, then --set overrides. Any unknown name, wrong type or value out
// of range is a CaseError (exit code 2) naming the closure, the key, the value, what is allowed
// and where it was written (FILE:LINE:COLUMN, or the command-line option).

#include <filesystem>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "closures/closure.hpp"
#include "harness/case/case.hpp"

namespace plateau {

// One --set CLOSURE.KEY=VALUE. closure "closure" stands for the closure chosen with -c.
struct ParamOverride {
  std::string closure;
  std::string key;
  std::string value;
  std::string written;  // the option as given, for messages
};

// Parses "NAME.KEY=VALUE"; throws CaseError when the form is wrong.
[[nodiscard]] ParamOverride parse_override(std::string_view text);

// Values of every declared parameter of `info`. `table` is the case's [closure.NAME] table (or
// nullptr), `case_file` names the file in messages. Overrides for other closures are refused
// (a run has one closure), so are unknown keys.
[[nodiscard]] closure::Params resolve_params(const closure::Info& info, const ClosureChoice* table,
                                             const std::filesystem::path& case_file,
                                             std::span<const ParamOverride> overrides);
// Defaults only.
[[nodiscard]] closure::Params default_params(const closure::Info& info);

// Checks one textual value against its declaration; returns the value or throws CaseError with
// `where` (e.g. "cases/a.toml:12:7" or "--set eady.alpha=2") leading the message.
[[nodiscard]] closure::Params::Value parse_param_value(const closure::Info& info,
                                                       const closure::Param& p,
                                                       std::string_view text,
                                                       const std::string& where);

// For tables and messages.
[[nodiscard]] std::string kind_name(closure::ParamKind kind);
[[nodiscard]] std::string describe_default(const closure::Param& p);
// "[0.0001, 1]", "(0, 1]", "true|false", "deformation|fixed|rhines".
[[nodiscard]] std::string describe_range(const closure::Param& p);
// The allowed values in words: "a real number in [0.0001, 1], unit 1".
[[nodiscard]] std::string describe_allowed(const closure::Param& p);
// "alpha=0.015 k_max_m2_per_s=10000 ..." in declaration order: what a run's identity includes.
[[nodiscard]] std::string canonical_text(const closure::Info& info, const closure::Params& p);

// Shortest round-trip text of a number.
[[nodiscard]] std::string format_real(double v);

}  // namespace plateau
