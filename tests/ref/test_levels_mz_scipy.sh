#!/usr/bin/env bash
# test_levels_mz_scipy.sh - a light-pulse Mach-Zehnder with finite pulses
# (durations tau, 2 tau, tau; square and Gaussian envelopes) under a uniform
# acceleration acting throughout, with a chirped detuning, in the levels'
# shared moving frame, against a direct integration with scipy
# (scipy.integrate.solve_ivp, DOP853, rtol 1e-12) of the two-level equations
# of one momentum class.  For a plane wave of lab wave number
# k(t) = k0 + m a t / hbar in the lower level and its partner k(t) + K in the
# upper one (a uniform force keeps a plane wave plane; common practice):
#   i dA/dt = Omega(t)/2 exp(-i (Phi(t) + theta(t))) B
#   i dB/dt = Omega(t)/2 exp(+i (Phi(t) + theta(t))) A
#   Phi = phase - delta t - chirp t^2 / 2   (the laser phase, docs/internal-states.md)
#   theta = integral of (hbar / 2m)((k + K)^2 - k^2) dt
#         = (hbar K k0 / m + hbar K^2 / 2m) t + K a t^2 / 2
# (the interaction picture of the kinetic energies; common practice).  Between
# pulses A and B stay constant.  The engine cuts each pulse into Strang
# slices (error of order (duration / slices)^2); the tolerances are set from
# that order with the slice counts below.
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
local hbar, pi = pf.constants.hbar, math.pi
local g = pf.grid{points = 256, span = 100e-6}
local dk = g:kspacing()
local m = pf.mass("87Rb")
local K = 100 * dk
local wr = hbar * K^2 / (2 * m)
-- case: envelope, acceleration (m/s^2), T (s), tau (s), chirp / (K a), class k0 (in dk), last phase, slices
local cases = {
  {"square", -9.81, 2e-3, 20e-6, 0.0, 0, 0.0, 64},
  {"square", -9.81, 2e-3, 20e-6, 0.5, 0, 1.3, 64},
  {"square", -9.81, 2e-3, 20e-6, 0.0, 3, 0.4, 64},
  {"square", 2.5, 1e-3, 30e-6, 0.0, -5, 2.0, 64},
  {"gaussian", -9.81, 2e-3, 20e-6, 0.0, 0, 0.0, 64},
  {"gaussian", -9.81, 2e-3, 20e-6, 0.3, 2, 0.9, 64},
}
for _, c in ipairs(cases) do
  local env, a, T, tau, alpha, j, phi3, slices = table.unpack(c)
  local k0 = j * dk
  local chirp = alpha * K * a
  local w = pf.wave(g, {mass = "87Rb", position = function(x) return pf.polar(1, k0 * x) end})
  local lv = pf.levels{labels = {"a", "b"}, waves = {a = w}, frame = true}
  local width = tau / 3 -- Gaussian: rms width of Omega(t), window 2 tau per unit of tau (6 widths)
  local function pulse(units, area, ph)
    local o = {from = "a", to = "b", wavenumber = K, detuning = wr, phase = ph, chirp = chirp, acceleration = a,
               slices = slices, area = area}
    if env == "square" then o.duration = units * tau
    else o.envelope = "gaussian"; o.width = units * width; o.duration = 6 * units * width end
    lv:pulse(o)
  end
  local d1 = env == "square" and tau or 2 * tau
  pulse(1, pi / 2, 0); lv:fly(T, {acceleration = a})
  pulse(2, pi, 0); lv:fly(T, {acceleration = a})
  pulse(1, pi / 2, phi3)
  print(string.format("%s %.17g %.17g %.17g %.17g %.17g %.17g %.17g %.17g %.17g %d %.17g %.17g", env, m, K, wr, a, T,
                      tau, chirp, k0, phi3, slices, width, lv:populations().b))
  lv:close()
end
LUA
"$runner" run "$tmp/print.lua" --out "$tmp/out" > "$tmp/values.txt" || { echo "FAIL runner"; cat "$tmp/values.txt"; exit 1; }
"$py" - "$tmp/values.txt" <<'PY'
import sys
import numpy as np
from scipy.integrate import solve_ivp
from scipy.special import erf
hbar = 1.054571817e-34  # h / 2 pi, h exact in the SI since 2019 (CODATA 2018)
bad = 0
for line in open(sys.argv[1]):
    f = line.split()
    env = f[0]
    mass, K, delta, a, T, tau, chirp, k0, phi3 = map(float, f[1:10])
    slices = int(f[10]); width = float(f[11]); got = float(f[12])
    # pulses: (start, length, area, phase, rms width of a Gaussian)
    if env == "square":
        lens = [tau, 2 * tau, tau]
    else:
        lens = [6 * width, 12 * width, 6 * width]
    widths = [width, 2 * width, width]
    starts = [0.0, lens[0] + T, lens[0] + T + lens[1] + T]
    areas = [np.pi / 2, np.pi, np.pi / 2]
    phases = [0.0, 0.0, phi3]
    def theta(t):
        return (hbar * K * k0 / mass + hbar * K * K / (2 * mass)) * t + K * a * t * t / 2
    y = np.array([1.0, 0.0, 0.0, 0.0])  # Re A, Re B, Im A, Im B
    for t0, L, area, ph, sw in zip(starts, lens, areas, phases, widths):
        if env == "square":
            peak = area / L
            rabi = lambda t, t0=t0, peak=peak: peak
        else:
            # the peak for a pulse area over the window: the Gaussian integral with erf (common practice)
            peak = area / (sw * np.sqrt(2 * np.pi) * erf(L / (2 * np.sqrt(2) * sw)))
            rabi = lambda t, t0=t0, L=L, sw=sw, peak=peak: peak * np.exp(-0.5 * ((t - t0 - L / 2) / sw) ** 2)
        def rhs(t, v, rabi=rabi, ph=ph):
            A = v[0] + 1j * v[2]; B = v[1] + 1j * v[3]
            p = ph - delta * t - chirp * t * t / 2 + theta(t)
            dA = -1j * 0.5 * rabi(t) * np.exp(-1j * p) * B
            dB = -1j * 0.5 * rabi(t) * np.exp(1j * p) * A
            return [dA.real, dB.real, dA.imag, dB.imag]
        sol = solve_ivp(rhs, (t0, t0 + L), y, method="DOP853", rtol=1e-12, atol=1e-14)
        y = sol.y[:, -1]
    want = y[1] ** 2 + y[3] ** 2
    tol = 1e-6  # measured up to 6e-7 with 64 slices, 5e-8 with 256 (second order)
    err = abs(got - want)
    what = f"{env:8s} a {a:+.2f} T {T:.0e} chirp/Ka {chirp / (K * a):.1f} k0 {k0:+.3g} phi3 {phi3:.1f} slices {slices}"
    if err <= tol:
        print(f"ok Mach-Zehnder exit port {what}: |diff| {err:.2e} (tol {tol:.0e})  [scipy solve_ivp DOP853 of the two-level class equations]")
    else:
        print(f"FAIL Mach-Zehnder exit port {what}: got {got!r}, want {want!r}, |diff| {err:.3e} > {tol}")
        bad += 1
sys.exit(1 if bad else 0)
PY
