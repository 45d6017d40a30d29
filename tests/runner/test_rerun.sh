#!/usr/bin/env bash
# test_rerun.sh - the run contract around the output folder (docs/runner.md,
# "Reruns and the output folder"): --out is checked before the script starts,
# a rerun into a folder that holds a run is refused before computing and
# leaves that run's files and manifest untouched, a failed run never replaces
# an earlier manifest without --overwrite, and --overwrite replaces the run.
# The flagship example's --set changes its result.
source "$(dirname "$0")/lib.sh"
set -e
cd "$work"
cat >"$work/s.lua" <<'LUA'
local pf = require "psiflight"
local p = pf.parameters{ n = {default = 3, help = "table length"} }
print("COMPUTING")
local xs = {}
for i = 1, p.n do xs[i] = i end
pf.write_csv("table.csv", {{"i", "", xs}})
LUA
mkdir -p "$work/sub"

# --out with '..' is refused before the script runs and creates nothing.
cd "$work/sub"
expect 4 "--out ../x refused by the sandbox rule" -- "$runner" run "$work/s.lua" --out ../x
cd "$work"
case "$out" in *COMPUTING*) fail "the script ran before --out was refused";; esac
ok "the script did not start"
[ ! -e "$work/x" ] || fail "no folder was created"
ok "no folder was created"
has "'..'" "the message names the rule"
cd "$work/sub"
expect 4 "sweep --out ../y refused before any point" -- "$runner" sweep "$work/s.lua" --vary n=1,2 --out ../y
cd "$work"
[ ! -e "$work/y" ] || fail "the sweep created its folder"
ok "the refused sweep created nothing"
# An --out that is a file cannot be a folder: usage error before the script.
: >"$work/plainfile"
expect 2 "--out naming a file" -- "$runner" run "$work/s.lua" --out "$work/plainfile"
case "$out" in *COMPUTING*) fail "the script ran before --out was refused";; esac
ok "the script did not start (--out is a file)"

# A good run, then a rerun without --overwrite: refused before computing,
# files and manifest byte-for-byte as they were.
expect 0 "first run" -- "$runner" run "$work/s.lua" --out "$work/r"
cp -p "$work/r/manifest.json" "$work/manifest.before"
cp -p "$work/r/table.csv" "$work/table.before"
expect 2 "rerun without --overwrite is refused" -- "$runner" run "$work/s.lua" --out "$work/r" --set n=5
has "already holds a run" "says the folder holds a run"
has "--overwrite" "says how to replace it"
case "$out" in *COMPUTING*) fail "the refused rerun computed";; esac
ok "the refused rerun computed nothing"
cmp -s "$work/r/manifest.json" "$work/manifest.before" || fail "the earlier manifest is untouched [cmp]"
ok "the earlier manifest is untouched [cmp]"
cmp -s "$work/r/table.csv" "$work/table.before" || fail "the earlier output is untouched [cmp]"
ok "the earlier output is untouched [cmp]"
[ "$(ls -A "$work/r" | wc -l)" -eq 2 ] || fail "nothing was added to the folder"
ok "nothing was added to the folder"

# --overwrite replaces the run, and the new manifest says so.
expect 0 "rerun with --overwrite" -- "$runner" run "$work/s.lua" --out "$work/r" --set n=5 --overwrite
grep -q '"n":	"5"' "$work/r/manifest.json" || fail "the manifest describes the new run"
ok "the manifest describes the new run"
[ "$(wc -l <"$work/r/table.csv")" -eq 6 ] || fail "the output was replaced"
ok "the output was replaced"

# Without --out, the default folder: a failed rerun (its write is refused)
# keeps the earlier run's manifest.
expect 0 "run into the default folder" -- "$runner" run "$work/s.lua"
cp "$work/out/s/manifest.json" "$work/default.before"
expect 1 "rerun into the default folder fails at the write" -- "$runner" run "$work/s.lua" --set n=4
has "exists" "the writer says the file exists"
has "earlier run's manifest" "says the earlier manifest is kept"
cmp -s "$work/out/s/manifest.json" "$work/default.before" || fail "the failed rerun left the earlier manifest untouched [cmp]"
ok "the failed rerun left the earlier manifest untouched [cmp]"

# --set changes what the flagship computes (it declares its parameters).
flag="$root/examples/release_tof.lua"
expect 0 "flagship --help" -- "$runner" run "$flag" --help
has "  tof " "the flagship declares tof"
case "$out" in *"declares no parameters"*|*sigma*) fail "flagship --help computed or said nothing is declared";; esac
ok "flagship --help only lists the parameters"
expect 0 "flagship with --set tof=3ms" -- "$runner" run "$flag" --set tof=3ms --planning estimate --out "$work/f3"
/usr/bin/python3 - "$work/f3/manifest.json" <<'PY' || fail "flagship --set tof=3ms flies 3 ms (manifest result tof)"
import json, sys
m = json.load(open(sys.argv[1]))
sys.exit(0 if abs(m["results"]["tof"]["value"] - 3e-3) < 1e-15 and m["parameters"] == {"tof": "3ms"} else 1)
PY
ok "flagship --set tof=3ms flies 3 ms (manifest result tof)"
expect 2 "flagship refuses a parameter it does not have" -- "$runner" run "$flag" --set tof_ms=3 --planning estimate
has "unknown parameter 'tof_ms'" "names the unknown parameter"
# Every example declares its parameters (people copy them): --help lists
# them and computes nothing.
n=0
for ex in "$root"/examples/*.lua "$root"/examples/recipes/*.lua; do
  expect 0 "$(basename "$ex") --help" -- "$runner" run "$ex" --help
  has "Parameters of" "$(basename "$ex") declares its parameters"
  case "$out" in *"declares no parameters"*) fail "$(basename "$ex") declares no parameters";; esac
  n=$((n + 1))
done
[ "$n" -ge 12 ] || fail "only $n examples found"
ok "all $n examples declare parameters"
done_checks
