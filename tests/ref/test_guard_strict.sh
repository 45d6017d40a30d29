#!/usr/bin/env bash
# test_guard_strict.sh - grid guards through the runner: a too-small grid
# (wrap-around) and a kick beyond the Nyquist limit pi/dx (aliasing; the
# sampling theorem, common practice) warn on stderr and exit 0 normally, and
# stop the run with exit code 3 under --strict (docs/runner.md); a well-sized
# grid passes --strict.
set -u
root=${PSIFLIGHT_ROOT:-$(cd "$(dirname "$0")/../.." && pwd)}
build=${PSIFLIGHT_BUILD:-$root/build}
runner=${PSIFLIGHT_RUNNER:-$build/psiflight}
tmp=$(mktemp -d); trap 'rm -rf "$tmp"' EXIT
fails=0
ok()  { echo "ok $*"; }
bad() { echo "FAILED: $*"; fails=$((fails + 1)); }
expect_status() { # want, label, command...
  local want=$1 label=$2; shift 2
  "$@" >"$tmp/out" 2>"$tmp/err"; local got=$?
  if [ "$got" -eq "$want" ]; then ok "$label (exit $got)"; else bad "$label: exit $got, want $want"; sed 's/^/  | /' "$tmp/err"; fi
}

# A 1 um packet of 87Rb on a 12 um box, flown until it is ~20 um wide.
cat > "$tmp/wrap.lua" <<'LUA'
local pf = require "psiflight"
pf.setup{planning = "estimate"}
local m = 86.909180531 * 1.66053906660e-27
local hbar = 6.62607015e-34 / (2 * math.pi)
local g = pf.grid{points = 64, span = 12e-6}
local w = pf.wave(g, {mass = m, position = function(x) return math.exp(-x * x / 4e-12) end})
w:fly(20 * 2 * m * 1e-12 / hbar)
print("width", w:position_width())
LUA
expect_status 0 "too-small grid without --strict runs on" "$runner" run "$tmp/wrap.lua"
grep -q "grid guard" "$tmp/err" && grep -q "position axis 1" "$tmp/err" && ok "wrap-around warning on stderr" || bad "no wrap-around warning: $(cat "$tmp/err")"
grep -q "wrap.lua:8:" "$tmp/err" && ok "warning names the script line that measured it" || bad "no :8: in warning"
grep -q "Remedy: enlarge the span on axis 1 by x" "$tmp/err" && ok "warning gives a remedy" || bad "no remedy"
[ "$(grep -c 'grid guard' "$tmp/err")" -eq 1 ] && ok "warned once" || bad "warned more than once"
expect_status 3 "too-small grid with --strict exits 3" "$runner" run "$tmp/wrap.lua" --strict
grep -q "strict mode" "$tmp/err" && ok "strict error says strict mode" || bad "no 'strict mode' in: $(cat "$tmp/err")"
grep -q "^width" "$tmp/out" && bad "strict run printed past the guard" || ok "strict run stopped at the guard"

# A kick beyond Nyquist: the state is built with k0 = 1.05 pi/dx.
cat > "$tmp/alias.lua" <<'LUA'
local pf = require "psiflight"
pf.setup{planning = "estimate"}
local m = 86.909180531 * 1.66053906660e-27
local g = pf.grid{points = 128, span = 64e-6}
local k0 = 1.05 * g:knyquist()
local w = pf.wave(g, {mass = m, position = function(x)
  local a = math.exp(-x * x / (4 * 4e-12)); return a * math.cos(k0 * x), a * math.sin(k0 * x) end})
w:fly(1e-4)
print("done")
LUA
expect_status 0 "kick beyond Nyquist without --strict runs on" "$runner" run "$tmp/alias.lua"
grep -q "momentum axis 1" "$tmp/err" && grep -q "Nyquist" "$tmp/err" && ok "aliasing warning on stderr" || bad "no aliasing warning: $(cat "$tmp/err")"
expect_status 3 "kick beyond Nyquist with --strict exits 3" "$runner" run "$tmp/alias.lua" --strict

# The same packet on an adequate grid passes --strict, and fly_long copes
# with the long flight that broke the small grid.
cat > "$tmp/fine.lua" <<'LUA'
local pf = require "psiflight"
pf.setup{planning = "estimate"}
local m = 86.909180531 * 1.66053906660e-27
local hbar = 6.62607015e-34 / (2 * math.pi)
local g = pf.grid{points = 128, span = 24e-6}
local w = pf.wave(g, {mass = m, position = function(x) return math.exp(-x * x / 4e-12) end})
local _, r = w:fly_long(200 * 2 * m * 1e-12 / hbar)
print(r.method, w:position_width())
LUA
expect_status 0 "adequate grid passes --strict" "$runner" run "$tmp/fine.lua" --strict
grep -q "^scaled" "$tmp/out" && ok "long flight went scaled" || bad "long flight did not go scaled: $(cat "$tmp/out")"
[ ! -s "$tmp/err" ] && ok "no warnings on an adequate grid" || bad "unexpected warnings: $(cat "$tmp/err")"

[ "$fails" -eq 0 ]
