-- probe_potential.lua - pf.potential objects on a distributed grid, for
-- tests/runner/test_distributed.sh (run as one process and under mpirun
-- with pf.setup{distribute = true}; tags as in probe_flight.lua: "exact"
-- the same bits everywhere, "flown" the same bits at every rank count and
-- within 1e-14 of one process, "law" against a closed form; "same" lines
-- hold the largest relative difference between the object and the same
-- potential given as a function, rounding only).
-- Invented scene: a 87Rb pancake in the (invented) Tolworth crossed trap,
-- 26 x 24 points (7, 7, 7, 5 planes on 4 ranks): relaxed, kicked and evolved
-- in many short calls through one object (its exponentials kept between
-- calls), with a mean field, and under a uniform acceleration (the object's
-- tilted table kept for the acceleration and mass).
local pf = require "psiflight"
pf.setup{distribute = true, planning = "estimate", guard_threshold = math.huge}
local hbar = pf.constants.hbar
local mass = pf.mass("87Rb")
local function line(tag, ...)
  local parts = {}
  for i, v in ipairs({...}) do parts[i] = string.format("%.17g", v) end
  print(tag .. " " .. table.concat(parts, " "))
end
local info = pf.mpi_info()
print(string.format("ranks %d distribute %s", info.ranks, tostring(info.distribute)))
local wx, wy = 2 * math.pi * 80, 2 * math.pi * 110
local g = pf.grid{points = {26, 24}, span = {14e-6, 12e-6}}
local function V(x, y) return 0.5 * mass * (wx ^ 2 * x ^ 2 + wy ^ 2 * y ^ 2) end
local trap = pf.potential(g, V)
line("exact range", trap:range())
-- The same potential from a table of every grid point (row-major): each
-- rank reads the entries of its own points.
local values = {}
for i = 1, 26 do
  for j = 1, 24 do values[#values + 1] = V(g:x(1, i), g:x(2, j)) end
end
local tabled = pf.potential(g, values)
line("exact tablerange", tabled:range())

-- Every figure of a wave evolved through the object and through the
-- function, and their largest difference (a plain loop over both).
local function figures(w)
  local mx, my = w:position_mean()
  local sx, sy = w:position_width()
  local kx, ky = w:wavenumber_mean()
  local qx, qy = w:wavenumber_width()
  return {w:norm(), mx, my, sx, sy, kx, ky, qx, qy}
end
-- Relative to each figure's scale: the norm, the widths, and for a mean
-- its width (a mean near zero is judged on the cloud's size).
local function differ(a, b)
  local scale = {1, a[4], a[5], a[4], a[5], a[8], a[9], a[8], a[9]}
  local m = 0
  for i = 1, #a do m = math.max(m, math.abs(a[i] - b[i]) / scale[i]) end
  return m
end
local function start() return pf.gaussian(g, {mass = mass, center = {0.3e-6, -0.3e-6}, width = {1.0e-6, 0.8e-6}}) end
-- One line per quantity, so each is compared on its own scale: the norm;
-- each mean beside its width.
local function show(name, f)
  line("flown " .. name .. "_norm", f[1])
  line("flown " .. name .. "_x", f[2], f[4])
  line("flown " .. name .. "_y", f[3], f[5])
  line("flown " .. name .. "_kx", f[6], f[8])
  line("flown " .. name .. "_ky", f[7], f[9])
end

-- Linear ground state: E = hbar (wx + wy) / 2 (harmonic oscillator, textbook).
local w = start()
local _, r0 = w:relax{potential = trap, dt = 1e-5, tolerance = 1e-13, max_steps = 4000, check_every = 20}
local wf = start()
local _, rf = wf:relax{potential = V, dt = 1e-5, tolerance = 1e-13, max_steps = 4000, check_every = 20}
line("flown relax", r0.energy, r0.chemical_potential, r0.steps)
line("same relax", differ(figures(w), figures(wf)), math.abs(r0.energy - rf.energy) / rf.energy)
line("law energy0", r0.energy, hbar * (wx + wy) / 2)
local ew = w:energy{potential = trap}
line("flown energy", ew)
line("same energy", math.abs(ew - w:energy{potential = V}) / ew, math.abs(ew - w:energy{potential = tabled}) / ew)

-- A kick, then 20 short calls of 50 us through the object (g = 0: its
-- exponentials are made once and kept), against the same calls with the
-- function (exponentials made at every call).  The centre follows
-- x(t) = (hbar k / m omega) sin(omega t) (Kohn's theorem, textbook).
local k = 1.2e5
w:kick(k, 0)
wf:kick(k, 0)
local chunk, calls = 5e-5, 20
for _ = 1, calls do
  w:evolve(chunk, {potential = trap, dt = 1e-5})
  wf:evolve(chunk, {potential = V, dt = 1e-5})
end
show("chunked", figures(w))
line("same chunked", differ(figures(w), figures(wf)))
local t = chunk * calls
line("law kohn", (w:position_mean()), hbar * k / (mass * wx) * math.sin(wx * t))

-- With a mean field (invented 2D coupling): exponentials per step.
local gc = 4e-44
w:evolve(5e-4, {potential = trap, g = gc, dt = 1e-5})
wf:evolve(5e-4, {potential = V, g = gc, dt = 1e-5})
show("meanfield", figures(w))
line("same meanfield", differ(figures(w), figures(wf)))
line("flown gpenergy", w:energy{potential = trap, g = gc})

-- Under a uniform acceleration: the object keeps V - m a.x of its own
-- points and its exponentials for this acceleration and mass.  From the
-- trap's ground state the centre follows (a / omega^2)(1 - cos omega t)
-- (textbook; Ehrenfest's theorem is exact in a quadratic trap).
local acc = {0.04, -0.03}
local u = pf.ground_state(g, {mass = mass, omega = {wx, wy}})
local uf = pf.ground_state(g, {mass = mass, omega = {wx, wy}})
for _ = 1, 10 do
  u:evolve(1e-4, {potential = trap, acceleration = acc, dt = 1e-5})
  uf:evolve(1e-4, {potential = V, acceleration = acc, dt = 1e-5})
end
show("tilted", figures(u))
line("same tilted", differ(figures(u), figures(uf)))
local cs = trap:cache_status()
print(string.format("cache builds %d reuses %d", cs.tilted_builds, cs.tilted_reuses))
local ux, uy = u:position_mean()
line("law tiltx", ux, acc[1] / wx ^ 2 * (1 - math.cos(wx * 1e-3)))
line("law tilty", uy, acc[2] / wy ^ 2 * (1 - math.cos(wy * 1e-3)))
-- A potential object made from a wave (its lab offset recorded) relaxes
-- the wave under the acceleration: the ground state sags by a / omega^2.
local near = pf.potential(u, V)
u:relax{potential = near, acceleration = acc, dt = 1e-5, tolerance = 1e-13, max_steps = 4000, check_every = 20}
local sx, sy = u:position_mean()
line("flown sag", sx, sy)
line("law sagx", sx, acc[1] / wx ^ 2)
line("law sagy", sy, acc[2] / wy ^ 2)
for _, x in ipairs({w, wf, u, uf}) do x:close() end
trap:close()
tabled:close()
near:close()
