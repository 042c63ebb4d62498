#pragma once
// The closure registry: every built-in closure (registered by its own static Registrar) and
// every plug-in loaded in this process, by name. Names are unique; a plug-in that brings a
// name already taken is refused.

#include <memory>
#include <string>
#include <string_view>
#include <vector>

#include "closures/closure.hpp"

namespace plateau {

// Every closure, sorted by name. Throws std::logic_error if two built-ins share a name.
[[nodiscard]] std::vector<const closure::Info*> registered_closures();
// The closure of that name, or nullptr.
[[nodiscard]] const closure::Info* find_registered_closure(std::string_view name);
// "constant, eady, eddy_energy, ..." for messages.
[[nodiscard]] std::string registered_closure_names();
// Adds a closure after start-up (a plug-in). Throws CaseError naming both origins on a clash.
const closure::Info& register_closure(closure::Info info, const std::string& origin);
// Where a closure came from: "built-in" or the plug-in's file.
[[nodiscard]] std::string closure_origin(std::string_view name);

}  // namespace plateau
