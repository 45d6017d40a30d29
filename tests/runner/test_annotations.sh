#!/usr/bin/env bash
# test_annotations.sh - the editor annotations (LuaLS ---@meta file) cover
# exactly the Lua API the binding registers, and say so clearly when they do
# not: every function and method of the built module has a signature in
# scripts/lua-api-signatures.lua, every signature names a registered
# function, and the option-table classes carry exactly the keys the options
# checker declares.  (The format is LuaLS's annotation syntax; there is no
# physics here.)
#
# If this test fails after you added a Lua function: add one line for it to
# the functions table of scripts/lua-api-signatures.lua (the message below
# shows the line to add; format in docs/editors.md), then `make annotations`.
set -u
root=${PSIFLIGHT_ROOT:-$(cd "$(dirname "$0")/../.." && pwd)}
runner=${PSIFLIGHT_RUNNER:-$root/build/psiflight}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
fail() { echo "FAIL $*"; exit 1; }
gen() { # signatures file, output file
  PSIFLIGHT_SIGNATURES="$1" PSIFLIGHT_ANNOTATIONS="$2" "$runner" run "$root/scripts/gen-annotations.lua" --trusted --quiet
}

# 1. The committed signatures match the built module.
if ! gen "$root/scripts/lua-api-signatures.lua" "$tmp/psiflight.lua" >"$tmp/out" 2>"$tmp/err"; then
  cat "$tmp/err"
  fail "the Lua API and scripts/lua-api-signatures.lua disagree (see above for what to add or remove where)"
fi
count=$(sed -n 's/^gen-annotations: \([0-9]*\) functions.*/\1/p' "$tmp/out")
[ -n "$count" ] && [ "$count" -ge 150 ] || fail "generator reported '$count' functions: $(cat "$tmp/out")"
head -1 "$tmp/psiflight.lua" | grep -qx -- "---@meta psiflight" || fail "not a LuaLS meta file"
defs=$(grep -cE '^function [A-Za-z0-9_.:]+\(' "$tmp/psiflight.lua")
[ "$defs" -eq "$count" ] || fail "$count functions registered but $defs annotated"
grep -qx 'function psiflight_wave:fly(t, opts) end' "$tmp/psiflight.lua" || fail "wave:fly not annotated as expected"
grep -qx 'function pf.grid(opts) end' "$tmp/psiflight.lua" || fail "pf.grid not annotated as expected"
grep -qx 'return pf' "$tmp/psiflight.lua" || fail "the meta file does not return the module table"
# A function type with commas inside stays one parameter.
grep -qx 'function psiflight_ensemble:each(fn) end' "$tmp/psiflight.lua" || fail "ensemble:each's fun(...) parameter was split"
grep -qx -- '---@param fn fun(w: psiflight.wave, weight: number, i: integer)' "$tmp/psiflight.lua" || fail "ensemble:each's parameter type"
if command -v lua5.4 >/dev/null; then
  lua5.4 -e "assert(loadfile('$tmp/psiflight.lua'))" 2>"$tmp/lua.err" || { cat "$tmp/lua.err"; fail "the annotations are not valid Lua"; }
fi
echo "ok all $count registered functions and methods have signatures and are annotated; the meta file is valid Lua"

# 2. Option classes carry exactly the declared keys (read back from the file).
cat >"$tmp/keys.lua" <<'EOF'
local pf = require "psiflight"
local ann = assert(io.open(os.getenv("ANN"))):read("a")
local got, current = {}, nil
for line in ann:gmatch("[^\n]+") do
  local class = line:match("^%-%-%-@class psiflight%.options%.(%S+)$")
  if class then current = class; got[class] = {}
  elseif current and line:match("^%-%-%-@field ") then
    got[current][#got[current] + 1] = line:match("^%-%-%-@field ([%w_]+)%?")
  elseif not line:match("^%-%-%-") then current = nil end
end
local n = 0
for set, keys in pairs(pf._option_sets()) do
  local class = set:gsub("[^%w]+", "_")
  local want = {}
  for _, k in ipairs(keys) do want[#want + 1] = k end
  table.sort(want)
  local have = got[class] or {}
  table.sort(have)
  if table.concat(want, ",") ~= table.concat(have, ",") then
    error(string.format("%s: checker declares {%s}, annotations have {%s}", set, table.concat(want, ","), table.concat(have, ",")))
  end
  n = n + 1
end
print(n)
EOF
sets=$(ANN="$tmp/psiflight.lua" "$runner" run "$tmp/keys.lua" --trusted --quiet 2>&1) || fail "option keys: $sets"
[ "$sets" -ge 50 ] || fail "only $sets option sets compared"
echo "ok the $sets option-table classes list exactly the keys the options checker declares"

# 3. Drift is caught, with a message saying what to add or remove where.
grep -v '\["wave:fly"\]' "$root/scripts/lua-api-signatures.lua" >"$tmp/missing.lua"
gen "$tmp/missing.lua" "$tmp/m.lua" >/dev/null 2>"$tmp/err" && fail "a missing signature was not noticed"
grep -q 'wave:fly is registered by the binding but has no signature' "$tmp/err" || { cat "$tmp/err"; fail "missing signature not named"; }
grep -q 'scripts/lua-api-signatures.lua' "$tmp/err" || fail "the message does not say where to add it"
[ -e "$tmp/m.lua" ] && fail "annotations were written despite the drift"
sed 's/^  functions = {$/  functions = {\n    ["wave:teleport"] = {"", "", "no such method"},/' "$root/scripts/lua-api-signatures.lua" >"$tmp/extra.lua"
gen "$tmp/extra.lua" "$tmp/e.lua" >/dev/null 2>"$tmp/err" && fail "a signature of a function that does not exist was not noticed"
grep -q 'wave:teleport has a signature .* but the binding registers no such function' "$tmp/err" || { cat "$tmp/err"; fail "stale signature not named"; }
echo "ok a missing signature (wave:fly) and a stale one (wave:teleport) stop the generator with a message naming the function and the file"
