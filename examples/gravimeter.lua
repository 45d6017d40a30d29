-- gravimeter.lua - the (invented) Larchmoor field gravimeter: 87Rb, Raman
-- beams at 780.24 nm, pi/2 - pi - pi/2 pulses of 5/10/5 us, T = 1 ms.  As a
-- real light-pulse gravimeter does, it chirps the Raman frequency and looks
-- for the chirp rate alpha at which the fringe phase
-- (k_eff g - alpha)(T + 2 tau)(T + 4 tau / pi) vanishes: there alpha = k_eff g
-- (M. Kasevich and S. Chu, Phys. Rev. Lett. 67, 181 (1991); finite-pulse
-- factor from P. Cheinet et al., IEEE Trans. Instrum. Meas. 57, 1141 (2008),
-- quoted from memory).  The model computes the phase through the flight
-- (bundled recipe mach_zehnder on pf.levels), with the fall carried by the
-- levels' shared moving frame (frame = true): the grid holds the cloud and
-- the two arms, not the drop, so long flights fit on small grids.
--
-- Writes the chirp scan (CSV, PNG) and the densities of the two exit ports at
-- the null on lab axes (HDF5).  Apparatus: outputs are model predictions (rotating-wave
-- approximation, no spontaneous emission, no light shift, no vibration);
-- laser work follows local laser safety rules and qualified staff.
--
-- Run: build/psiflight run examples/gravimeter.lua [--set T=2ms] [--set local_g=9.8123m/s2]
-- (the chirp scan spans 0.4 % of k_eff g_n: longer T wraps the fringe phase
-- across the scan; narrow the scan before going there)
local pf = require "psiflight"
local common = require "psiflight.recipes.common"
local mz = require "psiflight.recipes.mach_zehnder"
local p = pf.parameters{
  T        = {default = 1, unit = "ms", help = "free flight between the pulses", min = 0.1, max = 5},
  tau      = {default = 5, unit = "us", help = "pi/2 pulse duration", min = 0.1, max = 50},
  local_g  = {default = 9.8123, unit = "m/s2", help = "gravity the model cloud falls with (invented site value)"},
  chirps   = {default = 9, type = "integer", help = "chirp rates scanned around k_eff g", min = 3, max = 101},
}
pf.setup{planning = "estimate"}
local keff = 4 * math.pi / 780.24e-9
-- The recipe's parameters in SI units (what pf.parameters hands a recipe).
local settings = {
  mass = pf.mass("87Rb"), wavelength = 780.24e-9, T = p.T, pulse_time = p.tau, accel = p.local_g, sigma = 4e-6,
  phase_steps = 4, area_scale = 1, max_points = 16384, slices = 16, chirp = 0, frame = true,
}
local guess = keff * 9.80665 -- a chirp rate from standard gravity
local span = 4e-3 * guess
local rates, phases = {}, {}
print(string.format("psiflight example: Larchmoor gravimeter, 87Rb, T = %.3g ms, tau = %.3g us", p.T * 1e3, p.tau * 1e6))
for i = 1, p.chirps do
  local alpha = guess - span / 2 + span * (i - 1) / (p.chirps - 1)
  settings.chirp = alpha
  local out = mz.run(settings)
  rates[i], phases[i] = alpha, out.results.fringe_phase[1]
  print(string.format("  chirp %.9e rad/s^2   fringe phase %+.6f rad   contrast %.4f", alpha, phases[i],
    out.results.fringe_contrast[1]))
end
-- The phase is linear in alpha near the null: fit a line, read the zero.
local n, sx, sy, sxx, sxy = #rates, 0, 0, 0, 0
for i = 1, n do
  local x = rates[i] - guess
  sx, sy, sxx, sxy = sx + x, sy + phases[i], sxx + x * x, sxy + x * phases[i]
end
local slope = (n * sxy - sx * sy) / (n * sxx - sx * sx)
local icpt = (sy - slope * sx) / n
local null = guess - icpt / slope
local g_est = null / keff
print(string.format("null at chirp %.9e rad/s^2: g = %.7f m/s^2 (model input %.7f, difference %.2e)", null, g_est,
  p.local_g, g_est - p.local_g))
print(string.format("slope %.4e rad per rad/s^2 (finite-pulse expression: %.4e)", slope,
  -(p.T + 2 * p.tau) * (p.T + 4 * p.tau / math.pi)))
pf.report("g_estimate", g_est, "m/s^2")
pf.report("chirp_null", null, "rad/s^2")

local csv = pf.write_csv("gravimeter_scan.csv", {{"chirp", "rad/s^2", rates}, {"fringe_phase", "rad", phases}})
local offsets = {}
for i, r in ipairs(rates) do offsets[i] = (r - guess) / keff end
local png = pf.picture_lines("gravimeter_scan.png", {
  title = "fringe phase against the chirp (as g = alpha / k_eff - g_n)", x_name = "alpha / k_eff - g_n (m/s^2)",
  x_quantity = "plain", y_name = "fringe phase (rad)", series = {{x = offsets, y = phases, label = "model", points = true}},
})
settings.chirp = null
local at_null = mz.run(settings)
local f <close> = pf.h5file("gravimeter_null.h5")
f:put_density("lower", at_null.ports.lower)
f:put_density("upper", at_null.ports.upper)
f:put_value("g_estimate", g_est, "m/s^2")
local h5 = f:close()
print("outputs:")
for _, path in ipairs{csv, png, h5} do print("  " .. path) end
