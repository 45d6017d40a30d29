-- test_measure.lua - measurements, detectors and ensembles through the Lua
-- API: units and axes, reproducible sampling, collapse, cameras, arrival
-- times, Wigner functions, fringes, mixtures and thermal clouds.  The
-- source of each reference value is named beside the check; the C unit
-- tests (tests/unit/measure/test_{flux,wigner,sample,...}.c) hold the tight checks.
local pf = require "psiflight"
local check = require "check"
pf.setup{planning = "estimate", seed = 11}
local C = pf.constants
local hbar, kB = C.hbar, C.kB
local m = pf.mass("87Rb")

local function gauss(s, c, k0)
  return function(x)
    local u = x - c
    return math.exp(-u * u / (4 * s * s)) * math.cos(k0 * u), math.exp(-u * u / (4 * s * s)) * math.sin(k0 * u)
  end
end

-- Distributions carry their axes in SI and lab units.
local g1 = pf.grid{points = 512, span = 200e-6}
local w1 = pf.wave(g1, {mass = m, position = gauss(3e-6, -20e-6, 0)})
local d = w1:distribution()
check.equal(#d.values, 512, "distribution has one value per grid point")
check.equal(d.unit, "1/m", "1D position density unit")
check.close(d.lab.axes[1][10], d.axes[1][10] * 1e6, 1e-18, "lab axis in um", "1 um = 1e-6 m (definition)")
local md = w1:distribution{space = "momentum"}
check.equal(md.lab.axis_unit, "mm/s", "momentum distribution lab axis is a velocity")
check.near(md.momentum_axes[1][7], md.axes[1][7] * hbar, 1e-15, "momentum axis p = hbar k", "de Broglie relation")

-- Sampling: the same seed gives the same events, the run seed feeds the
-- default generator, and event statistics follow the density.
local a = w1:sample(20000, {seed = 5})
local b = w1:sample(20000, {seed = 5})
local same = true
for i = 1, a.count do same = same and a[1][i] == b[1][i] end
check.truthy(same, "same seed gives the same events")
local c1 = w1:sample(100)            -- default generator, run seed 11
pf.setup{seed = 12}
local c3 = w1:sample(100)
pf.setup{seed = 11}                  -- a different seed restarts the stream
local c2 = w1:sample(100)
check.equal(c1[1][50], c2[1][50], "same run seed, same default events")
check.truthy(c1[1][50] ~= c3[1][50], "another run seed, other events")
local mean = 0
for i = 1, a.count do mean = mean + a[1][i] end
mean = mean / a.count
check.close(mean, -20e-6, 4 * 3e-6 / math.sqrt(a.count), "event mean = packet centre", "analytic Gaussian, 4 standard errors")

-- Region measurement (Born rule, projection postulate).
local w2 = w1:copy()
local half = pf.half_space{point = {-18e-6}, normal = {1}}
local p = w2:probability_in(half)
local yes, pr = w2:measure_region(half, {outcome = true})
check.equal(yes, true, "forced outcome followed")
check.close(pr, p, 1e-14, "outcome probability = region probability", "Born rule")
check.close(w2:norm(), 1, 1e-13, "collapsed state renormalised", "projection postulate")
check.close(w2:probability_in(half), 1, 1e-13, "repeat measurement certain", "projection postulate")
check.fails(function() w2:measure_region(half, {outcome = false}) end, "impossible branch refused", "probability 0")
local _, dens = w1:copy():measure_position{resolution = 1e-6, outcome = {-20e-6}}
check.near(dens, 1 / math.sqrt(2 * math.pi * (9e-12 + 1e-12)), 1e-9, "Gaussian measurement outcome density",
  "N(y; c, s^2 + sigma^2), convolution of Gaussians")

-- Flux and arrival times: the probability that arrives equals the change of
-- the probability beyond the plane (continuity equation, integral form).
local mv = pf.wave(g1, {mass = m, position = gauss(2e-6, -30e-6, m * 2e-3 / hbar)})
local before = mv:beyond{axis = 1, at = 0}
local arr = mv:arrival_times{axis = 1, at = 0, from = 0, to = 25e-3, steps = 2001}
local after = mv:copy():fly(25e-3):beyond{axis = 1, at = 0}
check.near(arr.arrived, after - before, 1e-8, "arrived probability = change beyond the plane",
  "continuity equation (Simpson over 2001 samples)")
check.close(mv:clock(), 0, 0, "arrival_times leaves the state's clock alone", "API contract")

-- Wigner function of a Gaussian at its centre: 1/(pi hbar) (standard result).
local W = w1:wigner()
local peak = 0
for i = 1, #W.values do peak = math.max(peak, W.values[i]) end
check.near(peak, 1 / (math.pi * hbar), 1e-3, "Wigner peak of a Gaussian", "W = (1/pi hbar) exp(...), standard result")

-- Fringes of two plane waves on the periodic grid (two-beam interference:
-- V = 2|a||b| / (|a|^2 + |b|^2), period 2 pi / (k1 - k2)).
local dk = g1:kspacing()
local k1, k2 = 40 * dk, 8 * dk
pf.setup{guard_threshold = 1}   -- plane waves fill the periodic grid on purpose
local tb = pf.wave(g1, {mass = m, normalize = false, position = function(x)
  return 0.9 * math.cos(k1 * x) + 0.3 * math.cos(k2 * x), 0.9 * math.sin(k1 * x) + 0.3 * math.sin(k2 * x)
end})
pf.setup{guard_threshold = 1e-6}
local fit = tb:fringes{from = -50e-6, to = 37e-6}
check.near(fit.period, 2 * math.pi / (k1 - k2), 1e-9, "fringe period", "two-beam interference")
check.near(fit.visibility, 2 * 0.9 * 0.3 / (0.81 + 0.09), 1e-9, "fringe visibility", "two-beam interference")

-- Cameras: binning and Beer-Lambert conserve atom number (sum rules).
local g3 = pf.grid{points = {48, 40, 32}, span = {60e-6, 50e-6, 40e-6}}
local cloud = pf.wave(g3, {mass = m, position = function(x, y, z)
  return math.exp(-x * x / (4 * 25e-12) - y * y / (4 * 16e-12) - z * z / (4 * 9e-12))
end})
local cam = pf.camera{pixels = {24, 20}, pitch = 2.6e-6, psf = 1.5e-6, efficiency = 0.8}
local shot = cam:expose(cloud, {atoms = 3e4, noise = false})
check.near(shot.total, 0.8 * 3e4, 1e-6, "expected counts = efficiency x atoms", "sum rule (sensor covers the cloud)")
local sigma0 = pf.resonant_cross_section(780.241e-9)
local img = cam:absorb(cloud, {atoms = 3e4, cross_section = sigma0})
check.near(img.atoms_recovered, 3e4, 1e-6, "atom number from OD x area / sigma", "Beer-Lambert sum rule")
check.near(img.transmission[211], math.exp(-img.od[211]), 1e-15, "transmission = exp(-OD)", "Beer-Lambert law")
local noisy1 = cam:expose(cloud, {atoms = 3e4, seed = 3})
local noisy2 = cam:expose(cloud, {atoms = 3e4, seed = 3})
check.equal(noisy1.counts[200], noisy2.counts[200], "same seed, same shot noise")
check.close(noisy1.total, 0.8 * 3e4, 5 * math.sqrt(0.8 * 3e4), "noisy total within 5 sqrt(N)", "Poisson statistics")
check.fails(function() pf.camera{pixels = {10, 10}} end, "camera needs a pitch", "pitch")
check.fails(function() cam:expose(w1) end, "2D camera refuses a 1D state", "cannot image")

-- Mixtures: the law of total variance (probability theory).
local wa = pf.wave(g1, {mass = m, position = gauss(3e-6, -10e-6, 0)})
local wb = pf.wave(g1, {mass = m, position = gauss(4e-6, 15e-6, 0)})
local mix = pf.mixture({wa, wb}, {1, 3})
local va, vb = wa:position_variance(), wb:position_variance()
local ma, mb = wa:position_mean(), wb:position_mean()
local mm = 0.25 * ma + 0.75 * mb
check.near(mix:position_variance(), 0.25 * (va + ma * ma) + 0.75 * (vb + mb * mb) - mm * mm, 1e-12,
  "mixture variance", "law of total variance")
check.equal(mix:fly(1e-3), mix, "forwarded fly returns the ensemble")
check.near(mix:member(1):clock(), 1e-3, 1e-15, "forwarded step reached the members", "API contract")
check.close(wa:clock(), 0, 0, "mixture members are copies", "API contract")
check.fails(function() mix:density() end, "table results are not averaged", "cannot be averaged", "distribution")
-- A mask on a mixture removes the weighted mean of what it removes from each
-- member (probability is linear in the density matrix; common practice).
local sa, sb = wa:copy(), wb:copy()
local _, ra = sa:slit{width = 20e-6}
local _, rb = sb:slit{width = 20e-6}
local smix = pf.mixture({wa, wb}, {1, 3})
local back, removed = smix:slit{width = 20e-6}
check.equal(back, smix, "a forwarded mask returns the ensemble first")
check.near(removed, 0.25 * ra + 0.75 * rb, 1e-12, "mixture removes the weighted mean", "linearity of the trace")

-- Thermal cloud released from a trap: Maxwell-Boltzmann expansion
-- sigma^2(t) = sigma^2(0) + kB T t^2 / m (standard result), valid to 1e-3
-- because hbar omega / kB T = 0.05 here (the correction is (hbar w/kB T)^2/12).
local omega = 2 * math.pi * 100
local T = hbar * omega / (0.05 * kB)
local gt = pf.grid{points = 1024, span = 200e-6}
local th = pf.thermal{grid = gt, mass = "87Rb", omega = omega, temperature = T, nodes = 2}
check.equal(th:count(), 4, "2 Gauss-Hermite nodes per quadrature in 1D")
local v0 = th:position_variance()
local coth = 1 / math.tanh(hbar * omega / (2 * kB * T))
check.near(v0, hbar / (2 * m * omega) * coth, 1e-9, "thermal width sigma0^2 coth", "Bose-Einstein harmonic oscillator")
th:fly(6e-3)
check.near(th:position_variance(), v0 + kB * T / m * 36e-6, 1e-3, "thermal expansion", "Maxwell-Boltzmann")
local yes2, p2 = th:measure_region(pf.half_space{point = {0}, normal = {1}}, {outcome = true})
local wsum = 0
for i = 1, th:count() do wsum = wsum + th:weight(i) end
check.close(wsum, 1, 1e-14, "posterior weights sum to 1", "Bayes' rule")
-- Boltzmann-weighted eigenstates: the thermal state of a harmonic
-- oscillator has a Gaussian position density of variance
-- (hbar / 2 m w) coth(hbar w / 2 kB T) (standard result, Mehler's formula),
-- pointwise, and expands as sigma^2 (1 + (w t)^2).
local om2, T2 = 2 * math.pi * 150, 20e-9
local ge = pf.grid{points = 2048, span = 160e-6}
local eig = pf.thermal{grid = ge, mass = "41K", omega = om2, temperature = T2, method = "eigenstates", tolerance = 1e-9}
local mk = pf.mass("41K")
local ve = hbar / (2 * mk * om2) / math.tanh(hbar * om2 / (2 * kB * T2))
local de, worst = eig:distribution(), 0
for i, x in ipairs(de.axes[1]) do
  worst = math.max(worst, math.abs(de.values[i] - math.exp(-x * x / (2 * ve)) / math.sqrt(2 * math.pi * ve)))
end
check.close(worst * math.sqrt(2 * math.pi * ve), 0, 1e-8, "eigenstate mixture density is the thermal Gaussian",
  "Mehler's formula: Gaussian with (hbar/2mw) coth(hbar w/2kBT)")
eig:fly(5e-3)
-- 1e-7: the dropped Boltzmann tail (weights < 1e-9, levels up to n ~ 57,
-- each with variance ~ 2n + 1) shifts the variance by ~ 2e-8.
check.near(eig:position_variance(), ve * (1 + (om2 * 5e-3) ^ 2), 1e-7, "eigenstate mixture expansion",
  "sigma^2 (1 + (w t)^2), free expansion of a trap state")
eig:close()

-- Gaussian measurement on a mixture: the outcome density is the weighted sum
-- of the members' Gaussian convolutions, weights by Bayes' rule.
local pm = pf.mixture({wa, wb}, {1, 3})
local _, pdens = pm:measure_position{resolution = 2e-6, outcome = {0}}
local function nd(y, c, v) return math.exp(-(y - c) ^ 2 / (2 * v)) / math.sqrt(2 * math.pi * v) end
local da, db = nd(0, -10e-6, 9e-12 + 4e-12), nd(0, 15e-6, 16e-12 + 4e-12)
check.near(pdens, 0.25 * da + 0.75 * db, 1e-8, "mixture outcome density", "sum of Gaussian convolutions")
check.near(pm:weight(1), 0.25 * da / (0.25 * da + 0.75 * db), 1e-8, "posterior weight", "Bayes' rule")
check.fails(function() pf.thermal{grid = gt, mass = "87Rb", omega = omega, temperature = -1} end,
  "negative temperature refused", "temperature")

-- Bad input names the argument and the value.
check.fails(function() pf.box{min = {1}, max = {0}} end, "box with min > max", "min > max")
check.fails(function() w1:flux{axis = 1, at = 1} end, "plane outside the grid", "outside the grid")
check.fails(function() w1:sample(-1) end, "negative event count", "event count")
check.fails(function() pf.histogram({1, 2}, {from = 1, to = 0, bins = 3}) end, "empty histogram range", "from < to")
check.done()
