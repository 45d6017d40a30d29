#!/usr/bin/env bash
# run-all.sh BUILD - runs every test suite and prints one closing line
# "N passed, N failed" (each suite counts once; cmocka suites also print their
# own per-test lines).  Suites:
#   BUILD/tests/test_*        cmocka unit tests of the C core
#   tests/lua/test_*.lua      Lua API tests, run through the runner
#   tests/ref/test_*.sh       checks against outside references that need
#                             other tools (numpy/scipy, h5py, h5dump, ...)
#   tests/runner/test_*.sh    command-line behaviour of the runner (parameters,
#                             sandbox, modules, sweeps, MPI)
set -u
build=${1:-build}
root=$(cd "$(dirname "$0")/.." && pwd)
runner="$root/$build/psiflight"
# A private wisdom file, so tests never depend on (or change) a user's cache.
export PSIFLIGHT_WISDOM="$root/$build/test-wisdom"
export PSIFLIGHT_ROOT="$root" PSIFLIGHT_BUILD="$root/$build" PSIFLIGHT_RUNNER="$runner"
passed=0 failed=0 failures=()

run_suite() { # name, command...
  local name=$1; shift
  local log; log=$(mktemp)
  if "$@" >"$log" 2>&1; then
    passed=$((passed + 1)); printf 'PASS %s\n' "$name"
    grep -E '^\s*(ok|note)\b' "$log" | sed 's/^/     /' | head -200
  else
    failed=$((failed + 1)); failures+=("$name"); printf 'FAIL %s\n' "$name"
    sed 's/^/     | /' "$log" | tail -60
  fi
  rm -f "$log"
}

for t in "$root/$build"/tests/test_*; do
  [ -x "$t" ] || continue
  run_suite "unit/$(basename "$t")" "$t"
done
for t in "$root"/tests/lua/test_*.lua; do
  [ -e "$t" ] || continue
  # Each Lua test gets its own output folder (its manifest lands there too).
  out="$root/$build/test-out/$(basename "$t" .lua)"
  rm -rf "$out"
  run_suite "lua/$(basename "$t")" "$runner" run "$t" --out "$out"
done
for t in "$root"/tests/runner/test_*.sh; do
  [ -e "$t" ] || continue
  run_suite "runner/$(basename "$t")" bash "$t"
done
for t in "$root"/tests/ref/test_*.sh; do
  [ -e "$t" ] || continue
  run_suite "ref/$(basename "$t")" bash "$t"
done

echo
[ ${#failures[@]} -gt 0 ] && printf 'failed suites: %s\n' "${failures[*]}"
echo "$passed passed, $failed failed"
[ "$failed" -eq 0 ]
