#!/usr/bin/env bash
# test_edges_fresnel_scipy.sh - masks with edges between grid points (the
# default, band-limited "exact" edges) against outside references:
#   * a plane wave through one slit and through two slits, then free flight
#     for t: psi(x, t) = psi0 e^{-i pi/4} / sqrt 2 [C(u2) - C(u1) + i (S(u2) - S(u1))],
#     u = sqrt(m / (pi hbar t)) (x' - x) at the slit edges x' (Fresnel
#     diffraction by a slit, Born & Wolf, Principles of Optics, ch. 8; the
#     Fresnel integrals C, S from scipy.special.fresnel);
#   * a plane wave through a circular aperture of radius R: on the axis
#     |psi|^2 = 4 |psi0|^2 sin^2(m R^2 / (4 hbar t)), the Fresnel-zone on-axis
#     law of a circular aperture (Born & Wolf ch. 8; written from memory as
#     I = 4 I0 sin^2(pi R^2 / (2 lambda z)) with lambda z -> 2 pi hbar t / m).
# Error law: the grid keeps the mask's momenta |k| < K = pi/dx; the part of
# the exact pattern carried by |k| > K is, near the slit, the end term of an
# integration by parts, at most m dx^2 / (2 pi^2 hbar t) per edge pair
# (derived here, not quoted), so the check is err <= 0.06 dx^2 / l^2 with
# l^2 = hbar t / m at several dx: the dx^2 law.  The span is chosen so that
# no momentum on the grid wraps around in time t (span > 2 pi l^2 / dx).
# Cell-switched edges (edges = "cells") at the same grid are shown to be
# much worse.
set -u
root=${PSIFLIGHT_ROOT:-$(cd "$(dirname "$0")/../.." && pwd)}
build=${PSIFLIGHT_BUILD:-$root/build}
runner=${PSIFLIGHT_RUNNER:-$build/psiflight}
py=/usr/bin/python3
if ! "$py" -c 'import scipy.special, numpy' 2>/dev/null; then
  echo "note numpy/scipy from Debian are not installed: check skipped"
  exit 0
fi
tmp=$(mktemp -d); trap 'rm -rf "$tmp"' EXIT
cat > "$tmp/print.lua" <<'LUA'
local pf = require "psiflight"
pf.setup{planning = "estimate"}
local m, hbar = pf.mass("87Rb"), pf.constants.hbar
print(string.format("const %.17g %.17g", m, hbar))
local t = 0.5e-3
local function plane() return 1 end
-- One slit 1 um wide centred at 0.2345 um, and two 0.6 um slits 2.1 um apart.
local cases = {
  {"slit", 8192, "exact"}, {"slit", 16384, "exact"}, {"slit", 24000, "exact"}, {"slit", 32768, "exact"},
  {"slit", 32768, "cells"}, {"slits", 32768, "exact"}, {"slits", 32768, "cells"},
}
for _, c in ipairs(cases) do
  local kind, n, edges = c[1], c[2], c[3]
  local g = pf.grid{points = n, span = 330e-6}
  local w = pf.wave(g, {mass = m, position = plane, normalize = false})
  if kind == "slit" then w:slit{width = 1e-6, center = 0.2345e-6, edges = edges}
  else w:slits{count = 2, width = 0.6e-6, pitch = 2.1e-6, center = 0.17e-6, edges = edges} end
  w:fly(t)
  for i = 1, n do
    local x = g:x(1, i)
    if math.abs(x) < 4e-6 then
      local z = w:psi(i)
      print(string.format("%s %s %d %.17g %.17g %.17g %.17g", kind, edges, n, g:spacing(1), x, z.re, z.im))
    end
  end
end
-- Circular aperture, radius 2.03 um, centred on a grid point; on-axis value.
local R = 2.03e-6
for _, c in ipairs{{512, "exact"}, {1024, "exact"}, {1024, "cells"}} do
  local n, edges = c[1], c[2]
  local g = pf.grid{points = {n, n}, span = 102.4e-6}
  for _, ph in ipairs{0.7, 1.3} do
    local tc = m * R * R / (4 * hbar * ph)
    local w = pf.wave(g, {mass = m, position = function() return 1 end, normalize = false})
    w:aperture{shape = "circle", radius = R, edges = edges}
    w:fly(tc)
    local z = w:psi(n // 2 + 1, n // 2 + 1)
    print(string.format("circle %s %d %.17g %.17g %.17g %.17g", edges, n, g:spacing(1), R, tc, z:abs2()))
  end
end
LUA
"$runner" run "$tmp/print.lua" --out "$tmp/out" > "$tmp/values.txt" 2> "$tmp/err.txt" || { echo "FAIL runner"; cat "$tmp/err.txt"; exit 1; }
"$py" - "$tmp/values.txt" <<'PY'
import sys
import numpy as np
from scipy.special import fresnel
bad = 0
def check(cond, label):
    global bad
    print(("ok " if cond else "FAIL ") + label)
    if not cond: bad += 1
rows, circ = {}, {}
for line in open(sys.argv[1]):
    f = line.split()
    if f[0] == "const":
        m, hbar = float(f[1]), float(f[2])
    elif f[0] in ("slit", "slits"):
        rows.setdefault((f[0], f[1], int(f[2])), []).append([float(v) for v in f[3:]])
    elif f[0] == "circle":
        circ.setdefault((f[1], int(f[2])), []).append([float(v) for v in f[3:]])
t = 0.5e-3
l2 = hbar * t / m
def fresnel_slits(x, edges):
    s = np.sqrt(m / (np.pi * hbar * t))
    tot = 0
    for lo, hi in edges:
        S1, C1 = fresnel(s * (lo - x)); S2, C2 = fresnel(s * (hi - x))
        tot = tot + (C2 - C1) + 1j * (S2 - S1)
    return np.exp(-1j * np.pi / 4) / np.sqrt(2) * tot
geometry = {"slit": [(0.2345e-6 - 0.5e-6, 0.2345e-6 + 0.5e-6)],
            "slits": [(0.17e-6 - 1.05e-6 - 0.3e-6, 0.17e-6 - 1.05e-6 + 0.3e-6),
                      (0.17e-6 + 1.05e-6 - 0.3e-6, 0.17e-6 + 1.05e-6 + 0.3e-6)]}
err = {}
for key, r in sorted(rows.items()):
    r = np.array(r); dx = r[0, 0]; x = r[:, 1]; psi = r[:, 2] + 1j * r[:, 3]
    ref = fresnel_slits(x, geometry[key[0]])
    e = float(np.abs(psi - ref).max()); err[key] = e
    pairs = len(geometry[key[0]])
    bound = 0.06 * pairs * dx * dx / l2
    print(f"note {key[0]:5s} {key[1]:5s} dx {dx*1e9:6.2f} nm: max |psi - psi_Fresnel| {e:.3e} "
          f"(dx^2 bound {bound:.3e}), {len(x)} points within 4 um")
    if key[1] == "exact":
        check(e <= bound, f"{key[0]} dx {dx*1e9:.2f} nm: exact edges within 0.06 dx^2/l^2 per slit of the "
              f"Fresnel integrals [scipy.special.fresnel; Born & Wolf ch. 8]")
for kind in ("slit", "slits"):
    ex, ce = err[(kind, "exact", 32768)], err[(kind, "cells", 32768)]
    check(ce > 30 * ex, f"{kind}: cell-switched edges {ce:.2e} vs exact {ex:.2e} at the same grid (> 30x)")
check(err[("slit", "exact", 8192)] > 4 * err[("slit", "exact", 16384)] * 0.9,
      "slit: halving dx cuts the error by at least ~4 (dx^2)")
cerr = {}
for key, r in sorted(circ.items()):
    for dx, R, tc, rho in r:
        want = 4 * np.sin(m * R * R / (4 * hbar * tc)) ** 2
        cerr[key + (round(m * R * R / (4 * hbar * tc), 3),)] = abs(rho - want)
        print(f"note circle {key[0]} n {key[1]} phase {m*R*R/(4*hbar*tc):.2f}: on-axis |psi/psi0|^2 {rho:.9f} "
              f"vs 4 sin^2 {want:.9f} (err {abs(rho-want):.2e})")
for ph in (0.7, 1.3):
    e1, e2, ec = cerr[("exact", 512, ph)], cerr[("exact", 1024, ph)], cerr[("cells", 1024, ph)]
    check(e2 < 2e-4, f"circle phase {ph}: on-axis law 4 sin^2(m R^2/4 hbar t) to 2e-4 at dx = 100 nm [Born & Wolf ch. 8]")
    check(e1 > 4 * e2, f"circle phase {ph}: halving dx cuts the error by more than 4 ({e1:.2e} -> {e2:.2e})")
    check(ec > 10 * e2, f"circle phase {ph}: cell-switched disk {ec:.2e} vs exact {e2:.2e} (> 10x)")
sys.exit(1 if bad else 0)
PY
