# Static checks (DEVELOPERS.md, habits):
#   tidy          clang-tidy (.clang-tidy) over the project's .cpp files under harness/ and
#                 closures/, with this build's compile_commands.json; fails on any finding.
#                 scripts/run-tidy does the work: run-clang-tidy when the clang-tidy package has
#                 it, else a parallel loop; -Wno-unknown-warning-option and -Wno-error are added
#                 to g++'s compile commands; a list of the findings comes at the end.
#   format-check  scripts/check-format: clang-format --dry-run --Werror over the project's files.
# Neither needs a compiled build: configuring is enough (version.hpp is generated at configure).

set(PLATEAU_TIDY_JOBS 2 CACHE STRING "Parallel clang-tidy processes for the tidy target")

add_custom_target(tidy
  COMMAND ${CMAKE_SOURCE_DIR}/scripts/run-tidy -p ${CMAKE_BINARY_DIR} -j ${PLATEAU_TIDY_JOBS}
  WORKING_DIRECTORY ${CMAKE_SOURCE_DIR}
  COMMENT "clang-tidy over harness/ and closures/ (-j${PLATEAU_TIDY_JOBS})"
  USES_TERMINAL
  VERBATIM)

add_custom_target(format-check
  COMMAND ${CMAKE_SOURCE_DIR}/scripts/check-format
  WORKING_DIRECTORY ${CMAKE_SOURCE_DIR}
  COMMENT "clang-format check (scripts/check-format)"
  USES_TERMINAL
  VERBATIM)
