#!/usr/bin/env bash
# test_levels_scipy.sh - Bragg pulses of pf.levels against a direct numerical
# integration of the coupled momentum-order equations with scipy
# (scipy.integrate.solve_ivp, DOP853, rtol 1e-12):
#   i dc_n/dt = (hbar k_n^2 / 2m) c_n
#               + Omega(t)/2 [e^(i chi) c_(n-1) + e^(-i chi) c_(n+1)],
#   k_n = k0 + n K, chi = phase - delta t
# (the standing-wave coupling hbar Omega cos(K x - delta t + phase) written in
# momentum space; common practice), for square and Gaussian envelopes in the
# Bragg and intermediate regimes; and the Raman-Nath limit (kinetic energy
# negligible) against J_n(Omega t)^2 from scipy.special.jv.
set -u
root=${PSIFLIGHT_ROOT:-$(cd "$(dirname "$0")/../.." && pwd)}
build=${PSIFLIGHT_BUILD:-$root/build}
runner=${PSIFLIGHT_RUNNER:-$build/psiflight}
py=/usr/bin/python3
if ! "$py" -c 'import scipy.integrate, scipy.special' 2>/dev/null; then
  echo "note scipy from Debian is not installed: check skipped"
  exit 0
fi
tmp=$(mktemp -d); trap 'rm -rf "$tmp"' EXIT
cat > "$tmp/print.lua" <<'LUA'
local pf = require "psiflight"
pf.setup{planning = "estimate", guard_threshold = math.huge} -- plane waves fill the grid
local hbar = pf.constants.hbar
local g = pf.grid{points = 512, span = 400e-6}
local dk = g:kspacing()
local K = 16 * dk -- 32 orders fit on the grid before the momentum wraps
-- case: name, mass, k0 (in K), envelope, Omega (in recoil units), duration (in 1/w_r), width, delta (w_r), phase,
-- substeps (nil: the default)
local m = pf.mass("87Rb")
local wr = hbar * K^2 / (2 * m)
local cases = {
  {"bragg-square", m, -0.5, "square", 0.3, 10.0, nil, 0.0, 0.4},
  {"intermediate-square", m, -0.5, "square", 3.0, 1.7, nil, 0.2, 0.0},
  {"bragg-gaussian", m, -0.5, "gaussian", 0.9, 24.0, 4.0, 0.0, 1.1},
  {"detuned-gaussian", m, 0.0, "gaussian", 4.0, 3.0, 0.5, 1.0, -0.3},
  {"intermediate-fine", m, -0.5, "square", 3.0, 1.7, nil, 0.2, 0.0, 400},
  {"detuned-gaussian-fine", m, 0.0, "gaussian", 4.0, 3.0, 0.5, 1.0, -0.3, 800},
  {"raman-nath", 1e-20, 0.0, "square", nil, nil, nil, 0.0, 0.0},
}
for _, c in ipairs(cases) do
  local name, mass, k0 = c[1], c[2], c[3] * K
  local w = pf.wave(g, {mass = mass, position = function(x) return pf.polar(1, k0 * x) end})
  local lv = pf.levels{labels = {"g", "e"}, waves = {g = w}}
  local wrc = hbar * K^2 / (2 * mass)
  local omega, t, width
  if name == "raman-nath" then
    t = 5e-6; omega = 2.7 / t
  else
    omega, t = c[5] * wrc, c[6] / wrc
    width = c[7] and c[7] / wrc
  end
  local opt = {level = "g", rabi = omega, envelope = c[4], wavenumber = K, detuning = c[8] * wrc, phase = c[9],
               substeps = c[10]}
  if c[4] == "gaussian" then opt.width = width; opt.duration = t else opt.duration = t end
  lv:bragg(opt)
  local pops = lv:order_populations{wavenumber = K, orders = 6, center = k0}.g
  local line = {string.format("%s %.17g %.17g %.17g %s %.17g %.17g %.17g %.17g %.17g", name, mass, k0, K, c[4], omega,
    t, width or 0, c[8] * wrc, c[9])}
  for n = -6, 6 do line[#line + 1] = string.format("%.17g", pops[n]) end
  print(table.concat(line, " "))
end
LUA
"$runner" run "$tmp/print.lua" --out "$tmp/out" > "$tmp/values.txt" || { echo "FAIL runner"; cat "$tmp/values.txt"; exit 1; }
"$py" - "$tmp/values.txt" <<'PY'
import sys
import numpy as np
from scipy.integrate import solve_ivp
from scipy.special import jv
hbar = 1.054571817e-34  # h / 2 pi, h exact in the SI since 2019 (CODATA 2018)
N = 12                  # orders -N..N integrated; the engine's grid holds all of them
bad = 0
for line in open(sys.argv[1]):
    f = line.split()
    name = f[0]
    mass, k0, K = float(f[1]), float(f[2]), float(f[3])
    env = f[4]
    omega, t, width, delta, phase = map(float, f[5:10])
    pops = [float(v) for v in f[10:]]
    n = np.arange(-N, N + 1)
    kin = hbar * (k0 + n * K) ** 2 / (2 * mass)
    def rabi(s):
        if env == "square":
            return omega
        return omega * np.exp(-0.5 * ((s - 0.5 * t) / width) ** 2)
    def rhs(s, y):
        c = y[:2 * N + 1] + 1j * y[2 * N + 1:]
        chi = phase - delta * s
        up = np.zeros_like(c); dn = np.zeros_like(c)
        up[1:] = c[:-1]   # c_(n-1)
        dn[:-1] = c[1:]   # c_(n+1)
        d = -1j * (kin * c + 0.5 * rabi(s) * (np.exp(1j * chi) * up + np.exp(-1j * chi) * dn))
        return np.concatenate([d.real, d.imag])
    y0 = np.zeros(2 * (2 * N + 1)); y0[N] = 1.0
    if name == "raman-nath":
        want = jv(np.arange(-6, 7), omega * t) ** 2
        src = "scipy.special.jv: J_n(Omega t)^2"
        tol = 1e-9
    else:
        sol = solve_ivp(rhs, (0.0, t), y0, method="DOP853", rtol=1e-12, atol=1e-14)
        c = sol.y[:2 * N + 1, -1] + 1j * sol.y[2 * N + 1:, -1]
        want = np.abs(c[N - 6:N + 7]) ** 2
        src = "scipy solve_ivp DOP853 of the coupled order equations"
        # the default step count aims at about 1e-6; 400 (square) and 800 (Gaussian) steps at 1e-9: fourth order
        tol = 1e-9 if name.endswith("-fine") else 1e-6
    err = max(abs(a - b) for a, b in zip(pops, want))
    if err <= tol:
        print(f"ok {name:22s} orders -6..6 max |diff| {err:.2e} (tol {tol:.0e})  [{src}]")
    else:
        print(f"FAIL {name}: orders -6..6 max |diff| {err:.3e} > {tol}: got {pops} want {list(want)}")
        bad += 1
sys.exit(1 if bad else 0)
PY
