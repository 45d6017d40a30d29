#!/usr/bin/env bash
# test_params.sh - declared parameters: --help listing, --set with the unit
# rule (docs/runner.md), and the errors for unknown names and bad values.
# Unit factors: SI prefixes (BIPM SI Brochure, 9th ed.); eV from the exact
# elementary charge (CODATA 2018 / 2019 SI).
source "$(dirname "$0")/lib.sh"
set -e
cat >"$work/p.lua" <<'LUA'
local pf = require "psiflight"
local p = pf.parameters{
  tof = {default = 18, unit = "ms", help = "time of flight after release"},
  depth = {default = "2.5ueV", unit = "neV", help = "trap depth"},
  detuning = {default = 1.2, unit = "kHz", help = "Raman detuning"},
  points = {default = 256, help = "grid points", min = 16, max = 4096},
  species = {default = "Na23", help = "atom", choices = {"Na23", "K40"}},
  camera = {default = true, help = "take a picture"},
}
for _, k in ipairs{"tof", "depth", "detuning", "points", "species", "camera"} do
  print(string.format("%s=%s", k, type(p[k]) == "number" and string.format("%.17g", p[k]) or tostring(p[k])))
end
LUA
expect 0 "--help exits 0" -- "$runner" run "$work/p.lua" --help
for name in tof depth detuning points species camera; do has "  $name " "--help lists $name"; done
has "18ms" "--help shows the default with its unit"
has "time of flight after release" "--help shows the help text"
expect 0 "defaults" -- "$runner" run "$work/p.lua"
# Expected values computed independently by Debian's Python (binary64, %.17g).
py() { /usr/bin/python3 -c "print('%.17g' % ($1))"; }
has "tof=$(py '18*1e-3')" "default 18 ms is 18 x 1e-3 s"
has "depth=$(py '2.5*(1e-6*1.602176634e-19)')" "default '2.5ueV' is 2.5e-6 x 1.602176634e-19 J (exact e, CODATA 2018)"
has "detuning=$(py '1.2*1e3')" "1.2 kHz is 1200 Hz"
expect 0 "--set with suffixes" -- "$runner" run "$work/p.lua" --set tof=2.5us --set detuning=3MHz \
  --set points=100 --set species=K40 --set camera=no
has "tof=$(py '2.5*1e-6')" "2.5us is 2.5e-6 s"
has "detuning=$(py '3*1e6')" "3MHz is 3e6 Hz"
has "points=100" "integer parameter"
has "species=K40" "choice parameter"
has "camera=false" "boolean 'no'"
expect 0 "bare number in the declared unit" -- "$runner" run "$work/p.lua" --set tof=5
has "tof=$(py '5*1e-3')" "bare 5 for a ms parameter is 5 ms"
expect 2 "unknown name is a usage error" -- "$runner" run "$work/p.lua" --set tofu=3
has "unknown parameter 'tofu'" "names the unknown parameter"
has "camera, depth, detuning, points, species, tof" "lists the valid names"
expect 2 "unit of another quantity" -- "$runner" run "$work/p.lua" --set tof=3mm
has "is a length, but 'tof' is a time" "says which quantities clash"
expect 2 "malformed number" -- "$runner" run "$work/p.lua" --set tof=fast
has "does not start with a decimal number" "says why the value is malformed"
has "camera, depth, detuning" "malformed value lists the valid names"
expect 2 "unknown unit" -- "$runner" run "$work/p.lua" --set tof=3fortnights
has "unknown unit 'fortnights'" "names the unknown unit"
expect 2 "integer expected" -- "$runner" run "$work/p.lua" --set points=3.5
expect 2 "range check" -- "$runner" run "$work/p.lua" --set points=8
has "outside the allowed range" "range error"
expect 2 "choice check" -- "$runner" run "$work/p.lua" --set species=Xe
has "must be one of Na23, K40" "lists the choices"
expect 2 "nan is not a number here" -- "$runner" run "$work/p.lua" --set tof=nan
cat >"$work/bad.lua" <<'LUA'
local pf = require "psiflight"
pf.parameters{ x = {default = 1, unit = "parsec", help = "h"} }
LUA
expect 1 "a declaration with an unknown unit is a script error" -- "$runner" run "$work/bad.lua"
has "bad.lua:2:" "the declaration error names the script line"
cat >"$work/nohelp.lua" <<'LUA'
local pf = require "psiflight"
pf.parameters{ x = {default = 1} }
LUA
expect 1 "every parameter needs help text" -- "$runner" run "$work/nohelp.lua"
has "needs a one-line help" "says what is missing"
cat >"$work/twice.lua" <<'LUA'
local pf = require "psiflight"
pf.parameters{ a = {default = 1, help = "first"} }
pf.parameters{ b = {default = 2, help = "second"} }
LUA
expect 1 "parameters are declared once" -- "$runner" run "$work/twice.lua"
has "already declared at" "says where they were declared"
cat >"$work/legacy.lua" <<'LUA'
local pf = require "psiflight"
print("legacy tof_ms=" .. tostring(pf.params.tof_ms) .. " " .. math.type(pf.params.tof_ms))
LUA
expect 0 "scripts without a declaration still see --set in pf.params" -- "$runner" run "$work/legacy.lua" --set tof_ms=5
has "legacy tof_ms=5 integer" "raw --set value converted to a number"

# --help never computes: it stops at pf.parameters, and a script that never
# declares parameters is stopped at its first engine computation.
cat >"$work/declared_late.lua" <<'LUA'
local pf = require "psiflight"
local p = pf.parameters{ tof = {default = 2, unit = "ms", help = "flight time"} }
print("COMPUTED")
local g = pf.grid{points = 64, span = 1e-5}
LUA
expect 0 "--help on a declaring script" -- "$runner" run "$work/declared_late.lua" --help
has "flight time" "the listing is printed"
case "$out" in *COMPUTED*|*"declares no parameters"*) fail "--help went past pf.parameters: $out";; esac
ok "--help stops at pf.parameters (nothing after it ran, no 'declares no parameters')"
cat >"$work/undeclared.lua" <<'LUA'
local pf = require "psiflight"
local g = pf.grid{points = 64, span = 1e-5}
print("COMPUTED")
pf.write_csv("never.csv", {{"x", "m", {1}}})
LUA
expect 0 "--help on a script without a declaration" -- "$runner" run "$work/undeclared.lua" --help --out "$work/u"
has "declares no parameters" "says the script declares no parameters"
case "$out" in *COMPUTED*) fail "--help ran the script's computation: $out";; esac
[ ! -e "$work/u/never.csv" ] && [ ! -e "$work/u/manifest.json" ] || fail "--help computed nothing and wrote nothing"
ok "--help computed nothing and wrote nothing"
cat >"$work/writes_first.lua" <<'LUA'
local pf = require "psiflight"
pf.write_csv("early.csv", {{"x", "m", {1}}})
LUA
expect 0 "--help on a script that writes before any grid" -- "$runner" run "$work/writes_first.lua" --help --out "$work/w"
[ ! -e "$work/w/early.csv" ] || fail "--help stops before the first file write"
ok "--help stops before the first file write"

# A --set that the script neither declares nor reads is an error, not a
# silently ignored value.
cat >"$work/fallback.lua" <<'LUA'
local pf = require "psiflight"
print("tof_ms", tonumber(pf.params.tof_ms) or 5)
LUA
expect 2 "--set of a name a legacy script never reads" -- "$runner" run "$work/fallback.lua" --set tof=3ms --out "$work/l"
has "--set tof=3ms: the script neither declares 'tof'" "names the ignored --set and its value"
grep -q '"status":	"failed"' "$work/l/manifest.json" || fail "the manifest records the run as failed"
ok "the manifest records the run as failed"
expect 2 "a read name does not excuse another unread one" -- "$runner" run "$work/fallback.lua" --set tof_ms=5 --set tof=3
has "--set tof=3:" "names the unread one"
cat >"$work/walks.lua" <<'LUA'
local pf = require "psiflight"
for k, v in pairs(pf.params) do print(k, v) end
LUA
expect 0 "pairs(pf.params) reads every value" -- "$runner" run "$work/walks.lua" --set a=1 --set b=x
has "b	x" "pairs sees the --set values"
done_checks
