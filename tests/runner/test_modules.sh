#!/usr/bin/env bash
# test_modules.sh - where require finds modules (script folder, then the
# folders of PSIFLIGHT_RECIPE_PATH, then the bundled recipes), that the
# sandbox ignores package.path, tracebacks that show script lines only, and
# the exit statuses of docs/runner.md.
source "$(dirname "$0")/lib.sh"
set -e
mkdir -p "$work/s" "$work/lib1" "$work/lib2/lab" "$work/elsewhere"
echo 'return {where = "script folder"}' >"$work/s/shared.lua"
echo 'return {where = "lib1"}' >"$work/lib1/shared.lua"
echo 'return {where = "lib1 only"}' >"$work/lib1/only1.lua"
cat >"$work/lib2/lab/optics.lua" <<'LUA'
local M = {}
function M.focus(f)
  if f <= 0 then error("focal length must be positive, got " .. f, 2) end
  return 1 / f
end
function M.deep(x) return x.field.missing end
return M
LUA
echo 'return {}' >"$work/elsewhere/hidden.lua"
cat >"$work/s/main.lua" <<'LUA'
local pf = require "psiflight"
print("shared from " .. require("shared").where)
print("only1 from " .. require("only1").where)
print("optics " .. require("lab.optics").focus(0.5))
local talbot = require "psiflight.recipes.talbot_scan"
print("bundled talbot has period: " .. tostring(talbot.parameters.period ~= nil))
LUA
export PSIFLIGHT_RECIPE_PATH="$work/lib1:$work/lib2"
expect 0 "modules resolve" -- "$runner" run "$work/s/main.lua"
has "shared from script folder" "the script folder comes first"
has "only1 from lib1" "PSIFLIGHT_RECIPE_PATH folders are searched"
has "optics 2" "dotted names map to sub-folders"
has "bundled talbot has period: true" "bundled recipes load from the binary"
cat >"$work/s/pathtrick.lua" <<'LUA'
package.path = "ELSE/?.lua;" .. package.path
require "hidden"
LUA
sed -i "s#ELSE#$work/elsewhere#" "$work/s/pathtrick.lua"
expect 1 "the sandbox ignores package.path" -- "$runner" run "$work/s/pathtrick.lua"
has "module 'hidden' not found" "the module is not found"
expect 0 "trusted scripts keep package.path" -- "$runner" run "$work/s/pathtrick.lua" --trusted
cat >"$work/s/trace.lua" <<'LUA'
local optics = require "lab.optics"
local function setup_lens()
  local power = optics.focus(-2)
  return power
end
setup_lens()
LUA
expect 1 "an error in user code is a script error" -- "$runner" run "$work/s/trace.lua"
has "trace.lua:3: focal length must be positive, got -2" "the message points at the caller's line"
has "script traceback:" "a traceback follows"
has "trace.lua:3: in function 'setup_lens'" "the traceback names the function"
has "trace.lua:6: in main chunk" "the traceback shows the script lines"
case "$err" in *"[C]"*) fail "the traceback shows C frames: $err";; *) ok "no C frames in the traceback";; esac
cat >"$work/s/deep.lua" <<'LUA'
require("lab.optics").deep({})
LUA
expect 1 "errors inside modules" -- "$runner" run "$work/s/deep.lua"
has "lab/optics.lua:6: in function 'deep'" "the traceback names the module file and line"
echo 'local x = = 1' >"$work/s/syntax.lua"
expect 1 "syntax error is a script error" -- "$runner" run "$work/s/syntax.lua"
has "syntax.lua:1:" "the syntax error names the line"
expect 2 "missing script is a usage error" -- "$runner" run "$work/s/nope.lua"
expect 2 "unknown option is a usage error" -- "$runner" run "$work/s/main.lua" --frobnicate
expect 2 "bad --time-limit" -- "$runner" run "$work/s/main.lua" --time-limit 3kg
expect 2 "bad --memory-cap" -- "$runner" run "$work/s/main.lua" --memory-cap lots
expect 0 "psiflight recipe lists the bundled recipes" -- "$runner" recipe
for r in tof_image talbot_scan mach_zehnder aperture_flight arrival_time; do has "$r" "listed: $r"; done
expect 2 "unknown bundled recipe" -- "$runner" run recipe:nonesuch
done_checks
