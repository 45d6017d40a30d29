#!/usr/bin/env bash
# test_fuzz_regressions.sh - inputs the fuzz harnesses (tests/fuzz) found
# crashing, run through the runner in the default build: each must end in a
# clear error naming the file, never a crash.  (The sanitizer builds replay
# the same files as seeds in tests/ref/test_fuzz_smoke.sh.)
source "$(dirname "$0")/lib.sh"
set -e
corpus=$root/tests/fuzz/corpus

# HDF5 compound type whose member offset (2^25) lies beyond its 16 bytes:
# libhdf5 1.10 reads freed memory converting it.
cat >"$work/compound.lua" <<LUA
local pf = require "psiflight"
pf.load_wave("$corpus/h5/crash-compound-offset", {dataset = "psi2d", mass = 1.4e-25})
LUA
expect 1 "corrupt HDF5 compound offsets are a script error" -- "$runner" run "$work/compound.lua" --data "$corpus/h5"
has "does not hold complex numbers" "the error says the dataset is not complex"
has "crash-compound-offset" "the error names the file"

# CSV samples on two points: the guard's remedy converted infinity to size_t.
# Grids now need at least 4 points per axis, so the file is refused with a
# clear script error before any guard runs.
cat >"$work/twopoint.lua" <<LUA
local pf = require "psiflight"
local w = pf.load_wave("$corpus/csv/crash-guard-2point", {mass = 1.4e-25})
print(w:grid():points(1))
LUA
cp "$corpus/csv/crash-guard-2point" "$work/two.csv"
sed -i "s|$corpus/csv/crash-guard-2point|$work/two.csv|" "$work/twopoint.lua"
expect 1 "two-point CSV samples are a script error" -- "$runner" run "$work/twopoint.lua"
has "twopoint.lua:2: load_wave: points on axis 1 must be at least 4, got 2" "the error names the line and the point count"
# Module search over many folders: the "tried" message outgrew Lua's buffer
# while a folder name sat on the stack, and the buffer was used after free
# (the sanitizer builds see it; the default build may only print garbage).
mkdir -p "$work/mods"
many=$(for i in $(seq 200); do printf '%s:' "$work/mods"; done)
printf 'require "not_there"\n' >"$work/many.lua"
expect 1 "a missing module over 200 folders is a script error" -- env PSIFLIGHT_RECIPE_PATH="$many" "$runner" run "$work/many.lua"
has "module 'not_there' not found" "the error names the module"
[ "$(printf '%s' "$err" | grep -c "no file '$work/mods/not_there.lua'")" -eq 200 ] && ok "every folder is listed as tried" ||
  fail "tried folders: $(printf '%s' "$err" | grep -c "no file '$work/mods/not_there.lua'") of 200"
echo "ok $checks checks"
