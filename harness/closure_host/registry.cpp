#include "harness/closure_host/registry.hpp"

#include <algorithm>
#include <deque>
#include <mutex>
#include <stdexcept>

#include "harness/case/case.hpp"

namespace plateau {
namespace {

struct Entry {
  closure::Info info;
  std::string origin;
};

// Built in during static initialisation (one thread), added to by plug-in loading; the deque
// keeps every Info at its address.
struct Store {
  std::mutex mutex;
  std::deque<Entry> entries;
  std::vector<std::string> duplicates;  // built-in names registered twice
};

Store& store() {
  static Store s;
  return s;
}

const Entry* find_locked(Store& s, std::string_view name) {
  for (const Entry& e : s.entries) {
    if (e.info.name == name) return &e;
  }
  return nullptr;
}

void check_duplicates_locked(const Store& s) {
  if (s.duplicates.empty()) return;
  std::string names;
  for (const std::string& d : s.duplicates) names += (names.empty() ? "" : ", ") + d;
  throw std::logic_error("closures registered twice under the same name: " + names);
}

}  // namespace

namespace closure {

const Params::Value& Params::at(std::string_view name) const {
  const auto it = values_.find(std::string(name));
  if (it == values_.end()) {
    throw std::out_of_range("closure parameter '" + std::string(name) + "' has no value");
  }
  return it->second;
}

Registrar::Registrar(Info info) {
  Store& s = store();
  const std::lock_guard<std::mutex> lock(s.mutex);
  if (find_locked(s, info.name) != nullptr) {
    s.duplicates.push_back(info.name);
    return;
  }
  s.entries.push_back({std::move(info), "built-in"});
}

}  // namespace closure

std::vector<const closure::Info*> registered_closures() {
  Store& s = store();
  const std::lock_guard<std::mutex> lock(s.mutex);
  check_duplicates_locked(s);
  std::vector<const closure::Info*> out;
  for (const Entry& e : s.entries) out.push_back(&e.info);
  std::sort(out.begin(), out.end(),
            [](const closure::Info* a, const closure::Info* b) { return a->name < b->name; });
  return out;
}

const closure::Info* find_registered_closure(std::string_view name) {
  Store& s = store();
  const std::lock_guard<std::mutex> lock(s.mutex);
  check_duplicates_locked(s);
  const Entry* e = find_locked(s, name);
  return e != nullptr ? &e->info : nullptr;
}

std::string registered_closure_names() {
  std::string out;
  for (const closure::Info* i : registered_closures()) out += (out.empty() ? "" : ", ") + i->name;
  return out;
}

const closure::Info& register_closure(closure::Info info, const std::string& origin) {
  Store& s = store();
  const std::lock_guard<std::mutex> lock(s.mutex);
  if (const Entry* e = find_locked(s, info.name)) {
    throw CaseError(
        origin + ": closure name '" + info.name + "' is already taken by the " +
        (e->origin == "built-in" ? std::string("built-in closure") : "closure of " + e->origin) +
        "; allowed: a name no other closure uses (rename the plug-in's closure)");
  }
  s.entries.push_back({std::move(info), origin});
  return s.entries.back().info;
}

std::string closure_origin(std::string_view name) {
  Store& s = store();
  const std::lock_guard<std::mutex> lock(s.mutex);
  const Entry* e = find_locked(s, name);
  return e != nullptr ? e->origin : std::string();
}

}  // namespace plateau
