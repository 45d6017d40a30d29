-- ramsey_clock.lua - a Ramsey sequence on the cesium clock transition in the
-- (invented) Quillfeather fountain lab: two microwave pi/2 pulses separated
-- by a free flight T, with the microwave frequency scanned across the
-- resonance.  The transition probability forms Ramsey fringes of width
-- about 1 / (2 T) (N. F. Ramsey, Phys. Rev. 78, 695 (1950)).
--
-- The level splitting is the SI definition of the second (9 192 631 770 Hz);
-- the microwave transfers no momentum, so the fringes do not depend on the
-- cloud's motion.  Writes the fringe scan (CSV, PNG) and the final state of
-- both levels at the central frequency (HDF5).
--
-- Run: build/psiflight run examples/ramsey_clock.lua [--set ramsey_time=20ms] [--set rabi=2kHz]
local pf = require "psiflight"
local p = pf.parameters{
  ramsey_time = {default = 10, unit = "ms", help = "free flight T between the pulses", min = 0.1, max = 1000},
  rabi        = {default = 1, unit = "kHz", help = "microwave Rabi frequency Omega / 2 pi", min = 0.01, max = 100},
  scan        = {default = 250, unit = "Hz", help = "half range of the frequency scan", min = 1, max = 1e5},
  points      = {default = 101, type = "integer", help = "frequencies in the scan", min = 5, max = 2001},
}
local C = pf.constants
local h, hbar, pi = C.h, C.hbar, math.pi
local f_clock = 9192631770                 -- Hz, exact: the SI definition of the second
local omega = 2 * pi * p.rabi              -- rad/s
local tau = pi / (2 * omega)               -- pi/2 pulse
local T = p.ramsey_time

pf.setup{planning = "estimate"}
local grid = pf.grid{points = 256, span = 400e-6}
local cloud = pf.gaussian(grid, {mass = "133Cs", width = 20e-6})

local function sequence(df)
  local lv = pf.levels{labels = {"F3", "F4"}, energies = {0, h * f_clock}, waves = {F3 = cloud}}
  local w_mw = 2 * pi * (f_clock + df)
  lv:pulse{from = "F3", to = "F4", rabi = omega, duration = tau, omega = w_mw}
  lv:fly(T)
  lv:pulse{from = "F3", to = "F4", rabi = omega, duration = tau, omega = w_mw}
  return lv
end

print(string.format("psiflight example: Ramsey fringes of 133Cs, T = %.4g ms, pi/2 pulses of %.4g us (Quillfeather lab)",
  T * 1e3, tau * 1e6))
local detunings, probability = {}, {}
for i = 1, p.points do
  local df = -p.scan + 2 * p.scan * (i - 1) / (p.points - 1)
  local lv = sequence(df)
  detunings[i], probability[i] = df, lv:populations().F4
  lv:close()
end
local fit = pf.fringes(detunings, probability, {period = 1 / T})
-- Finite pulses lengthen the effective interrogation time to about
-- T + 4 tau / pi for square pi/2 pulses of length tau (a standard result for
-- Ramsey interrogation, quoted here from memory).
print(string.format("fringe period %.4f Hz; 1/T = %.4f Hz; 1/(T + 4 tau/pi) = %.4f Hz; visibility %.4f", fit.period,
  1 / T, 1 / (T + 4 * tau / pi), fit.visibility))
pf.report("fringe_period", fit.period, "Hz")
pf.report("visibility", fit.visibility, "")

local csv = pf.write_csv("ramsey_scan.csv", {{"detuning", "Hz", detunings}, {"probability_F4", "", probability}})
local png = pf.picture_lines("ramsey_fringes.png", {
  title = string.format("Ramsey fringes, T = %.3g ms", T * 1e3), x_name = "microwave detuning (Hz)", x_quantity = "plain",
  y_name = "P(F=4)", series = {{x = detunings, y = probability, label = "model"}},
})
local centre = sequence(0)
local f <close> = pf.h5file("ramsey_final.h5")
f:put_wave("F3", centre:level("F3"))
f:put_wave("F4", centre:level("F4"))
f:put_value("probability_F4_at_resonance", centre:populations().F4, "")
local h5 = f:close()
print("outputs:")
for _, path in ipairs{csv, png, h5} do print("  " .. path) end
