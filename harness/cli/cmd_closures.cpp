// plateau closures: the registry as an aligned table (every closure, its formula and source,
// then one row per parameter: kind, unit, default, range, tuning, meaning), or as JSON with
// --json [FILE] (stdout without a file). --plugin FILE lists an external closure too.

#include <algorithm>
#include <filesystem>
#include <iostream>
#include <memory>
#include <string>
#include <vector>

#include <CLI/CLI.hpp>
#include <nlohmann/json.hpp>

#include "harness/cli/cli.hpp"
#include "harness/closure_host/parameters.hpp"
#include "harness/closure_host/plugin.hpp"
#include "harness/closure_host/registry.hpp"
#include "harness/io/atomic_file.hpp"

namespace plateau::cli {
namespace {

struct ClosuresOptions {
  std::vector<std::filesystem::path> plugins;
  std::string json_path;
  bool json = false;
};

nlohmann::json closures_json() {
  nlohmann::json list = nlohmann::json::array();
  for (const closure::Info* info : registered_closures()) {
    nlohmann::json params = nlohmann::json::array();
    for (const closure::Param& p : info->params) {
      nlohmann::json j;
      j["name"] = p.name;
      j["kind"] = kind_name(p.kind);
      j["unit"] = p.unit;
      j["meaning"] = p.meaning;
      j["tunable"] = p.is_tunable;
      j["log_scale"] = p.is_log_scale;
      switch (p.kind) {
        case closure::ParamKind::real:
        case closure::ParamKind::integer:
          j["default"] = p.default_value;
          j["min"] = p.min;
          j["max"] = p.max;
          j["min_open"] = p.min_open;
          j["max_open"] = p.max_open;
          break;
        case closure::ParamKind::boolean:
          j["default"] = p.default_value != 0.0;
          break;
        case closure::ParamKind::choice:
          j["default"] = p.default_choice;
          j["choices"] = p.choices;
          break;
      }
      params.push_back(std::move(j));
    }
    list.push_back({{"name", info->name},
                    {"summary", info->summary},
                    {"source", info->source},
                    {"origin", closure_origin(info->name)},
                    {"down_gradient", info->down_gradient},
                    {"parameters", std::move(params)}});
  }
  return {{"closures", std::move(list)}};
}

void print_table(std::ostream& out) {
  const std::vector<const closure::Info*> all = registered_closures();
  const std::vector<std::string> head = {"parameter", "kind", "unit",   "default",
                                         "range",     "tune", "meaning"};
  std::vector<std::vector<std::string>> rows;
  for (const closure::Info* info : all) {
    for (const closure::Param& p : info->params) {
      rows.push_back({p.name, kind_name(p.kind), p.unit.empty() ? "-" : p.unit, describe_default(p),
                      describe_range(p), p.is_tunable ? (p.is_log_scale ? "log" : "yes") : "-",
                      p.meaning});
    }
  }
  std::vector<std::size_t> width(head.size());
  for (std::size_t c = 0; c < head.size(); ++c) width[c] = head[c].size();
  for (const auto& r : rows) {
    for (std::size_t c = 0; c + 1 < r.size(); ++c) width[c] = std::max(width[c], r[c].size());
  }
  auto line = [&](const std::vector<std::string>& r) {
    out << "    ";
    for (std::size_t c = 0; c < r.size(); ++c) {
      out << r[c];
      if (c + 1 < r.size()) out << std::string(width[c] - r[c].size() + 2, ' ');
    }
    out << '\n';
  };
  out << all.size() << " closures (" << registered_closure_names() << ")\n\n";
  line(head);
  std::size_t at = 0;
  for (const closure::Info* info : all) {
    const std::string origin = closure_origin(info->name);
    out << info->name << ": " << info->summary << '\n'
        << "  source: " << info->source << (origin == "built-in" ? "" : " [" + origin + "]")
        << '\n';
    if (info->params.empty()) out << "    (no parameters)\n";
    for (std::size_t m = 0; m < info->params.size(); ++m) line(rows[at++]);
    out << '\n';
  }
  out << "Set a parameter in a case file under [closure.NAME], or with --set NAME.KEY=VALUE.\n";
}

int run_closures(const ClosuresOptions& o, const GlobalOptions& global) {
  for (const auto& p : o.plugins) (void)load_closure_plugin(p);
  if (o.json) {
    const std::string text = closures_json().dump(2) + "\n";
    if (o.json_path.empty() || o.json_path == "-") {
      std::cout << text;
    } else {
      io::write_text_atomic(o.json_path, text);
      if (!global.quiet) {
        print_table(std::cout);
        std::cout << "\n  wrote   " << o.json_path << '\n';
      }
    }
    return kExitOk;
  }
  print_table(std::cout);
  return kExitOk;
}

}  // namespace

void add_closures_command(CLI::App& app, Invocation& invocation) {
  auto opts = std::make_shared<ClosuresOptions>();
  CLI::App* cmd = app.add_subcommand(
      "closures", "the closure registry: names, parameters, units, defaults, ranges");
  CLI::Option* json =
      cmd->add_option("--json", opts->json_path,
                      "print the registry as JSON (to FILE if given, else to stdout)")
          ->expected(0, 1);
  cmd->add_option("--plugin", opts->plugins, "also load an external closure (shared library)")
      ->check(CLI::ExistingFile);
  cmd->callback([opts, json, &invocation]() {
    opts->json = json->count() > 0;
    invocation.exit_code = run_closures(*opts, invocation.global);
  });
}

}  // namespace plateau::cli
