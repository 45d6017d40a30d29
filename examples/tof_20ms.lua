-- tof_20ms.lua - worked example for docs/long-flights.md: a 20 ms
-- time-of-flight of a lithium-7 atom released from the ground state of an
-- optical tweezer in the (invented) Larkspur Annex atom-optics lab.  The
-- tweezer is tight radially (2 pi x 5 kHz, axis x) and looser along its beam
-- (2 pi x 1.1 kHz, axis y); the packet starts a fraction of a micrometre wide
-- and is about a quarter of a millimetre wide after 20 ms.
--
-- The model: one non-interacting atom, free flight only (no gravity, no
-- residual fields, no interactions), starting in the harmonic-oscillator
-- ground state.  The numbers are model predictions, not measurements.
--
-- It shows: the grid advisor (same-grid versus scaled memory), the choosing
-- flight w:fly_long with its report, snapshots at 5, 10 and 20 ms, the
-- far-field image and its Fraunhofer number, and the guard figures.
--
-- Run: build/psiflight run examples/tof_20ms.lua [--set tof=15ms] [--set trap_x=4kHz] [--strict]
local pf = require "psiflight"
local p = pf.parameters{
  tof    = {default = 20, unit = "ms", help = "time of flight after release", min = 0.1, max = 100},
  trap_x = {default = 5000, unit = "Hz", help = "tweezer trap frequency across the beam (axis x)", min = 10},
  trap_y = {default = 1100, unit = "Hz", help = "tweezer trap frequency along the beam (axis y)", min = 10},
}

-- CODATA 2018 hbar and the 7Li atomic mass from the engine's species table
-- (AME2020).
local hbar = pf.constants.hbar
local mass = pf.mass("7Li")
local omega = {2 * math.pi * p.trap_x, 2 * math.pi * p.trap_y}
local tof = p.tof

-- Ground-state widths sqrt(hbar / 2 m omega) (harmonic oscillator, textbook).
local s0 = {math.sqrt(hbar / (2 * mass * omega[1])), math.sqrt(hbar / (2 * mass * omega[2]))}
local function width_law(s, t) return s * math.sqrt(1 + (hbar * t / (2 * mass * s * s)) ^ 2) end

print(string.format("7Li released from a %.4g kHz x %.4g kHz tweezer (Larkspur Annex); time of flight %.1f ms",
  p.trap_x / 1e3, p.trap_y / 1e3, tof * 1e3))
print(string.format("initial rms widths %.3f x %.3f um", s0[1] * 1e6, s0[2] * 1e6))

-- 1. Ask the advisor what each method needs for this flight.
local adv = pf.grid_advice{mass = mass, time = tof, width = s0}
local sg, sc = adv.same_grid, adv.scaled
print(string.format("same-grid method: %d x %d points over %.2f x %.2f mm, %.0f MiB",
  sg.points[1], sg.points[2], sg.span[1] * 1e3, sg.span[2] * 1e3, sg.memory / 2 ^ 20))
print(string.format("scaled method:    %d x %d points over %.2f x %.2f um, %.2f MiB",
  sc.input.points[1], sc.input.points[2], sc.input.span[1] * 1e6, sc.input.span[2] * 1e6, sc.memory / 2 ^ 20))

-- 2. Build the state on the advisor's input grid.
-- The builders check that the smallest feature spans at least 3 grid
-- spacings, a little more than the advisor's minimum; 128 points per axis
-- satisfy both.
local grid = pf.grid{points = {math.max(sc.input.points[1], 128), math.max(sc.input.points[2], 128)},
                     span = sc.input.span}
local atom = pf.ground_state(grid, {mass = mass, omega = omega})

-- 3. Snapshots.  Each long flight continues from the last: the engine first
-- returns to where the previous scaled flight started (exact) and flies the
-- whole time from there (see the step log below).
print(" t (ms)  method     spacing (um)   sigma_x (um)  textbook     sigma_y (um)  textbook     aspect y/x")
local flown = 0
for _, frac in ipairs{0.25, 0.5, 1.0} do
  local t = frac * tof
  local _, rep = atom:fly_long(t - flown)
  flown = t
  local wx, wy = atom:position_width()
  local g = atom:grid()
  print(string.format("%7.2f  %-9s  %5.2f x %5.2f  %11.4f  %11.4f  %11.4f  %11.4f   %8.4f",
    t * 1e3, rep.method, g:spacing(1) * 1e6, g:spacing(2) * 1e6,
    wx * 1e6, width_law(s0[1], t) * 1e6, wy * 1e6, width_law(s0[2], t) * 1e6, wy / wx))
end

-- 4. Far-field image from the momentum distribution of a fresh copy of the
-- initial state, with its validity figure.
local start = pf.ground_state(grid, {mass = mass, omega = omega})
local image, info = start:far_field(tof)
local exact = atom:density()
local ig, eg = info.grid, atom:grid()
local ci = (ig:points(1) // 2) * ig:points(2) + ig:points(2) // 2 + 1
local ce = (eg:points(1) // 2) * eg:points(2) + eg:points(2) // 2 + 1
print(string.format("far-field image: Fraunhofer numbers %.2e, %.2e; peak density far-field / exact = %.8f",
  info.fraunhofer[1], info.fraunhofer[2], image[ci] / exact[ce]))
print(string.format("  expected from the width law: sqrt(1 + 4 N_F^2) per axis -> %.8f",
  math.sqrt(1 + 4 * info.fraunhofer[1] ^ 2) * math.sqrt(1 + 4 * info.fraunhofer[2] ^ 2)))

-- Files: the state after the flight and the far-field image (HDF5), its map (PNG).
local h5 <close> = pf.h5file("tof_20ms.h5")
h5:put_wave("after_flight", atom)
h5:put_density("after_flight_density", atom)
h5:close()
pf.picture_map("tof_20ms.png", atom, {title = string.format("7Li after %.0f ms of flight", tof * 1e3)})

-- 5. Guard figures and the step log.
local gd = atom:guard()
print(string.format("guard: outer-band probability in position %.1e, %.1e (threshold %.0e)",
  gd.position[1], gd.position[2], gd.threshold))
print("step log:")
io.write(atom:log_text())
