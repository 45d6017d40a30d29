-- probe_evolve.lua - split-step figures of a 2D condensate, for
-- tests/runner/test_distributed.sh (run as one process and under mpirun
-- with pf.setup{distribute = true}; tags as in probe_flight.lua: "exact"
-- the same bits everywhere, "flown" the same bits at every rank count and
-- close to one process, "law" against a closed form).
-- Invented scene: a pancake of 87Rb in a 2D harmonic trap, relaxed without
-- and with a mean field, kicked, evolved, cut by a slit, imprinted and
-- masked in position and momentum.
local pf = require "psiflight"
pf.setup{distribute = true, planning = "estimate", guard_threshold = math.huge}
local hbar = pf.constants.hbar
local mass = pf.mass("87Rb")
local wx, wy = 2 * math.pi * 60, 2 * math.pi * 90
local g = pf.grid{points = {18, 24}, span = {16e-6, 14e-6}}
local function trap(x, y) return 0.5 * mass * (wx ^ 2 * x ^ 2 + wy ^ 2 * y ^ 2) end
local function line(tag, ...)
  local parts = {}
  for i, v in ipairs({...}) do parts[i] = string.format("%.17g", v) end
  print(tag .. " " .. table.concat(parts, " "))
end
local w = pf.wave(g, {mass = mass, position = function(x, y) return math.exp(-(x ^ 2 + y ^ 2) / 8e-12) end})
line("exact start", w:norm())
line("exact startw", w:position_width())
-- Linear ground state: E = hbar (wx + wy) / 2 (harmonic oscillator, textbook).
local _, r0 = w:relax{potential = trap, dt = 2e-5, tolerance = 1e-13, max_steps = 4000, check_every = 20}
line("flown relax0", r0.energy, r0.chemical_potential)
line("flown steps0", r0.steps)
line("law energy0", r0.energy, hbar * (wx + wy) / 2)
-- With a mean field (2D coupling, invented value).
local gc = 5e-44
local _, r1 = w:relax{potential = trap, g = gc, dt = 2e-5, tolerance = 1e-12, max_steps = 4000, check_every = 20}
line("flown relax1", r1.energy, r1.chemical_potential)
line("flown steps1", r1.steps)
line("flown relaxed", w:norm())
line("flown relaxedw", w:position_width())
-- A kick along x, then evolution in the trap with the mean field.  The
-- centre follows x(t) = (hbar k / m omega) sin(omega t) exactly in a
-- harmonic trap, with or without interactions (Kohn's theorem, textbook).
local k = 1.5e5
w:kick(k, 0)
line("flown kicked", w:norm())
line("noise kickedx", w:position_mean()) -- zero up to rounding: not compared
local t = 2.0e-3
local _, info = w:evolve(t, {potential = trap, g = gc, dt = 2e-5})
line("flown evolved", w:norm())
line("flown evolvedx", w:position_mean())
line("flown evolvedw", w:position_width())
line("flown evolvedk", w:wavenumber_mean())
line("flown steps", info.steps)
line("flown dt", info.dt)
local mx = w:position_mean()
line("law kohn", mx, hbar * k / (mass * wx) * math.sin(wx * t))
-- A slit of 4 um along x: the removed probability.
local _, removed = w:slit{width = 4e-6, axis = 1}
line("flown slit", removed, w:norm())
-- A phase imprint and a soft mask given as Lua functions, each rank
-- sampling its own points; then a momentum mask (transposed slab).
w:imprint(function(x, y) return 2e5 * x + 1e11 * y * y end)
local _, rm = w:mask(function(x, y) return math.exp(-(x / 5e-6) ^ 4) end)
line("flown mask", rm)
line("flown masked", w:norm())
line("flown maskedk", w:wavenumber_mean())
local _, rk = w:momentum_mask(function(kx, ky) return math.abs(kx) < 1.5e6 and 1 or 0 end)
line("flown kmask", rk)
line("flown kmasked", w:norm())
-- An envelope scaling the static trap, and a uniform force (acceleration)
-- with it: each rank samples the tilt -m a.x at its own points.  In a
-- harmonic trap the centre under a constant acceleration a follows
-- x(t) = (a / omega^2) (1 - cos(omega t)) from rest at the centre, and the
-- relaxed ground state sags by a / omega^2 (Ehrenfest's theorem is exact for
-- quadratic potentials; textbook).
local acc = {0.05, -0.04}
local v = pf.ground_state(g, {mass = mass, omega = {wx, wy}})
local te = 1.0e-3
v:evolve(te, {potential = trap, envelope = function(tt) return 1 - 0.2 * tt / te end, dt = 2e-5})
line("flown envelope", v:position_width())
line("flown envelopek", v:wavenumber_width())
local u = pf.ground_state(g, {mass = mass, omega = {wx, wy}})
local ta = 2.0e-3
u:evolve(ta, {potential = trap, acceleration = acc, dt = 2e-5})
line("flown accel", u:position_mean())
line("flown accelk", u:wavenumber_mean())
local ux, uy = u:position_mean()
line("law tiltx", ux, acc[1] / wx ^ 2 * (1 - math.cos(wx * ta)))
line("law tilty", uy, acc[2] / wy ^ 2 * (1 - math.cos(wy * ta)))
local _, ra = u:relax{potential = trap, acceleration = acc, dt = 2e-5, tolerance = 1e-13, max_steps = 4000, check_every = 20}
line("flown relaxa", ra.energy)
local sx, sy = u:position_mean()
line("law sagx", sx, acc[1] / wx ^ 2)
line("law sagy", sy, acc[2] / wy ^ 2)
local info2 = pf.mpi_info()
print(string.format("ranks %d distribute %s", info2.ranks, tostring(info2.distribute)))
