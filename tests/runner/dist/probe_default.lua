-- probe_default.lua - a distributed run in the DEFAULT planning mode
-- (measured FFTW plans; FFTW-MPI wisdom broadcast from rank 0 before
-- planning and gathered onto rank 0 after it), for
-- tests/runner/test_distributed.sh.  Every other probe plans with
-- "estimate" so its bits do not depend on the machine; this one leaves
-- pf.setup's planning alone, as users do, so the promise of
-- docs/distributed.md (figures within about 1e-14 of one process) is
-- tested in the mode people run.  Tags as in probe_flight.lua: "exact" the
-- same bits everywhere, "flown" close to one process, "law" against a
-- closed form.
-- Invented scene: a 87Rb packet of the (invented) Harrowgate beamline flies
-- freely in 3D, then a 2D pancake is kicked and evolves in its trap with a
-- mean field, and both are measured on the gathered density table.
local pf = require "psiflight"
pf.setup{distribute = true, guard_threshold = math.huge}
local hbar = pf.constants.hbar
local mass = pf.mass("87Rb")
local function line(tag, ...)
  local parts = {}
  for i, v in ipairs({...}) do parts[i] = string.format("%.17g", v) end
  print(tag .. " " .. table.concat(parts, " "))
end
local info = pf.mpi_info()
print(string.format("ranks %d distribute %s", info.ranks, tostring(info.distribute)))
print("planning " .. pf.run_info().planning)

-- 3D free flight; 18 planes split 5, 5, 5, 3 on 4 ranks.
local g3 = pf.grid{points = {18, 16, 20}, span = {30e-6, 24e-6, 28e-6}}
local s = {2.0e-6, 1.6e-6, 1.8e-6}
local c = {1.5e-6, -1e-6, 0.5e-6}
local k0 = 2.0e5
local w = pf.wave(g3, {mass = mass, normalize = true, position = function(x, y, z)
  local a = math.exp(-(x - c[1]) ^ 2 / (4 * s[1] ^ 2) - (y - c[2]) ^ 2 / (4 * s[2] ^ 2) - (z - c[3]) ^ 2 / (4 * s[3] ^ 2))
  return a * math.cos(k0 * x), a * math.sin(k0 * x)
end})
line("exact norm", w:norm())
line("exact width", w:position_width())
local t = 1.5e-3
w:fly(t)
line("flown norm", w:norm())
line("flown mean", w:position_mean())
line("flown width", w:position_width())
line("flown kwidth", w:wavenumber_width())
-- A measurement on the gathered density table: the covariance matrix.
local cov = w:position_covariance()
line("flown cov", cov[1][1], cov[2][2], cov[3][3])
line("flown covxy", cov[1][2], cov[1][3], cov[2][3], cov[1][1])
-- Free Gaussian (textbook): the centre moves by hbar k0 t / m and
-- sigma(t)^2 = s^2 (1 + (hbar t / (2 m s^2))^2); the covariance's diagonal
-- is sigma(t)^2 and a separable packet stays uncorrelated.
line("law mean1", (w:position_mean()), c[1] + hbar * k0 * t / mass)
for a = 1, 3 do
  line("law var" .. a, cov[a][a], s[a] ^ 2 * (1 + (hbar * t / (2 * mass * s[a] ^ 2)) ^ 2))
end
w:close()

-- 2D split step with a mean field: a kicked ground state in a harmonic
-- trap; 18 planes again (13 um across: the ground state spans more than
-- 3 grid spacings).
local wx, wy = 2 * math.pi * 60, 2 * math.pi * 90
local g2 = pf.grid{points = {18, 24}, span = {13e-6, 14e-6}}
local function trap(x, y) return 0.5 * mass * (wx ^ 2 * x ^ 2 + wy ^ 2 * y ^ 2) end
local u = pf.ground_state(g2, {mass = mass, omega = {wx, wy}})
line("exact start", u:norm())
local gc = 5e-44 -- invented 2D coupling, J m^2
local k = 1.5e5
u:kick(k, 0)
local te = 1.0e-3
local _, ev = u:evolve(te, {potential = trap, g = gc, dt = 2e-5})
line("flown evolved", u:norm())
-- Means beside their widths: a line is judged on its largest value, and a
-- mean that is zero up to the grid's asymmetry (the y components, 1e-17 m)
-- is judged on the cloud's scale, not on its own.
local mx, my = u:position_mean()
local sx, sy = u:position_width()
line("flown evolvedx", mx, sx)
line("flown evolvedy", my, sy)
local kx, ky = u:wavenumber_mean()
local qx, qy = u:wavenumber_width()
line("flown evolvedkx", kx, qx)
line("flown evolvedky", ky, qy)
line("flown energy", u:energy{potential = trap, g = gc})
line("flown steps", ev.steps)
local px = u:profile(1)
local peak = 0
for i = 1, #px.values do peak = math.max(peak, px.values[i]) end
line("flown profile", peak)
-- Kohn's theorem (textbook): in a harmonic trap the centre of mass follows
-- x(t) = (hbar k / m omega) sin(omega t), with or without interactions.
line("law kohn", (u:position_mean()), hbar * k / (mass * wx) * math.sin(wx * te))
u:close()
