#!/usr/bin/env bash
# test_userdata_lifecycle.sh - a Lua memory error never leaks an engine
# object (DEVELOPERS.md, "Userdata lifecycle").  Each function that makes a
# userdata owning a core object (waves, grids, ensembles) or that builds a
# table from an engine buffer of grid size (densities, far fields) is called
# with the Lua heap full to within 0, 4, 8, ... 400 bytes of the runner's
# cap (--memory-cap), so that some calls fail with Lua's memory error at each
# allocation they make.  After every function, the engine memory the run
# holds (pf.run_info().memory_used) must be back at its start, and after
# everything is closed at 0.  No physics is checked, so no outside reference
# is involved.
source "$(dirname "$0")/lib.sh"
set -e

cat >"$work/squeeze.lua" <<'LUA'
local pf = require "psiflight"
pf.setup{planning = "estimate"}
local CAP = 16 * 1024 * 1024 -- the --memory-cap below
local mass = pf.species("87Rb").mass
local g = pf.grid{points = {64}, span = {1e-4}}
local w = pf.gaussian(g, {mass = mass, width = 5e-6})
local ens = pf.mixture({w, w}, {0.5, 0.5})
local wave_mt = getmetatable(w)
local grid_opts = {points = {64}, span = {1e-4}}
local gauss_opts = {mass = mass, width = 5e-6}

-- name, function, arguments (made before the heap is filled)
local makers = {
  {"w:copy()", w.copy, w},
  {"w * 2", wave_mt.__mul, w, 2},
  {"w + w", wave_mt.__add, w, w},
  {"w:grid()", w.grid, w},
  {"pf.grid", pf.grid, grid_opts},
  {"pf.gaussian", pf.gaussian, g, gauss_opts},
  {"pf.mixture", pf.mixture, {w, w}, {0.5, 0.5}},
  {"ensemble:copy()", ens.copy, ens},
  {"w:density()", w.density, w},
  {"w:far_field()", w.far_field, w, 1e-3},
}

local hog = {}
for i = 1, 400000 do hog[i] = false end -- sized now: filling it allocates only the fillers
local n = 0
local function grab_table() local t = {}; n = n + 1; hog[n] = t end
local rep = string.rep
local MEM = "not enough memory"
local function room() return CAP - math.floor(collectgarbage("count") * 1024) end

-- Calls m with the heap's room set to r bytes, r = 0, 4, ..., 400: the heap
-- is filled with tables, then a string of the right length (one block, made
-- on the C stack first) takes all but r bytes.
local function squeeze(m)
  collectgarbage(); collectgarbage()
  while pcall(grab_table) do end
  for _ = 1, 12 do hog[n] = false; n = n - 1 end -- about 700 bytes of room to tune
  local made, refused = 0, 0
  for r = 0, 400, 4 do
    collectgarbage()
    pcall(type, 1) -- the call frames the attempt needs exist from here on
    local len = room() - r - 25
    local _, pad = pcall(rep, "x", len > 40 and len or 0)
    local ok, res = pcall(m[2], m[3], m[4])
    if ok then
      made = made + 1
      if type(res) == "userdata" then res:close() end
    elseif res == MEM then
      refused = refused + 1
    else
      error(m[1] .. ": unexpected error: " .. tostring(res))
    end
    res, pad = nil, nil
  end
  for i = 1, n do hog[i] = false end
  n = 0
  collectgarbage(); collectgarbage()
  return made, refused
end

collectgarbage(); collectgarbage()
local base = pf.run_info().memory_used
for _, m in ipairs(makers) do
  local made, refused = squeeze(m)
  print(string.format("squeezed|%s|%d|%d|%d|%d", m[1], made, refused,
                      pf.run_info().memory_used, base))
end
ens:close(); w:close(); g:close()
collectgarbage(); collectgarbage()
print(string.format("closed held=%d", pf.run_info().memory_used))
LUA
expect 0 "every maker called at the edge of the Lua heap" -- "$runner" run "$work/squeeze.lua" --memory-cap 16MiB --trusted
printf '%s\n' "$out" | grep '^squeezed' >"$work/rows"
[ "$(wc -l <"$work/rows")" -eq 10 ] || fail "expected 10 makers, got: $out"
while IFS='|' read -r _ name made refused held start; do
  [ "$refused" -gt 0 ] || fail "$name: no call met a memory error (the squeeze missed): $out"
  [ "$held" = "$start" ] || fail "$name: engine memory $held bytes after the squeeze, $start before ($refused memory errors): a core object leaked"
  ok "$name: $refused memory errors, $made made, engine memory back at $start bytes"
done <"$work/rows"
has "closed held=0" "engine memory 0 once everything is closed (no reference leaked)"
echo "$checks checks passed"
