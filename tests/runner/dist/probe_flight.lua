-- probe_flight.lua - prints figures of a 3D free flight with %.17g, for
-- tests/runner/test_distributed.sh, which runs it as one process and under
-- mpirun at several rank counts with pf.setup{distribute = true} and
-- compares the lines.  Lines start with a tag: "exact" lines must be the
-- same bits at every rank count and as one process (reductions of data
-- that no transform touched), "flown" lines the same bits at every rank
-- count and within 1e-14 of one process (FFTW's serial and MPI plans may round
-- differently), "law" lines are checked against the free Gaussian width law.
local pf = require "psiflight"
pf.setup{distribute = true, planning = "estimate", guard_threshold = math.huge}
local p = pf.parameters{
  n0 = {default = 18, help = "points along axis 1 (the split axis)", min = 4},
}
local hbar = pf.constants.hbar
local mass = pf.mass("87Rb")
local n0 = math.floor(p.n0)
-- Invented scene: a Gaussian packet with a drift along axis 1, on a grid
-- whose first axis does not divide evenly among 4 ranks (18 = 5+5+5+3).
local span = {30e-6, 24e-6, 28e-6}
local g = pf.grid{points = {n0, 16, 20}, span = span}
-- psi ~ exp(-(x - c)^2 / (4 s^2)) exp(i k0 x): |psi|^2 has standard deviation s.
local s = {2.0e-6, 1.6e-6, 1.8e-6}
local c = {1.5e-6, -1e-6, 0.5e-6}
local k0 = 2.0e5
local w = pf.wave(g, {mass = mass, normalize = true, position = function(x, y, z)
  local a = math.exp(-(x - c[1]) ^ 2 / (4 * s[1] ^ 2) - (y - c[2]) ^ 2 / (4 * s[2] ^ 2) - (z - c[3]) ^ 2 / (4 * s[3] ^ 2))
  return a * math.cos(k0 * x), a * math.sin(k0 * x)
end})
local function line(tag, ...)
  local parts = {}
  for i, v in ipairs({...}) do parts[i] = string.format("%.17g", v) end
  print(tag .. " " .. table.concat(parts, " "))
end
local info = pf.mpi_info()
print(string.format("ranks %d distribute %s", info.ranks, tostring(info.distribute)))
line("exact norm", w:norm())
line("exact mean", w:position_mean())
line("exact width", w:position_width())
w:scale(0.5)
line("exact scaled", w:norm())
w:normalize()
local t = 1.5e-3
w:fly(t)
line("flown norm", w:norm())
line("flown kmean", w:wavenumber_mean())
line("flown kwidth", w:wavenumber_width())
line("flown mean", w:position_mean())
line("flown width", w:position_width())
line("flown energy", w:kinetic_energy())
-- Free Gaussian (textbook): the centre moves by hbar k0 t / m, and
-- sigma(t) = s sqrt(1 + (hbar t / (2 m s^2))^2).
local mx = w:position_mean()
line("law mean1", mx, c[1] + hbar * k0 * t / mass)
local wx, wy, wz = w:position_width()
local got = {wx, wy, wz}
for a = 1, 3 do
  line("law width" .. a, got[a], s[a] * math.sqrt(1 + (hbar * t / (2 * mass * s[a] ^ 2)) ^ 2))
end
-- A flight under a uniform acceleration moves the wave's frame (closed form,
-- docs/frames.md): the figures are lab figures, and the centre falls by
-- a t^2 / 2 (textbook) on top of its free drift.
local before = {w:position_mean()}
local vb = {w:velocity_mean()}
local ta, acc = 1e-3, {0.3, 0, -9.81}
w:fly(ta, {acceleration = acc})
line("flown fallmean", w:position_mean())
line("flown fallv", w:velocity_mean())
local after = {w:position_mean()}
line("law fallz", after[3], before[3] + vb[3] * ta + 0.5 * acc[3] * ta * ta)
-- A function that does not handle distributed waves refuses clearly.
local ok, err = pcall(function() return w:psi_at(0, 0, 0) end)
print("refusal " .. (ok and "none" or (info.distribute and tostring(err):match("does not handle a wave function distributed") and "named" or tostring(err))))
w:close()
