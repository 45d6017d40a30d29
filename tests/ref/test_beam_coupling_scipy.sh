#!/usr/bin/env bash
# test_beam_coupling_scipy.sh - pf.beam and pf.coupling against the same
# published formulas evaluated independently in Python with Debian's
# scipy.constants (CODATA 2018 in scipy 1.10, the engine's edition too, so
# agreement is required to 1e-12 relative):
#   lambda = h / sqrt(2 m0 E (1 + E / (2 m0 c^2))), v = p c^2 / (E + m0 c^2),
#   gamma = 1 + E / (m0 c^2), t(L) = L / v                (special relativity)
#   g_3D = 4 pi hbar^2 a N / m                            (Pethick & Smith)
#   g_1D = 2 hbar w a N / (1 - 1.0326 a / a_perp)         (Olshanii, PRL 81, 938)
#   g_2D = 2 sqrt(2 pi) hbar^2 a N / (m a_z)              (Petrov et al., PRL 84, 2551)
# Particle masses are looked up by scipy's own names, not passed over.
set -u
root=${PSIFLIGHT_ROOT:-$(cd "$(dirname "$0")/../.." && pwd)}
build=${PSIFLIGHT_BUILD:-$root/build}
runner=${PSIFLIGHT_RUNNER:-$build/psiflight}
py=/usr/bin/python3
if ! "$py" -c 'import scipy.constants' 2>/dev/null; then
  echo "note scipy from Debian is not installed: check skipped"
  exit 0
fi
tmp=$(mktemp -d); trap 'rm -rf "$tmp"' EXIT
cat > "$tmp/print.lua" <<'LUA'
local pf = require "psiflight"
local e = pf.constants.e
local cases = {{"e", 10e3}, {"e", 100e3}, {"e", 200e3}, {"e", 300e3}, {"e", 3e6},
               {"n", 25.3e-3}, {"n", 1e-6}, {"p", 1e6}}
for _, c in ipairs(cases) do
  local b = pf.beam{particle = c[1], kinetic_energy = c[2] * e}
  print(string.format("beam %s %.17g %.17g %.17g %.17g %.17g %.17g %.17g", c[1], c[2], b.wavelength, b.wavenumber,
    b.velocity, b.gamma, b.transverse_mass, b.flight_time(0.37)))
end
local m = pf.mass("87Rb")
for _, d in ipairs{{3, 0, false}, {1, 2 * math.pi * 30e3, false}, {1, 2 * math.pi * 30e3, true},
                   {2, 2 * math.pi * 4e3, false}} do
  local c = pf.coupling{scattering_length = 5.3e-9, atoms = 12345, mass = m, dim = d[1],
                        transverse_omega = d[1] < 3 and d[2] or nil, olshanii = d[3]}
  print(string.format("coupling %d %.17g %s %.17g %.17g", d[1], d[2], tostring(d[3]), m, c.g))
end
LUA
"$runner" run "$tmp/print.lua" --out "$tmp/out" > "$tmp/values.txt" || { echo "FAIL runner"; exit 1; }
"$py" - "$tmp/values.txt" <<'PY'
import math, sys
import scipy.constants as sc
mass = {"e": sc.m_e, "n": sc.m_n, "p": sc.m_p}
bad = 0
def near(got, want, label, rel=1e-12):
    global bad
    err = abs(got - want) / abs(want)
    if err <= rel:
        print(f"ok {label:58s} rel {err:.2e}  [scipy.constants, CODATA 2018]")
    else:
        print(f"FAIL {label}: got {got!r}, want {want!r} (rel {err:.3e} > {rel})")
        bad += 1
n = 0
for line in open(sys.argv[1]):
    f = line.split()
    if f[0] == "beam":
        m0, ev = mass[f[1]], float(f[2])
        E = ev * sc.e
        c = sc.c
        p = math.sqrt(2 * m0 * E * (1 + E / (2 * m0 * c * c)))
        gamma = 1 + E / (m0 * c * c)
        v = p * c * c / (E + m0 * c * c)
        want = [sc.h / p, 2 * math.pi * p / sc.h, v, gamma, gamma * m0, 0.37 / v]
        names = ["wavelength", "wavenumber", "velocity", "gamma", "transverse mass", "flight time 0.37 m"]
        for got, w, nm in zip(map(float, f[3:9]), want, names):
            near(got, w, f"{f[1]} {ev:g} eV {nm}")
            n += 1
    elif f[0] == "coupling":
        dim, w, olsh, m, g = int(f[1]), float(f[2]), f[3] == "true", float(f[4]), float(f[5])
        a, N, hb = 5.3e-9, 12345, sc.hbar
        if dim == 3:
            want = 4 * math.pi * hb**2 * a * N / m
        elif dim == 1:
            aperp = math.sqrt(hb / (m * w))
            want = 2 * hb * w * a * N / ((1 - 1.0326 * a / aperp) if olsh else 1)
        else:
            az = math.sqrt(hb / (m * w))
            want = 2 * math.sqrt(2 * math.pi) * hb**2 * a * N / (m * az)
        near(g, want, f"coupling {dim}D olshanii={olsh}")
        n += 1
if n != 52:
    print(f"FAIL expected 52 values, read {n}")
    bad += 1
sys.exit(1 if bad else 0)
PY
