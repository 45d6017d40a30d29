-- grating_gravity_aperture.lua - a multi-stage sequence in the (invented)
-- Tarnwick Hall atom-optics lab: a sodium-23 cloud is prepared in the ground
-- state of a 150 Hz trap, set sloshing by a sudden 2 um trap displacement,
-- released, diffracted by a thin standing-wave phase grating, left to fall
-- under gravity while the diffraction orders separate, cut down to the +1
-- order by a slit with rounded edges, refocused along the grating axis by a lens pulse, and
-- detected after a last fall.
--
-- Outputs are model predictions (single-atom Schroedinger dynamics on a
-- periodic grid, instantaneous thin pulses, hard-edged masks; no
-- interactions, no spontaneous emission).  Translating pulse depths and
-- focal times into laser powers and pulse durations is the experimenter's
-- job, under the lab's laser-safety rules and the supervision of its
-- qualified staff.
--
-- Run: build/psiflight run examples/grating_gravity_aperture.lua [--set depth=1.4] [--set slit=7um]
local pf = require "psiflight"
-- Every number a person may change, with its unit; the script receives SI.
local params = pf.parameters{
  trap   = {default = 150, unit = "Hz", help = "isotropic trap frequency", min = 20, max = 1000},
  slosh  = {default = 2, unit = "um", help = "sudden trap displacement along x"},
  depth  = {default = 1.4, unit = "rad", help = "grating pulse area"},
  period = {default = 4.0, unit = "um", help = "grating period (shallow-angle standing wave)", min = 2},
  fall   = {default = 2.5, unit = "ms", help = "fall between grating and slit"},
  slit   = {default = 7, unit = "um", help = "slit width around the +1 order"},
  lens   = {default = 3.0, unit = "ms", help = "focal time of the lens pulse"},
  last   = {default = 1.5, unit = "ms", help = "fall from the lens to the detector"},
}

-- CODATA 2018 constants and the 23Na mass from the engine's tables
-- (species table: AME2020).
local h, hbar = pf.constants.h, pf.constants.hbar
local mass = pf.mass("23Na")
local gravity = {0, -pf.constants.g_n}         -- standard gravity along -y (m/s^2)

-- x: spacing 0.31 um resolves the grating's harmonics up to order +-6
-- (k_n = 2 pi n / period below pi / dx) and holds them after the fall;
-- y holds the drop under gravity and the momentum it brings.
local grid = pf.grid{points = {512, 1024}, span = {160e-6, 160e-6}}
local y_trap = 40e-6                               -- trap centre height above the grid centre

-- The whole protocol as one function of its parameters: rerun it with
-- other numbers, or call it from a sweep.
local function run_sequence(p)
  local omega = 2 * math.pi * p.trap
  local k = 0.5 * mass * omega * omega
  local function trap(dx)
    return function(x, y) return k * ((x - dx) ^ 2 + (y - y_trap) ^ 2) end
  end
  local aho = math.sqrt(hbar / (mass * omega))
  local w = pf.wave(grid, {mass = mass, position = function(x, y)
    return math.exp(-(x * x + (y - y_trap) ^ 2) / (3 * aho * aho))   -- a rough guess
  end})
  local _, gs = w:relax{potential = trap(0), tolerance = 1e-9}
  print(string.format("ground state: E = %.6f hbar omega (harmonic oscillator: 1), %d imaginary-time steps",
    gs.energy / (hbar * omega), gs.steps))

  -- Sudden trap displacement: 1 ms of sloshing, fourth-order split-step.
  w:evolve(1e-3, {potential = trap(p.slosh), dt = 10e-6, order = 4})
  print(string.format("after 1 ms in the displaced trap: <x> = %.3f um, <v_x> = %.3f mm/s (classical %.3f, %.3f)",
    w:position_mean() * 1e6, w:velocity_mean() * 1e3,
    p.slosh * 1e6 * (1 - math.cos(omega * 1e-3)), p.slosh * omega * math.sin(omega * 1e-3) * 1e3))

  w:fly(0.3e-3)                                                          -- release
  w:grating{depth = p.depth, period = p.period}               -- thin phase grating along x
  w:fall(p.fall, gravity)                                     -- orders separate while falling
  local v_order = h / (mass * p.period)
  local x_plus = w:position_mean() + v_order * p.fall   -- +1 order centre
  -- The slit is the image of a razor-edge mask, so its edges are rounded
  -- over about 0.4 um (a hard-edged w:slit would scatter a little
  -- probability to wave numbers this grid cannot hold).
  local x1, x2, edge = x_plus - 0.5 * p.slit, x_plus + 0.5 * p.slit, 0.4e-6
  local _, lost = w:mask(function(x, y)
    return 0.25 * (1 + math.tanh((x - x1) / edge)) * (1 + math.tanh((x2 - x) / edge))
  end)
  print(string.format("slit of %.1f um at x = %.2f um keeps the +1 order: %.1f%% of the atoms removed",
    p.slit * 1e6, x_plus * 1e6, 100 * lost))
  w:lens(p.lens, {axis = 1, center = {x_plus, 0}})           -- refocus along x only
  w:fall(p.last, gravity)
  return w
end

local w = run_sequence(params)
local mx, my = w:position_mean()
local sx, sy = w:position_width()
print(string.format("detector: <x> = %.2f um, <y> = %.2f um, widths %.3f um (x) x %.3f um (y), surviving fraction %.4f",
  mx * 1e6, my * 1e6, sx * 1e6, sy * 1e6, w:norm()))
print(string.format("free fall check: y drop over the %.1f ms under gravity = %.2f um (g t^2 / 2 = %.2f um plus drift)",
  (params.fall + params.last) * 1e3, (y_trap - my) * 1e6, 0.5 * pf.constants.g_n * (params.fall + params.last) ^ 2 * 1e6))
print()
print(w:log_text())

-- Files: the state at the detector (HDF5) and its density map (PNG).
local h5 <close> = pf.h5file("detector.h5")
h5:put_wave("detector", w)
h5:put_table("steps", w:log_columns())
h5:close()
pf.picture_map("detector.png", w, {title = "23Na at the detector after grating, slit and lens"})
