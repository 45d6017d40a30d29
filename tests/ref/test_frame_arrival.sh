#!/usr/bin/env bash
# test_frame_arrival.sh - arrival times at a lab plane below a dropped cloud
# (w:arrival_times with acceleration, the cloud falling in its frame) against
# the exact flux of a Gaussian under gravity, computed here independently of
# the engine: the closed-form packet under a uniform force (Avron-Herbst form:
# the free Gaussian with complex width sigma^2 + i hbar t / 2m, shifted by
# a t^2/2 and multiplied by exp(i m a x t / hbar - i m a^2 t^3 / 6 hbar);
# J. E. Avron and I. W. Herbst, Commun. Math. Phys. 52, 239 (1977), from
# memory), its current J = (hbar/m) Im(conj(psi) dpsi/dx) by a five-point
# derivative in numpy, and the arrival-time mean and spread by
# scipy.integrate.quad over the same window.
set -eu
root=${PSIFLIGHT_ROOT:-$(cd "$(dirname "$0")/../.." && pwd)}
runner=${PSIFLIGHT_RUNNER:-$root/build/psiflight}
work=$(mktemp -d); trap 'rm -rf "$work"' EXIT
cat >"$work/drop.lua" <<'LUA'
local pf = require "psiflight"
pf.setup{planning = "estimate"}
local m = pf.mass("87Rb")
local g = pf.grid{points = 512, span = 60e-6}
local sigma, k0 = 1e-6, 4e6
-- launched upwards: the launch goes into the frame, so the cloud stays on the grid
local w = pf.wave(g, {mass = m, position = function(x) return math.exp(-x * x / (4 * sigma * sigma)) end})
w:kick(k0, {frame = true})
local r = w:arrival_times{at = -0.6e-3, from = 10.0e-3, to = 12.0e-3, steps = 801, acceleration = -9.80665}
print(string.format("%.17g", m))
print(string.format("%.17g %.17g %.17g", r.arrived, r.mean, r.spread))
for k = 1, #r.time, 40 do print(string.format("%.17g %.17g", r.time[k], r.flux[k])) end
LUA
"$runner" run "$work/drop.lua" >"$work/out.txt"
/usr/bin/python3 - "$work/out.txt" <<'PY'
import math, sys
import numpy as np
from scipy.integrate import quad
h = 6.62607015e-34; hbar = h / (2 * math.pi)      # CODATA 2018 (exact h)
lines = [l for l in open(sys.argv[1]).read().split("\n") if l.strip()]
m = float(lines[0])                               # 87Rb from the engine's AME2020 table (an input here)
arrived, mean, spread = map(float, lines[1].split())
sigma, k0, a, L = 1e-6, 4e6, -9.80665, -0.6e-3
v0 = hbar * k0 / m

def psi(x, t):
    xs = x - 0.5 * a * t * t
    alpha = sigma ** 2 + 1j * hbar * t / (2 * m)
    free = (2 * math.pi * sigma ** 2) ** -0.25 * np.sqrt(sigma ** 2 / alpha) \
        * np.exp(-(xs - v0 * t) ** 2 / (4 * alpha) + 1j * k0 * xs - 1j * hbar * k0 ** 2 * t / (2 * m))
    return free * np.exp(1j * m * a * x * t / hbar - 1j * m * a * a * t ** 3 / (6 * hbar))

def flux(t):
    d = 1e-11
    f = lambda x: psi(x, t)
    dpsi = (-f(L + 2 * d) + 8 * f(L + d) - 8 * f(L - d) + f(L - 2 * d)) / (12 * d)
    return hbar / m * float(np.imag(np.conj(f(L)) * dpsi))

worst = peak = 0.0
for line in lines[2:]:
    t, j = map(float, line.split())
    want = flux(t)
    worst = max(worst, abs(j - want)); peak = max(peak, abs(want))
assert worst / peak < 1e-7, (worst, peak)
print("ok lab-plane flux vs numpy closed-form current, max |diff| / peak %.2e  [Avron-Herbst closed form, numpy]" % (worst / peak))
t0, t1 = 10.0e-3, 12.0e-3
n0 = quad(flux, t0, t1, epsabs=0, epsrel=1e-10, limit=400)[0]
n1 = quad(lambda t: t * flux(t), t0, t1, epsabs=0, epsrel=1e-10, limit=400)[0]
n2 = quad(lambda t: t * t * flux(t), t0, t1, epsabs=0, epsrel=1e-10, limit=400)[0]
want_mean = n1 / n0; want_spread = math.sqrt(n2 / n0 - want_mean ** 2)
assert abs(arrived - n0) < 1e-7, (arrived, n0)
print("ok probability arrived %.12f vs scipy quad %.12f  [scipy.integrate.quad]" % (arrived, n0))
assert abs(mean - want_mean) < 1e-9 * want_mean, (mean, want_mean)
print("ok mean arrival time %.12e s vs scipy quad %.12e s  [scipy.integrate.quad]" % (mean, want_mean))
assert abs(spread - want_spread) < 1e-6 * want_spread, (spread, want_spread)
print("ok arrival-time spread %.9e s vs scipy quad %.9e s  [scipy.integrate.quad]" % (spread, want_spread))
PY

# A density written from a wave in a moving frame carries lab axes: the grid
# coordinates plus the frame offset (read back with h5dump, Debian hdf5-tools).
cat >"$work/axes.lua" <<'LUA'
local pf = require "psiflight"
pf.setup{planning = "estimate"}
local g = pf.grid{points = {32, 32}, span = {32e-6, 32e-6}}
local w = pf.gaussian(g, {mass = "87Rb", width = 2e-6})
w:fly(2e-3, {acceleration = {0, -9.80665}})
local f = pf.h5file("drop.h5", {overwrite = true})
f:put_density("drop", w)
f:close()
for _, y in ipairs(w:x_axis(2)) do print(string.format("%.17g", y)) end
LUA
"$runner" run "$work/axes.lua" --out "$work/axes" >"$work/axes.txt"
h5dump -d /drop/y -y -w 1 -m '%.17g' "$work/axes/drop.h5" | grep -E '^ *-?[0-9]+\.[0-9]+(e[-+][0-9]+)?,? *$' | tr -d ' ,' >"$work/axes.h5.txt"
/usr/bin/python3 - "$work/axes.txt" "$work/axes.h5.txt" <<'PY'
import sys
want = [float(x) for x in open(sys.argv[1]).read().split()]
got = [float(x) for x in open(sys.argv[2]).read().split()]
assert len(want) == 32 and got == want, (got, want)
# the frame offset g t^2 / 2 = 19.6133 um below: every lab y is below the grid's +16 um edge minus it
assert max(got) < 16e-6 - 19.6e-6, got
print("ok put_density of a falling wave writes lab axes (grid + g t^2/2), read with h5dump  [h5dump, kinematics]")
PY
