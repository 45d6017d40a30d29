-- probe_measure.lua - measurements of a 2D wave split over MPI ranks, for
-- tests/runner/test_distributed_measure.sh (run as one process and under
-- mpirun with pf.setup{distribute = true}).  Tags as in probe_masks.lua:
-- "exact" the same bits everywhere, "flown" the same bits at every rank
-- count and within 1e-14 of one process, "law" a figure and its closed form.
-- Invented scene: a 23Na cloud in a tilted elliptical trap (a correlated
-- Gaussian), a second cloud with fringes under a Gaussian envelope, both
-- imaged by a small camera; 18 x 16 points (4 ranks: 5, 5, 5, 3 planes).
local pf = require "psiflight"
pf.setup{distribute = true, planning = "estimate", guard_threshold = math.huge}
local hbar = pf.constants.hbar
local mass = pf.mass("23Na")
local g = pf.grid{points = {18, 16}, span = {24e-6, 22e-6}}
local function line(tag, ...)
  local parts = {}
  for i, v in ipairs({...}) do parts[i] = string.format("%.17g", v) end
  print(tag .. " " .. table.concat(parts, " "))
end
local function list(tag, t, from, to)
  local parts = {}
  for i = from or 1, to or #t do parts[#parts + 1] = string.format("%.17g", t[i]) end
  print(tag .. " " .. table.concat(parts, " "))
end
local info = pf.mpi_info()
print(string.format("ranks %d distribute %s", info.ranks, tostring(info.distribute)))
-- Only rank 0 prints, so a figure is also checked on every rank: each rank
-- scales its own planes of a probe wave by the figure, and the norm (a sum
-- over all ranks) is the single process's x^2 only when every rank holds
-- the same x.
local probe = pf.wave(g, {mass = mass, normalize = true, position = function(x, y)
  return math.exp(-(x * x + y * y) / (4 * (2e-6) ^ 2))
end})
local function agree(tag, x)
  local c = probe:copy()
  c:scale(x)
  line(tag .. "_agree", c:norm())
  c:close()
end
local function total(t)
  local s = 0
  for i = 1, #t do s = s + t[i] end
  return s
end

-- A correlated Gaussian: |psi|^2 ~ exp(-r^T S^-1 r / 2) with covariance
-- S = {{a^2, rho a b}, {rho a b, b^2}} (bivariate normal distribution).
local a, b, rho = 1.8e-6, 1.5e-6, 0.45
local det = a * a * b * b * (1 - rho * rho)
local i11, i22, i12 = b * b / det, a * a / det, -rho * a * b / det
local w = pf.wave(g, {mass = mass, normalize = true, position = function(x, y)
  return math.exp(-(i11 * x * x + 2 * i12 * x * y + i22 * y * y) / 4)
end})

-- Density tables: every value, gathered in global order.
local dens = w:density()
list("exact density", dens)
agree("exact density", total(dens))
local d = w:distribution()
list("exact distribution", d.values)
list("exact profile", w:profile(1).values)
list("exact marginal", w:marginal{axes = {2}}.values)
list("exact column", w:column_density(2).values)
list("exact slice", w:slice{axes = {1}, through = {0, 0.7e-6}}.values)
local rp = w:radial_profile{bin = 1.1e-6, bins = 6}
list("exact radial", rp.values)
-- Region probabilities on the gathered density: a box, a half space, a
-- ball and a weight function (sampled at every grid point on every rank).
local pb = w:probability_in(pf.box{min = {-1e-6, -2e-6}, max = {2.5e-6, 1e-6}})
local ph = w:probability_in(pf.half_space{point = {0.3e-6, 0}, normal = {1, 1}})
local pr = w:probability_in(pf.ball{center = {0.5e-6, -0.2e-6}, radius = 2.2e-6})
local pm = w:probability_in(pf.mask(function(x, y) return math.exp(-(x - y) ^ 2 / 1e-11) end))
line("exact regions", pb, ph, pr, pm)
agree("exact regions", pb + ph + pr + pm)
local C = w:position_covariance()
line("exact covariance", C[1][1], C[1][2], C[2][1], C[2][2])
line("law cov11", C[1][1], a * a)
line("law cov12", C[1][2], rho * a * b)
line("law cov22", C[2][2], b * b)

-- Born-rule samples from one seed: the same events at any rank count.
local ev = w:sample(40, {seed = 11})
list("exact sample1", ev[1])
list("exact sample2", ev[2])
agree("exact sample", 1 + total(ev[1]) / 1e-6 + total(ev[2]) / 1e-6)

-- Camera: a line camera along axis 1 (integrating axis 2) and a 2D camera,
-- expected counts, Poisson counts from a seed, absorption.
local cam1 = pf.camera{pixels = {6}, pitch = 3e-6, psf = 1e-6, imaging_axis = 2}
local shot1 = cam1:expose(w, {atoms = 5e3, seed = 5})
list("exact line_expected", shot1.expected)
list("exact line_counts", shot1.counts)
local cam2 = pf.camera{pixels = {5, 4}, pitch = {3.5e-6, 4e-6}, psf = {0.8e-6, 1.2e-6}, efficiency = 0.7}
local shot2 = cam2:expose(w, {atoms = 2e4, seed = 6})
list("exact cam_expected", shot2.expected)
list("exact cam_counts", shot2.counts)
agree("exact cam", shot2.total)
local img = cam2:absorb(w, {atoms = 2e4, cross_section = pf.resonant_cross_section(589e-9), noise = true, seed = 7})
list("exact absorb_od", img.od)
line("exact absorb_atoms", img.atoms_recovered)

-- After a transform: momentum tables, samples and figures (MPI plans
-- round differently from the serial ones).
local evk = w:sample(20, {seed = 12, jitter = false, space = "momentum"})
list("flown ksample1", evk[1])
list("flown kdensity", w:momentum_density())
local K = w:momentum_covariance()
line("flown kcovariance", K[1][1], K[1][2], K[2][2])
w:close()

-- Energy of an uncorrelated Gaussian in a harmonic trap with a mean field
-- g: per axis hbar^2 / (8 m s^2) + m w^2 s^2 / 2, plus g/2 integral |psi|^4
-- = g/2 prod 1 / (2 sqrt(pi) s) (Gaussian integrals, textbook).
local s1, s2 = 1.6e-6, 1.4e-6
local w1, w2 = 2 * math.pi * 140, 2 * math.pi * 190
local trap = function(x, y) return 0.5 * mass * (w1 ^ 2 * x * x + w2 ^ 2 * y * y) end
local gc = 3e-45
local u = pf.wave(g, {mass = mass, normalize = true, position = function(x, y)
  return math.exp(-x * x / (4 * s1 ^ 2) - y * y / (4 * s2 ^ 2))
end})
local E, mu = u:energy{potential = trap, g = gc}
line("flown energy", E, mu)
agree("flown energy", E / 1e-31)
local quartic = 1 / (4 * math.pi * s1 * s2)
local lin = hbar ^ 2 / (8 * mass) * (1 / s1 ^ 2 + 1 / s2 ^ 2) + 0.5 * mass * (w1 ^ 2 * s1 ^ 2 + w2 ^ 2 * s2 ^ 2)
line("law energy", E, lin + 0.5 * gc * quartic)
line("law chemical", mu, lin + gc * quartic)
u:fly(2e-4)
line("flown energy_after", u:energy{potential = trap, g = gc})
u:close()

-- Fringes along the split axis under a Gaussian envelope:
-- |psi|^2 ~ exp(-x^2 / 2 W^2) (1 + V cos(q x + f)) exp(-y^2 / 2 s^2)
-- (two-beam interference, textbook); the fit recovers q, V and f.
local W, V, period, phase = 4.5e-6, 0.62, 2.7e-6, 0.8
local q = 2 * math.pi / period
local f = pf.wave(g, {mass = mass, normalize = true, position = function(x, y)
  return math.sqrt(math.exp(-x * x / (2 * W * W) - y * y / (2 * (2e-6) ^ 2)) * (1 + V * math.cos(q * x + phase)))
end})
local fit = f:fringes{axis = 1, period = period, envelope = "gaussian"}
line("exact fringes", fit.period, fit.visibility, fit.phase, fit.envelope_width, fit.envelope_center)
agree("exact fringes", fit.period / 1e-6 + fit.visibility)
line("law fperiod", fit.period, period)
line("law fvisibility", fit.visibility, V)
f:close()

-- Measurements that change the state, on the wave gathered onto rank 0
-- and scattered back: a drawn region outcome (the run's generator, then a
-- seeded one), a forced one, a drawn and a forced Gaussian position
-- measurement; then figures of the collapsed state on every rank's planes.
do
  local m = pf.wave(g, {mass = mass, normalize = true, position = function(x, y)
    return math.exp(-(x - 0.5e-6) ^ 2 / (4 * (1.9e-6) ^ 2) - y * y / (4 * (1.6e-6) ^ 2))
  end})
  local yes, p = m:measure_region(pf.box{min = {0, -3e-6}, max = {4e-6, 3e-6}}, {seed = 21})
  line("exact mregion", yes and 1 or 0, p, m:norm(), m:position_mean())
  local yes2, p2 = m:measure_region(pf.ball{center = {1e-6, 0}, radius = 2.5e-6}, {outcome = false})
  line("exact mregion2", yes2 and 1 or 0, p2, m:norm(), m:position_mean())
  local y, dens = m:measure_position{resolution = {0.8e-6, 0}, seed = 22}
  line("exact mposition", y[1], dens, m:norm(), m:position_mean())
  local y2, dens2 = m:measure_position{resolution = {0, 0.6e-6}, outcome = {0, 0.4e-6}}
  line("exact mposition2", y2[2], dens2, m:norm(), m:position_width())
  agree("exact mposition", y[1] / 1e-6 + dens / 1e5)
  -- The run's own generator after the seeded draws: every rank draws the
  -- same next numbers (its state is rank 0's).
  local y3 = m:measure_position{resolution = {1.1e-6, 0}}
  line("exact mposition3", y3[1], m:norm())
  agree("exact mposition3", y3[1] / 1e-6)
  local ev = m:sample(5)
  list("exact msample", ev[1])
  agree("exact msample", 2 + total(ev[1]) / 1e-6)
  m:close()
end

-- Plane figures and the position-momentum covariance on the wave gathered
-- in momentum (or position) onto rank 0: a moving, chirped packet.
local v = pf.wave(g, {mass = mass, normalize = true, position = function(x, y)
  local amp = math.exp(-x * x / (4 * (1.7e-6) ^ 2) - y * y / (4 * (1.5e-6) ^ 2))
  local ph = 6e5 * x + 4e10 * x * y
  return amp * math.cos(ph), amp * math.sin(ph)
end})
local P = v:position_momentum_covariance()
line("flown pmcovariance", P[1][1], P[1][2], P[2][1], P[2][2])
agree("flown pmcov", P[1][2] / 1e-35)
-- The chirp exp(i c x y) gives <x p_y> = <y p_x> = hbar c <x^2> <y^2> /
-- <..> ... for this separable Gaussian: cov(x, p_y) = hbar c s_x^2 and
-- cov(y, p_x) = hbar c s_y^2 (Gaussian moments, textbook).
line("law pmcov12", P[1][2], hbar * 4e10 * (1.7e-6) ^ 2)
line("law pmcov21", P[2][1], hbar * 4e10 * (1.5e-6) ^ 2)
-- The probability current along axis 1 (gathered onto rank 0, the table
-- broadcast); for psi = A exp(i (k0 x + c x y)) with real A, j_x = (hbar /
-- m) (k0 + c y) |A|^2, whose integral is hbar k0 / m (textbook).
local jx = v:current(1)
list("flown current", jx.values)
agree("flown current", total(jx.values) / 1e6)
local dx1, dx2 = g:spacing(1), g:spacing(2)
line("law current", total(jx.values) * dx1 * dx2, hbar * 6e5 / mass)
local b1 = v:beyond{axis = 1, at = 1.1e-6}
line("flown beyond", b1, v:beyond{axis = 2, at = -0.4e-6})
agree("flown beyond", b1)
line("flown flux", v:flux{axis = 1, at = 0.3e-6}, v:flux{axis = 2, at = 0})
-- Arrival at a plane 4 um ahead of the moving packet (the copy flies on
-- rank 0 from the gathered wave): the arrival-time flux and its summaries.
local arr = v:arrival_times{axis = 1, at = 4e-6, from = 0, to = 2e-4, steps = 21}
list("flown arrival", arr.flux)
agree("flown arrival", total(arr.flux) / 1e3)
local ok_acc, err_acc = pcall(function() return v:arrival_times{axis = 1, at = 4e-6, to = 2e-4, acceleration = {1, 0}} end)
print("accelerated_arrival " .. (ok_acc and "ran" or tostring(err_acc)))
-- A packet at rest: the probability beyond its centre plane is 1/2
-- (symmetry); beyond x = s it is the normal tail (1 - erf(1/sqrt 2)) / 2.
local r = pf.wave(g, {mass = mass, normalize = true, position = function(x, y)
  return math.exp(-x * x / (4 * (1.7e-6) ^ 2) - y * y / (4 * (1.5e-6) ^ 2))
end})
-- Wigner functions of the untransformed packet at rest (gathered onto rank
-- 0): a cut through a grid point along the split axis, and the reduced
-- state of axis 2.  The reduced state of this product Gaussian is a pure 1D
-- Gaussian, whose Wigner function peaks at 1 / (pi hbar) at its centre
-- (textbook).
local wc = r:wigner{axis = 1, through = {0, 0}}
list("exact wigner_cut", wc.values)
agree("exact wigner_cut", total(wc.values) * hbar)
local wr = r:wigner{axis = 2, reduced = true}
list("exact wigner_reduced", wr.values)
local peak = 0
for i = 1, #wr.values do peak = math.max(peak, wr.values[i]) end
line("law wigner_peak", peak, 1 / (math.pi * hbar))
-- The picture of the density, drawn before any transform (rank 0 writes it).
pf.picture_map("cloud.png", r, {title = "23Na cloud"})
line("law beyond_half", r:beyond{axis = 1, at = 0}, 0.5)
line("law beyond_sigma", r:beyond{axis = 1, at = 1.7e-6}, 0.15865525393145707)
v:close()
r:close()
probe:close()
