#pragma once
// External closures: a shared library exporting plateau_closure_entry() (closures/plugin_abi.h)
// is opened with dlopen, its table checked (interface version, size, declarations), and its
// closure added to the registry under the name it declares. The library stays loaded for the
// life of the process.

#include <filesystem>
#include <string>

namespace plateau {

// Loads `file` and registers its closure; returns the closure's name. Loading the same file
// twice registers it once. Throws CaseError (exit code 2) when the file cannot be opened, has no
// entry point, was built for another interface version, declares something invalid, or brings
// a name already taken.
std::string load_closure_plugin(const std::filesystem::path& file);

}  // namespace plateau
