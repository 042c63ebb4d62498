# shellcheck shell=bash disable=SC2034
# Shared by the scripts in this folder; sourced, never run. Puts the shell at the repository root.
#
# Environment (all optional):
#   PLATEAU_JOBS                 parallel build, test and tidy jobs (default 2: the machines have 2 cores)
#   PLATEAU_BUILD_DIR            the Release build (default build)
#   PLATEAU_SANITIZE_BUILD_DIR   the ASan+UBSan build (default build-sanitize)

PLATEAU_ROOT="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
cd "$PLATEAU_ROOT" || exit 2

JOBS="${PLATEAU_JOBS:-2}"
BUILD_DIR="${PLATEAU_BUILD_DIR:-build}"
SANITIZE_BUILD_DIR="${PLATEAU_SANITIZE_BUILD_DIR:-build-sanitize}"

# One place for the Release configuration, so that test, demo, tidy and bench share one build
# directory without flipping compile flags (and so rebuilding everything) between them.
# Extra -D arguments go last and win.
configure_release() {
  local dir="$1"
  shift
  cmake -S . -B "$dir" -DCMAKE_BUILD_TYPE=Release -DPLATEAU_WERROR=ON -DPLATEAU_SANITIZE=OFF \
    -DPLATEAU_BENCHMARKS=ON "$@"
}

# The project's own C++ files, one per line, relative to the root: every tracked file plus the
# untracked, not ignored ones under harness/, closures/ and tests/; .cpp, .hpp and .h only (so
# not version.hpp.in, a CMake template).
list_cxx_files() {
  if git rev-parse --is-inside-work-tree >/dev/null 2>&1; then
    {
      git ls-files --cached
      git ls-files --others --exclude-standard -- harness closures tests
    } | grep -E '\.(cpp|hpp|h)$' | sort -u | while IFS= read -r f; do
      [[ -f "$f" ]] && printf '%s\n' "$f"
    done
  else
    find harness closures tests -type f \( -name '*.cpp' -o -name '*.hpp' -o -name '*.h' \) \
      2>/dev/null | sed 's|^\./||' | sort
  fi
}

find_clang_format() {
  local c
  for c in "${PLATEAU_CLANG_FORMAT:-}" clang-format-14 clang-format; do
    if [[ -n "$c" ]] && command -v "$c" >/dev/null 2>&1; then
      printf '%s\n' "$c"
      return 0
    fi
  done
  echo "clang-format not found: run scripts/install-deps" >&2
  return 2
}
