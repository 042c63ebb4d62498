#include "harness/closure_host/plugin.hpp"

#include <dlfcn.h>

#include <algorithm>
#include <array>
#include <cstring>
#include <map>
#include <memory>
#include <mutex>
#include <stdexcept>
#include <vector>

#include "closures/closure.hpp"
#include "closures/plugin_abi.h"
#include "harness/case/case.hpp"
#include "harness/closure_host/registry.hpp"

namespace plateau {
namespace {

constexpr std::size_t kErrLen = 512;

// dlsym returns an object pointer; the entry point is a function. POSIX guarantees the
// conversion; a memcpy keeps it free of casts between object and function pointers.
plateau_closure_entry_fn as_entry(void* symbol) {
  plateau_closure_entry_fn fn = nullptr;
  static_assert(sizeof fn == sizeof symbol);
  std::memcpy(&fn, &symbol, sizeof fn);
  return fn;
}

std::string text_of(const char* s) { return s != nullptr ? std::string(s) : std::string(); }

struct Library {
  std::filesystem::path file;
  void* handle = nullptr;
  const plateau_closure_api* api = nullptr;
};

class PluginClosure final : public closure::Closure {
 public:
  PluginClosure(std::shared_ptr<const Library> lib, const closure::Setup& s,
                const std::vector<double>& values)
      : lib_(std::move(lib)), setup_(s) {
    c_setup_.nx = s.nx;
    c_setup_.ny = s.ny;
    c_setup_.n_layers = s.layers();
    c_setup_.dx = s.dx;
    c_setup_.dy = s.dy;
    c_setup_.y0 = s.y0;
    c_setup_.f0 = s.f0;
    c_setup_.beta = s.beta;
    c_setup_.thickness = setup_.thickness_m.data();
    c_setup_.reduced_gravity = setup_.reduced_gravity.data();
    c_setup_.deformation_radii = setup_.deformation_radii_m.data();
    c_setup_.dt = s.dt_s;
    c_setup_.viscosity = s.viscosity_m2_per_s;
    std::array<char, kErrLen> err{};
    if (api().create(&c_setup_, values.data(), &instance_, err.data(), err.size()) != 0 ||
        instance_ == nullptr) {
      throw std::invalid_argument("the plug-in refused to start: " + std::string(err.data()));
    }
  }
  ~PluginClosure() override {
    if (instance_ != nullptr) api().destroy(instance_);
  }
  PluginClosure(const PluginClosure&) = delete;
  PluginClosure& operator=(const PluginClosure&) = delete;

  [[nodiscard]] closure::Target target() const override {
    return api().target == PLATEAU_TARGET_STRETCHING ? closure::Target::stretching
                                                     : closure::Target::full_pv;
  }
  [[nodiscard]] double diffusivity_bound() const override {
    return api().diffusivity_bound(instance_);
  }
  [[nodiscard]] double wall_taper_width_m() const override {
    return api().wall_taper_width != nullptr ? api().wall_taper_width(instance_) : 0.0;
  }

  void fluxes(const closure::StateView& s, double dt_s, closure::Fluxes& out,
              closure::Scratch& /*scratch*/) const override {
    const std::size_t n = static_cast<std::size_t>(setup_.layers());
    std::vector<const double*> psi(n);
    std::vector<const double*> q(n);
    std::vector<double*> fx(n);
    std::vector<double*> fy(n);
    for (std::size_t k = 0; k < n; ++k) {
      psi[k] = s.psi[k].data();
      q[k] = s.q[k].data();
      fx[k] = out.fx[k].data();
      fy[k] = out.fy[k].data();
    }
    const plateau_state state{psi.data(), q.data(), s.wall_psi.data(), s.t};
    plateau_fluxes f{fx.data(), fy.data(), 0.0};
    std::array<char, kErrLen> err{};
    if (api().fluxes(instance_, &state, dt_s, &f, err.data(), err.size()) != 0) {
      throw std::runtime_error("closure '" + text_of(api().name) + "' (plug-in " +
                               lib_->file.string() + ") failed: " + std::string(err.data()));
    }
    out.k_max = f.k_max;
  }

  [[nodiscard]] std::vector<closure::FieldInfo> diagnostic_fields() const override {
    std::vector<closure::FieldInfo> d;
    if (api().diagnose == nullptr) return d;
    for (int m = 0; m < api().n_diagnostics; ++m) {
      const plateau_field_decl& f = api().diagnostics[m];
      closure::Placement p = closure::Placement::layer;
      if (f.placement == PLATEAU_PLACE_INTERFACE) p = closure::Placement::interface;
      if (f.placement == PLATEAU_PLACE_COLUMN) p = closure::Placement::column;
      d.push_back({text_of(f.name), text_of(f.units), text_of(f.long_name), p});
    }
    return d;
  }
  void diagnostics(const closure::StateView& s, const closure::Fluxes& /*applied*/,
                   std::span<closure::Field> out, closure::Scratch& /*scratch*/) const override {
    if (api().diagnose == nullptr) return;
    const std::size_t n = static_cast<std::size_t>(setup_.layers());
    std::vector<const double*> psi(n);
    std::vector<const double*> q(n);
    for (std::size_t k = 0; k < n; ++k) {
      psi[k] = s.psi[k].data();
      q[k] = s.q[k].data();
    }
    std::vector<double*> o;
    for (closure::Field& f : out) o.push_back(f.data());
    const plateau_state state{psi.data(), q.data(), s.wall_psi.data(), s.t};
    std::array<char, kErrLen> err{};
    if (api().diagnose(instance_, &state, o.data(), err.data(), err.size()) != 0) {
      throw std::runtime_error("closure '" + text_of(api().name) + "' (plug-in " +
                               lib_->file.string() +
                               ") diagnostics failed: " + std::string(err.data()));
    }
  }

 private:
  [[nodiscard]] const plateau_closure_api& api() const { return *lib_->api; }

  std::shared_ptr<const Library> lib_;
  closure::Setup setup_;
  plateau_setup c_setup_{};
  void* instance_ = nullptr;
};

[[noreturn]] void refuse(const std::filesystem::path& file, const std::string& what,
                         const std::string& allowed) {
  throw CaseError(file.string() + ": closure plug-in " + what + "; allowed: " + allowed);
}

bool name_ok(const std::string& s) {
  return !s.empty() && std::all_of(s.begin(), s.end(), [](char c) {
    return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '_' ||
           c == '-';
  });
}

closure::Param param_of(const std::filesystem::path& file, const plateau_param_decl& d) {
  const std::string name = text_of(d.name);
  if (!name_ok(name)) {
    refuse(file, "declares a parameter named '" + name + "'",
           "letters, digits, '_' and '-' (a TOML key)");
  }
  closure::Param p;
  p.name = name;
  p.unit = text_of(d.unit);
  p.meaning = text_of(d.meaning);
  p.is_tunable = d.tunable != 0;
  p.is_log_scale = d.log_scale != 0;
  switch (d.kind) {
    case PLATEAU_PARAM_REAL:
    case PLATEAU_PARAM_INTEGER:
      p.kind =
          d.kind == PLATEAU_PARAM_REAL ? closure::ParamKind::real : closure::ParamKind::integer;
      p.min = d.min_value;
      p.max = d.max_value;
      p.default_value = d.default_value;
      if (!(p.min <= p.default_value && p.default_value <= p.max)) {
        refuse(file, "parameter '" + name + "' has its default outside its range",
               "min_value <= default_value <= max_value");
      }
      if (p.is_log_scale && p.min <= 0.0) {
        refuse(file, "parameter '" + name + "' is log-scaled with min_value <= 0",
               "min_value > 0 for log_scale");
      }
      break;
    case PLATEAU_PARAM_BOOLEAN:
      p.kind = closure::ParamKind::boolean;
      p.default_value = d.default_value != 0.0 ? 1.0 : 0.0;
      p.max = 1.0;
      break;
    case PLATEAU_PARAM_CHOICE: {
      p.kind = closure::ParamKind::choice;
      if (d.choices == nullptr || d.n_choices < 1) {
        refuse(file, "choice parameter '" + name + "' has no choices", "n_choices >= 1");
      }
      for (int c = 0; c < d.n_choices; ++c) p.choices.push_back(text_of(d.choices[c]));
      const double idx = d.default_value;
      if (!(idx >= 0.0 && idx < d.n_choices) || idx != static_cast<double>(static_cast<int>(idx))) {
        refuse(file, "choice parameter '" + name + "' has a default index out of range",
               "an index 0..n_choices-1");
      }
      p.default_choice = p.choices[static_cast<std::size_t>(idx)];
      break;
    }
    default:
      refuse(file, "parameter '" + name + "' has kind " + std::to_string(d.kind),
             "PLATEAU_PARAM_REAL, _INTEGER, _BOOLEAN or _CHOICE");
  }
  return p;
}

struct Loaded {
  std::mutex mutex;
  std::map<std::filesystem::path, std::string> names;  // canonical file -> closure name
};
Loaded& loaded() {
  static Loaded l;
  return l;
}

}  // namespace

std::string load_closure_plugin(const std::filesystem::path& file) {
  std::error_code ec;
  const std::filesystem::path canonical = std::filesystem::canonical(file, ec);
  if (ec) refuse(file, "file cannot be read (" + ec.message() + ")", "an existing shared library");
  Loaded& l = loaded();
  const std::lock_guard<std::mutex> lock(l.mutex);
  if (const auto it = l.names.find(canonical); it != l.names.end()) return it->second;

  void* handle = dlopen(canonical.c_str(), RTLD_NOW | RTLD_LOCAL);
  if (handle == nullptr) {
    const char* why = dlerror();
    refuse(file, "cannot be loaded: " + text_of(why), "a shared library for this machine");
  }
  void* symbol = dlsym(handle, PLATEAU_CLOSURE_ENTRY_SYMBOL);
  if (symbol == nullptr) {
    dlclose(handle);
    refuse(file, std::string("has no entry point ") + PLATEAU_CLOSURE_ENTRY_SYMBOL,
           std::string("a library exporting extern \"C\" const plateau_closure_api* ") +
               PLATEAU_CLOSURE_ENTRY_SYMBOL + "(void) (closures/plugin_abi.h)");
  }
  const plateau_closure_api* api = as_entry(symbol)();
  auto fail = [&](const std::string& what, const std::string& allowed) {
    dlclose(handle);
    refuse(file, what, allowed);
  };
  if (api == nullptr) fail("entry point returned no table", "a pointer to a static table");
  if (api->abi_version != PLATEAU_CLOSURE_ABI_VERSION) {
    fail("was built for closure interface version " + std::to_string(api->abi_version) +
             ", this plateau has version " + std::to_string(PLATEAU_CLOSURE_ABI_VERSION),
         "rebuild the plug-in against this plateau's closures/plugin_abi.h");
  }
  if (api->struct_size < sizeof(plateau_closure_api)) {
    fail("table is " + std::to_string(api->struct_size) + " bytes, expected at least " +
             std::to_string(sizeof(plateau_closure_api)),
         "a table built from this plateau's closures/plugin_abi.h");
  }
  std::string name = text_of(api->name);
  if (!name_ok(name)) {
    fail("declares the closure name '" + name + "'", "letters, digits, '_' and '-'");
  }
  if (api->create == nullptr || api->destroy == nullptr || api->fluxes == nullptr ||
      api->diffusivity_bound == nullptr) {
    fail("table lacks create, destroy, fluxes or diffusivity_bound", "all four functions set");
  }
  if (api->target != PLATEAU_TARGET_FULL_PV && api->target != PLATEAU_TARGET_STRETCHING) {
    fail("declares target " + std::to_string(api->target),
         "PLATEAU_TARGET_FULL_PV or PLATEAU_TARGET_STRETCHING");
  }
  if (api->n_params < 0 || (api->n_params > 0 && api->params == nullptr)) {
    fail("declares " + std::to_string(api->n_params) + " parameters without a table",
         "n_params >= 0 with params pointing to them");
  }
  if (api->n_diagnostics < 0 || (api->n_diagnostics > 0 && api->diagnostics == nullptr)) {
    fail("declares diagnostics without a table", "n_diagnostics >= 0 with diagnostics set");
  }

  closure::Info info;
  info.name = name;
  info.summary = text_of(api->summary);
  info.source = text_of(api->source);
  info.down_gradient = api->down_gradient != 0;
  try {
    for (int m = 0; m < api->n_params; ++m) info.params.push_back(param_of(file, api->params[m]));
  } catch (...) {
    dlclose(handle);
    throw;
  }
  auto lib = std::make_shared<Library>();
  lib->file = canonical;
  lib->handle = handle;
  lib->api = api;
  const std::vector<closure::Param> decls = info.params;
  info.make = [lib, decls](const closure::Params& p,
                           const closure::Setup& s) -> std::unique_ptr<closure::Closure> {
    std::vector<double> values;
    for (const closure::Param& d : decls) {
      if (d.kind == closure::ParamKind::choice) {
        const auto it = std::find(d.choices.begin(), d.choices.end(), p.choice(d.name));
        values.push_back(static_cast<double>(it - d.choices.begin()));
      } else {
        values.push_back(p.real(d.name));
      }
    }
    return std::make_unique<PluginClosure>(lib, s, values);
  };
  try {
    register_closure(std::move(info), "plug-in " + canonical.string());
  } catch (...) {
    dlclose(handle);
    throw;
  }
  l.names[canonical] = name;
  return name;
}

}  // namespace plateau
