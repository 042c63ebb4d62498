#!/usr/bin/env bash
# The README's external-closure walk-through, run as a user would: cut the C example out of
# README.md, build it with the command the README gives, list it, and run it on the tiny case.
#
#   readme_plugin.sh SOURCE_DIR PLATEAU_EXECUTABLE WORK_DIR
set -euo pipefail
src="$1"
plateau="$2"
work="$3"
rm -rf "$work"
mkdir -p "$work"
awk '/<!-- plugin-example:begin -->/ { on = 1; next }
     /<!-- plugin-example:end -->/ { on = 0 }
     on && /^```c$/ { code = 1; next }
     on && /^```$/ { code = 0 }
     on && code { print }' "$src/README.md" >"$work/my_closure.c"
[[ -s "$work/my_closure.c" ]] || { echo "no plug-in example between the README markers" >&2; exit 1; }
# The README's build line, with warnings on so that the example stays clean.
(cd "$src" && cc -std=c99 -O2 -fPIC -shared -I. -Wall -Wextra -Werror "$work/my_closure.c" \
  -o "$work/libmy_closure.so")
"$plateau" closures --plugin "$work/libmy_closure.so" >"$work/closures.txt"
grep -q '^my_constant: F = -K grad q, one K' "$work/closures.txt"
grep -q 'k_m2_per_s .*m2 s-1 .*300' "$work/closures.txt"
"$plateau" --quiet run "$src/cases/tiny_2layer.toml" --plugin "$work/libmy_closure.so" \
  -c my_constant --set my_constant.k_m2_per_s=500 --out "$work/out"
[[ -s "$work/out/run-my_constant.nc" ]]
echo "README plug-in example: built, listed and run ($work)"
