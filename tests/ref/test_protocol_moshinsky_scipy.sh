#!/usr/bin/env bash
# test_protocol_moshinsky_scipy.sh - diffraction in time through the Lua API
# (slit mask as the shutter, then exact flight) against Moshinsky's closed
# form written with Fresnel integrals from Debian's scipy:
#   |psi|^2 = ((1/2 + C(xi))^2 + (1/2 + S(xi))^2) / 2,
#   xi = (v t - x) / sqrt(pi hbar t / m)
# (Moshinsky, Phys. Rev. 88, 625 (1952); scipy.special.fresnel uses
# C(z) = int_0^z cos(pi u^2 / 2) du).  An independent check of the libcerf
# form used by tests/unit/protocols/test_protocol_moshinsky.c.  Tolerance: 6e-3 of the
# plateau density at dx = 1.5% of the Fresnel length (the grid's cut of the
# sharp shutter's spectrum; the error falls as dx).
set -u
root=${PSIFLIGHT_ROOT:-$(cd "$(dirname "$0")/../.." && pwd)}
build=${PSIFLIGHT_BUILD:-$root/build}
runner=${PSIFLIGHT_RUNNER:-$build/psiflight}
py=/usr/bin/python3
if ! "$py" -c 'import scipy.special' 2>/dev/null; then
  echo "note scipy from Debian is not installed: check skipped"
  exit 0
fi
tmp=$(mktemp -d); trap 'rm -rf "$tmp"' EXIT
cat > "$tmp/shutter.lua" <<'LUA'
local pf = require "psiflight"
pf.setup{planning = "estimate"}
-- CODATA 2018 (h exact in the 2019 SI); 87Rb mass from the engine's species
-- table (AME2020).
local hbar = 6.62607015e-34 / (2 * math.pi)
local m = pf.mass("87Rb")
local v, t = 1.0e-2, 2.0e-3
local n, span = 65536, 1.2e-3
local dx = span / n
local g = pf.grid{points = n, span = span, origin = 0.5 * dx - 0.1e-3}
local k = m * v / hbar
local w = pf.wave(g, {mass = m, normalize = false, position = function(x)
  local env = 0.5 * (1 + math.tanh((x + 0.55e-3) / 10e-6))   -- smooth far-left switch-on
  return env * math.cos(k * x), env * math.sin(k * x)
end})
w:slit{width = 0.6e-3, center = -0.3e-3}   -- the shutter: absorbs x > 0 at t = 0
w:fly(t)
local rho = w:density()
local s, front = math.sqrt(hbar * t / m), v * t
print(string.format("# %.17g %.17g %.17g", hbar, m, t))
for i = 1, n do
  local x = g:x(1, i)
  if math.abs(x - front) <= 10 * s then print(string.format("%.17g %.17g", x, rho[i])) end
end
LUA
if ! "$runner" run "$tmp/shutter.lua" > "$tmp/rho.txt" 2> "$tmp/err"; then
  echo "FAILED: runner"; cat "$tmp/err"; exit 1
fi
"$py" - "$tmp/rho.txt" <<'PY'
import sys
import numpy as np
from scipy.special import fresnel
lines = open(sys.argv[1]).read().split("\n")
hbar, m, t = (float(v) for v in lines[0].split()[1:])
data = np.loadtxt(lines[1:])
x, rho = data[:, 0], data[:, 1]
v = 1.0e-2
xi = (v * t - x) / np.sqrt(np.pi * hbar * t / m)
S, C = fresnel(xi)
ref = 0.5 * ((0.5 + C) ** 2 + (0.5 + S) ** 2)
err = np.max(np.abs(rho - ref))
print(f"note {len(x)} points within 10 Fresnel lengths of the front")
if not (len(x) > 1000 and err <= 6e-3):
    print(f"FAILED: Moshinsky density vs scipy Fresnel form: max |diff| {err:.3e} > 6e-3")
    sys.exit(1)
print(f"ok Moshinsky density vs scipy.special.fresnel closed form   max |diff| {err:.2e} (tol 6e-3) [Phys. Rev. 88, 625 (1952)]")
PY
