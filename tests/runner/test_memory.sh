#!/usr/bin/env bash
# test_memory.sh - the engine's memory as the runner sees it (docs/runner.md,
# "Memory"): resident memory stays flat in a loop that builds, copies and
# closes waves; pf.run_info().memory_used counts what the engine holds; the
# cap counts the binding's buffers of grid size; and with PSIFLIGHT_FAIL_ALLOC
# (DEVELOPERS.md) every engine allocation of a typical script, of the
# state-gallery example and of a multi-level script can fail, each
# time with a clean error naming the script line, never a crash (under
# `make asan` also never a leak: LeakSanitizer's exit status is not 0 or 5).
# No physics is checked here, so no outside reference is involved.
source "$(dirname "$0")/lib.sh"
set -e

# 1. Resident memory in a build/copy/fly/close loop.  Before large blocks were
# returned to the system this grew by about 2 MB per pass (13 -> 112 MB over
# 50 passes of a 256 x 256 grid, 99 MB from pass 5 to 50); the bound below is
# far above the few MB that Lua's uncollected garbage adds and far below that
# growth.  VmRSS is read by the script itself (trusted run: /proc is outside
# the sandbox).
cat >"$work/loop.lua" <<'LUA'
local pf = require "psiflight"
pf.setup{planning = "estimate"}
local function rss_mib()
  local f = assert(io.open("/proc/self/status"))
  local t = f:read("a")
  f:close()
  return tonumber(t:match("VmRSS:%s+(%d+)")) / 1024
end
local n = 256
local base_used = pf.run_info().memory_used
local first, in_loop
for pass = 1, 50 do
  local g = pf.grid{points = {n, n}, span = {1e-4, 1e-4}}
  local w = pf.wave(g, {mass = 1.4e-25, position = function(x, y) return math.exp(-(x / 1e-5) ^ 2 - (y / 1e-5) ^ 2) end})
  local c = w:copy()
  c:fly(1e-3)
  c:position_mean()
  if pass == 1 then in_loop = pf.run_info().memory_used end
  c:close()
  w:close()
  g:close()
  -- No collectgarbage here: Lua's garbage between the engine's blocks is
  -- what kept freed heap blocks from returning to the system.
  if pass == 5 then first = rss_mib() end
end
print(string.format("rss_growth_mib=%.1f", rss_mib() - first))
print(string.format("two_waves_bytes=%d", 2 * n * n * 16))
print(string.format("in_loop_used=%d", in_loop))
print(string.format("after_used=%d base_used=%d", pf.run_info().memory_used, base_used))
LUA
expect 0 "build/copy/close loop runs" -- "$runner" run "$work/loop.lua" --trusted
growth=$(printf '%s\n' "$out" | sed -n 's/^rss_growth_mib=//p')
# gcc links AddressSanitizer's runtime as a shared library, clang statically:
# the runtime's entry symbol's name is in the binary either way.
if grep -aq __asan_init "$runner"; then
  # AddressSanitizer keeps freed blocks in a quarantine of up to 256 MB by
  # design, and the engine leaves large blocks to it there (pf_context.c).
  echo "note: resident-memory bound not checked under AddressSanitizer (grew $growth MiB)"
else
  awk -v g="$growth" 'BEGIN { exit !(g < 16) }' || fail "resident memory grew by $growth MiB over 45 passes (bound 16)"
  ok "resident memory flat over 45 passes of a 256x256 build/copy/close loop (grew $growth MiB, bound 16)"
fi
two=$(printf '%s\n' "$out" | sed -n 's/^two_waves_bytes=//p')
used=$(printf '%s\n' "$out" | sed -n 's/^in_loop_used=//p')
[ "$used" -ge "$two" ] || fail "memory_used $used while two waves ($two bytes) were alive"
ok "memory_used ($used) counts at least the two live waves ($two bytes)"
has "after_used=0 base_used=0" "memory_used returns to 0 when everything is closed"

# 2. The cap counts the binding's grid-sized buffers: a density table's
# buffer that does not fit is refused as a limit (exit 5) at the script line.
cat >"$work/cap.lua" <<'LUA'
local pf = require "psiflight"
pf.setup{planning = "estimate"}
local g = pf.grid{points = {64, 64}, span = {1e-4, 1e-4}}
local w = pf.wave(g, {mass = 1.4e-25, position = function(x, y) return math.exp(-(x / 1e-5) ^ 2 - (y / 1e-5) ^ 2) end})
-- Room for 1000 bytes more; the density needs 64 * 64 * 8 = 32768.
pf.setup{memory_cap = pf.run_info().memory_used + 1000}
local d = w:density()
print("density fitted", #d)
LUA
expect 5 "a density buffer over the cap is a limit error" -- "$runner" run "$work/cap.lua"
has "cap.lua:7: density: allocating 32768 bytes would exceed the memory cap" "message names the line, the call and the size"

# The runner's --memory-cap sets the same engine cap: keeping 1 MiB waves
# alive trips it at the line that asks for one too many.
cat >"$work/keep.lua" <<'LUA'
local pf = require "psiflight"
pf.setup{planning = "estimate"}
local g = pf.grid{points = {256, 256}, span = {1e-4, 1e-4}}
local kept = {}
for i = 1, 16 do
  kept[i] = pf.wave(g, {mass = 1.4e-25, position = function(x, y) return math.exp(-(x / 1e-5) ^ 2 - (y / 1e-5) ^ 2) end})
end
print("all 16 waves fitted")
LUA
expect 5 "--memory-cap 8MiB stops the waves once 8 MiB are held" -- "$runner" run "$work/keep.lua" --memory-cap 8MiB
has "keep.lua:6: wave: allocating 1.0 MiB would exceed the memory cap of 8.0 MiB" "the message names the line, the size and the cap"
expect 0 "the same script fits under 32MiB" -- "$runner" run "$work/keep.lua" --memory-cap 32MiB
has "all 16 waves fitted" "all waves fitted"

# 3. Fault injection walk (build, copy, fused and 1D flights, observables,
# far field, scaled and long flights, a CSV file).  First count the script's
# engine allocations, then fail each one in turn.
cat >"$work/walk.lua" <<'LUA'
local pf = require "psiflight"
pf.setup{planning = "estimate"}
local g = pf.grid{points = {32, 16}, span = {40e-6, 20e-6}}
local w = pf.wave(g, {mass = 1.4e-25, position = function(x, y) return math.exp(-(x / 4e-6) ^ 2 - (y / 3e-6) ^ 2) end})
local c = w:copy()
c:fly(2e-4)
local mx, my = c:position_mean()
local wx = c:position_width()
local d = c:density()
local g1 = pf.grid{points = 64, span = 40e-6}
local v = pf.wave(g1, {mass = 1.4e-25, position = function(x) return math.exp(-(x / 4e-6) ^ 2) end})
v:fly(1e-4)
local xs, ps = g1:x_axis(1), v:density()
local far = v:far_field(0.05)
v:fly_scaled(0.02)
v:fly_long(0.05, {method = "scaled", points = 128})
local spread = v:position_width()
pf.write_csv("profile.csv", {{"x", "m", xs}, {"density", "1/m", ps}})
print(string.format("allocations=%d", pf.run_info().engine_allocations))
LUA
# walk SCRIPT COUNT NAME: fails engine allocation 1..COUNT of SCRIPT in turn.
walk() {
  local script=$1 count=$2 name=$3 n rc failed_runs=0
  for n in $(seq 1 "$count"); do
    set +e
    PSIFLIGHT_FAIL_ALLOC=$n "$runner" run "$script" --planning estimate --out "$work/$name$n" --quiet \
      >"$work/.stdout" 2>"$work/.stderr"
    rc=$?
    set -e
    err=$(cat "$work/.stderr")
    case $rc in
      0) ;; # a fallback absorbed the failure (e.g. a flight done without the fused sweep)
      5)
        failed_runs=$((failed_runs + 1))
        case $err in
          *"$name.lua:"*"out of memory"*"(injected failure of engine allocation $n)"*) ;;
          *) fail "$name, allocation $n: exit 5 without a worded out-of-memory error at a script line: $(head -c 400 "$work/.stderr")" ;;
        esac
        # Outputs are atomic: a failed run leaves no data file under its name.
        if find "$work/$name$n" -type f ! -name manifest.json 2>/dev/null | grep -q .; then
          fail "$name, allocation $n: failed run left $(find "$work/$name$n" -type f ! -name manifest.json | head -1)"
        fi
        ;;
      *) fail "$name, allocation $n: exit $rc (want 0 or 5): $(head -c 600 "$work/.stderr")" ;;
    esac
  done
  [ "$failed_runs" -ge $((count / 2)) ] || fail "$name: only $failed_runs of $count injected failures were reported"
  ok "$name: each of $count injected allocation failures gave exit 0 or a clean exit 5 at a script line ($failed_runs errors)"
}
expect 0 "walk script runs without injection" -- "$runner" run "$work/walk.lua" --out "$work/walk0"
count=$(printf '%s\n' "$out" | sed -n 's/^allocations=//p')
[ "$count" -ge 10 ] || fail "the walk script made only '$count' engine allocations"
ok "walk script makes $count engine allocations"
walk "$work/walk.lua" "$count" walk
# The state gallery example: every builder of docs/states.md in one script.
cp "$root/examples/state_gallery.lua" "$work/state_gallery.lua"
printf '\nprint(string.format("allocations=%%d", require("psiflight").run_info().engine_allocations))\n' >>"$work/state_gallery.lua"
expect 0 "state gallery runs without injection" -- "$runner" run "$work/state_gallery.lua" --planning estimate --out "$work/sg0"
count=$(printf '%s\n' "$out" | sed -n 's/^allocations=//p')
[ "$count" -ge 20 ] || fail "the state gallery made only '$count' engine allocations"
walk "$work/state_gallery.lua" "$count" state_gallery
# Multi-level states (pf.levels): the constructor, pulses, flights in the
# shared frame, lv:evolve and Born events with levels.
cat >"$work/levels_walk.lua" <<'LUA'
local pf = require "psiflight"
local g = pf.grid{points = 256, span = 100e-6}
local psi = pf.gaussian(g, {mass = "87Rb", width = 5e-6})
local lv = pf.levels{labels = {"a", "b"}, waves = {a = psi}, frame = true}
lv:pulse{from = "a", to = "b", area = math.pi / 2, duration = 1e-6, wavenumber = 20 * g:kspacing()}
lv:fly(1e-4, {acceleration = {a = -9.8, b = -9.7}})
lv:evolve(2e-5, {potential = {b = function(x) return 1e-32 * x * x / 1e-12 end}, dt = 1e-5})
local ev = lv:sample(100, {seed = 1})
local f <close> = pf.h5file("levels.h5")
f:put_density("a", lv:level("a"))
print(string.format("allocations=%d", pf.run_info().engine_allocations))
LUA
expect 0 "levels walk runs without injection" -- "$runner" run "$work/levels_walk.lua" --planning estimate --out "$work/lw0"
count=$(printf '%s\n' "$out" | sed -n 's/^allocations=//p')
[ "$count" -ge 15 ] || fail "the levels walk made only '$count' engine allocations"
walk "$work/levels_walk.lua" "$count" levels_walk
expect 2 "a malformed PSIFLIGHT_FAIL_ALLOC is refused" -- env PSIFLIGHT_FAIL_ALLOC=3x "$runner" run "$work/walk.lua"
has "PSIFLIGHT_FAIL_ALLOC must be a positive integer" "the message names the variable"
done_checks
