-- test_recipes.lua - the bundled recipes against published formulas.
-- Masses are the recipes' defaults, taken from the engine's species table
-- (AME2020; the table itself is checked digit by digit against a committed
-- excerpt of the AME2020 file in tests/ref/test_species_ame2020.sh).  h is exact (2019 SI, CODATA 2018);
-- u is CODATA 2018, both as quoted in the SI brochure (from memory).
local pf = require "psiflight"
local check = require "check"
pf.setup{planning = "estimate"}
local h = 6.62607015e-34
local hbar = h / (2 * math.pi)
local u = 1.66053906660e-27

-- Fills a recipe's defaults (in SI) the way pf.parameters would, then
-- applies overrides (SI).  The unit factors are the SI prefixes.
local factor = {u = u, Hz = 1, ms = 1e-3, us = 1e-6, um = 1e-6, nm = 1e-9, ["m/s"] = 1, m = 1, ["mm/s"] = 1e-3,
  ["m/s2"] = 1}
local function params(recipe, over)
  local p = {}
  for name, spec in pairs(recipe.parameters) do
    p[name] = type(spec.default) == "number" and spec.default * (spec.unit and factor[spec.unit] or 1) or spec.default
  end
  for k, v in pairs(over or {}) do p[k] = v end
  return p
end

-- The kinds and methods of a wave's step log, as "kind/method" strings.
local function steps(w)
  local out = {}
  for _, s in ipairs(w:log()) do out[#out + 1] = s.kind .. "/" .. s.method end
  return table.concat(out, " ")
end

-- Every recipe's default mass is the species table's value of its species.
do
  for _, pair in ipairs{{"tof_image", "87Rb"}, {"talbot_scan", "6Li"}, {"mach_zehnder", "133Cs"},
                        {"aperture_flight", "4He"}, {"arrival_time", "23Na"}} do
    local name, label = pair[1], pair[2]
    local r = require("psiflight.recipes." .. name)
    check.equal(r.parameters.mass.default, pf.species(label).mass_u, name .. " default mass is the table's " .. label)
  end
end

-- tof_image: camera widths against the textbook free expansion of a Gaussian
-- ground state, sigma(t) = sigma0 sqrt(1 + (hbar t / 2 m sigma0^2)^2).  The
-- image comes from the engine's camera (pixel edges on cell edges), so the
-- Sheppard-corrected moments are exact up to rounding.
do
  local tof = require "psiflight.recipes.tof_image"
  local p = params(tof, {tof = 8e-3, pixel = 1e-6, atoms = 2.5e4})
  local out = tof.run(p)
  local r = out.results
  local m = p.mass
  local function law(f)
    local s0 = math.sqrt(hbar / (2 * m * 2 * math.pi * f))
    return s0 * math.sqrt(1 + (hbar * p.tof / (2 * m * s0 * s0)) ^ 2)
  end
  check.near(r.sigma_x_camera[1], law(p.trap_x), 1e-10, "tof_image sigma_x on camera", "Gaussian free-expansion law (textbook)")
  check.near(r.sigma_y_camera[1], law(p.trap_y), 1e-10, "tof_image sigma_y on camera", "Gaussian free-expansion law (textbook)")
  check.near(r.sigma_x_textbook[1], law(p.trap_x), 1e-12, "tof_image textbook width", "Gaussian free-expansion law (textbook)")
  check.near(r.atoms_on_camera[1], 2.5e4, 1e-12, "tof_image atoms on camera", "sum rule: binning conserves atom number (common practice)")
  check.equal(steps(out.wave), "build/ground_state flight/momentum-exact", "tof_image logs the native build and flight")
  check.equal(#out.image, out.pixels[2], "tof_image image rows = vertical pixels")
  check.equal(#out.image[1], out.pixels[1], "tof_image image columns = horizontal pixels")
end

-- talbot_scan: revival at T_T = 2 m d^2 / h, shifted revival at T_T / 2
-- (Talbot 1836; Rayleigh 1881, z_T = 2 d^2 / lambda).
do
  local talbot = require "psiflight.recipes.talbot_scan"
  local p = params(talbot, {periods = 4, points_per_period = 32, steps = 4})
  local out = talbot.run(p)
  local r = out.results
  check.near(r.talbot_time[1], 2 * p.mass * p.period ^ 2 / h, 1e-14, "talbot time", "Rayleigh 1881: T_T = 2 m d^2 / h")
  check.close(r.revival_overlap[1], 1, 1e-12, "talbot full revival overlap", "Talbot effect: image at T_T")
  check.close(r.half_revival_shifted_overlap[1], 1, 1e-12, "talbot half revival, shifted by d/2", "Talbot effect: shifted image at T_T/2")
  check.truthy(r.half_revival_direct_overlap[1] < 0.1, "talbot half revival is not the unshifted image")
  check.truthy(out.scan[2].image < 0.9, "talbot pattern dephases at T_T/4")
  -- The grating wave, built from its Fourier series, against the direct sum
  -- of the Gaussian windows over their images (Poisson summation formula),
  -- here for wide windows on a one-period grid where the images matter.
  local wide = params(talbot, {periods = 1, points_per_period = 48, slit = 0.35e-6, steps = 1})
  local w = talbot.run(wide)
  local d, s = wide.period, wide.slit
  local want, sum = {}, 0
  for i = 1, wide.points_per_period do
    local x = -d / 2 + (i - 1) * d / wide.points_per_period
    local a = 0
    for m = -20, 20 do a = a + math.exp(-(x - m * d) ^ 2 / (4 * s * s)) end
    want[i] = a * a
    sum = sum + want[i] * d / wide.points_per_period
  end
  local worst = 0
  for i = 1, #want do worst = math.max(worst, math.abs(w.initial_density[i] - want[i] / sum) * d) end
  check.close(worst, 0, 1e-12, "talbot comb vs direct image sum", "Poisson summation of a Gaussian train (textbook)")
end

-- mach_zehnder (two levels, lab frame, gravity through the flight):
-- with short pulses the upper-level fraction is (1 - cos(phi3 + k_eff a T^2)) / 2,
-- Kasevich and Chu, PRL 67, 181 (1991); with finite Rabi pulses tau, 2 tau,
-- tau the phase is (k_eff a - alpha)(T + 2 tau)(T + 4 tau / pi) (P. Cheinet
-- et al., IEEE Trans. Instrum. Meas. 57, 1141 (2008), quoted from memory).
do
  local mz = require "psiflight.recipes.mach_zehnder"
  local function wrap(x) return (x + math.pi) % (2 * math.pi) - math.pi end
  -- Short pulses (0.1 ns: Omega = 1.6e10 rad/s against a Doppler drift k_eff a T
  -- of 3e4 rad/s; finite-pulse phase about 3.3 k_eff a T tau = 1e-5 rad): the ideal
  -- fringe, within 1e-5.
  local p = params(mz, {T = 0.2e-3, phase_steps = 6, pulse_time = 1e-10})
  local out = mz.run(p)
  local keff = 4 * math.pi / p.wavelength
  local gp = keff * p.accel * p.T ^ 2
  check.near(out.results.gravity_phase[1], gp, 1e-14, "mach_zehnder gravity phase", "Kasevich-Chu 1991: k_eff g T^2")
  local worst = 0
  for _, s in ipairs(out.scan) do
    worst = math.max(worst, math.abs(s.upper - (1 - math.cos(s.phase + gp)) / 2))
  end
  check.close(worst, 0, 1e-5, "mach_zehnder short-pulse fringe vs (1 - cos phi)/2", "Kasevich-Chu 1991 interferometer phase")
  check.near(out.results.arm_separation[1], hbar * keff / p.mass * p.T, 1e-12, "mach_zehnder arm separation", "recoil velocity hbar k_eff / m (textbook)")
  -- The upper level moves at the two-photon recoil velocity relative to the
  -- lower one (hbar k_eff / m, textbook); velocity selection reweights the
  -- classes only slightly with such short pulses.
  local dv = out.ports.upper:velocity_mean() - out.ports.lower:velocity_mean()
  check.near(dv, hbar * keff / p.mass, 1e-6, "mach_zehnder port velocity difference", "two-photon recoil hbar k_eff / m (textbook)")
  check.truthy(steps(out.ports.upper):find("pulse/rotation-exact", 1, true) ~= nil, "mach_zehnder pulses are level pulses")
  -- Finite pulses: at the default 1 us the finite-pulse term adds 0.24 rad
  -- to k_eff a T^2 and the measured phase follows it (residual: the Doppler
  -- drift k_eff a T = 7e4 rad/s against Omega = 1.6e6 rad/s); at 10 us with
  -- the laser chirped to follow the fall (alpha = k_eff a, as a gravimeter
  -- at its null) the phase vanishes.
  for _, case in ipairs{{1e-6, 0, 2e-3}, {10e-6, 1.0, 5e-4}} do
    local q = params(mz, {T = 0.5e-3, phase_steps = 8, pulse_time = case[1]})
    q.chirp = case[2] * keff * q.accel
    local r = mz.run(q)
    local want = (keff * q.accel - q.chirp) * (q.T + 2 * case[1]) * (q.T + 4 * case[1] / math.pi)
    check.close(wrap(r.results.fringe_phase[1] - want), 0, case[3],
                string.format("mach_zehnder phase, tau %g s, chirp %.1f k_eff a", case[1], case[2]),
                "Cheinet et al., IEEE TIM 57, 1141 (2008), from memory")
    check.near(r.results.finite_pulse_phase[1], want, 1e-14, "mach_zehnder reports the finite-pulse phase", "same expression")
  end
  -- Imperfect pulses (areas 0.8 x pi/2, pi, pi/2), short: the upper level from
  -- the sum over the eight paths of two-level Rabi rotations (stay:
  -- cos(theta/2); up: -i sin(theta/2) e^{i phi}; down: -i sin(theta/2)
  -- e^{-i phi}) and the free-flight phases hbar (k + n k_eff)^2 T / 2m of each
  -- path, integrated over the initial Gaussian momentum density (width
  -- 1 / 2 sigma): int |phi0|^2 e^{i a k} dk = exp(-a^2 sigma_k^2 / 2)
  -- (textbook); gravity as the laser phase k_eff a t_i^2 / 2 seen in the
  -- falling frame (the equivalence principle; common practice).
  local wp = params(mz, {T = 0.2e-3, phase_steps = 6, area_scale = 0.8, pulse_time = 1e-10})
  local weak = mz.run(wp)
  check.truthy(weak.results.fringe_contrast[1] < 0.99, "mach_zehnder imperfect pulses lose contrast")
  local function cmul(x, y) return {x[1] * y[1] - x[2] * y[2], x[1] * y[2] + x[2] * y[1]} end
  local function step(theta, phi, from, to)
    local c, s = math.cos(theta / 2), math.sin(theta / 2)
    if from == to then return {c, 0} end
    local ph = to > from and phi or -phi
    return {s * math.sin(ph), -s * math.cos(ph)} -- -i s e^{i ph}
  end
  local sk = 1 / (2 * wp.sigma)
  local grav = function(t) return keff * wp.accel * t * t / 2 end
  local worst_weak = 0
  for _, sc in ipairs(weak.scan) do
    local thetas = {0.8 * math.pi / 2, 0.8 * math.pi, 0.8 * math.pi / 2}
    -- the pulses are tuned to the recoil w_r = hbar k_eff^2 / 2m: their phase
    -- at time t carries -w_r t (docs/internal-states.md)
    local wr = hbar * keff * keff / (2 * wp.mass)
    local phis = {grav(0), grav(wp.T) - wr * wp.T, sc.phase + grav(2 * wp.T) - wr * 2 * wp.T}
    local paths = {}
    for n1 = 0, 1 do for n2 = 0, 1 do
      local amp = cmul(cmul(step(thetas[1], phis[1], 0, n1), step(thetas[2], phis[2], n1, n2)), step(thetas[3], phis[3], n2, 1))
      local alpha = -hbar * wp.T * keff * (n1 + n2) / wp.mass
      local beta = -hbar * wp.T * keff * keff * (n1 + n2) / (2 * wp.mass)
      amp = cmul(amp, {math.cos(beta), math.sin(beta)})
      paths[#paths + 1] = {amp = amp, alpha = alpha}
    end end
    local pu = 0
    for _, a in ipairs(paths) do for _, b in ipairs(paths) do
      local re = a.amp[1] * b.amp[1] + a.amp[2] * b.amp[2] -- Re(A_a conj(A_b))
      pu = pu + re * math.exp(-((a.alpha - b.alpha) * sk) ^ 2 / 2)
    end end
    worst_weak = math.max(worst_weak, math.abs(sc.upper - pu))
  end
  check.close(worst_weak, 0, 1e-5, "mach_zehnder area 0.8 fringe vs path sum", "Rabi pulse matrices + free Gaussian flight (textbook)")
end

-- aperture_flight: the momentum density just after a slit of M grid points
-- is the Dirichlet kernel sin^2(M k dx / 2) / sin^2(k dx / 2) (discrete
-- Fraunhofer single slit); the far-field first minimum sits at
-- lambda L / a (Born and Wolf, Principles of Optics, 8.5).
do
  local ap = require "psiflight.recipes.aperture_flight"
  local p = params(ap, {beam_width = 0, points_per_slit = 16, lobes = 6})
  local out = ap.run(p)
  local g = out.wave:grid()
  local dx, n = g:spacing(1), g:points(1)
  local M = p.points_per_slit
  local function dirichlet(k)
    local s = math.sin(k * dx / 2)
    if math.abs(s) < 1e-300 then return M * M end
    return (math.sin(M * k * dx / 2) / s) ^ 2
  end
  local j0 = n // 2 + 1 -- k = 0 in ascending order
  local scale = out.momentum_density[j0] / dirichlet(0)
  local worst = 0
  for _, j in ipairs{j0 + 1, j0 + 7, j0 + 50, j0 + 333, j0 - 90} do
    local want = scale * dirichlet(g:k(1, j))
    worst = math.max(worst, math.abs(out.momentum_density[j] - want) / (scale * M * M))
  end
  check.close(worst, 0, 1e-12, "aperture momentum density vs Dirichlet kernel", "discrete Fraunhofer single slit (DFT of a boxcar)")
  local r = out.results
  check.near(r.first_minimum[1], r.first_minimum_fraunhofer[1], 5e-3, "aperture first minimum", "Born & Wolf 8.5: x1 = lambda L / a")
  check.near(r.first_minimum_fraunhofer[1], h / (p.mass * p.velocity) * p.distance / p.slit, 1e-12,
    "aperture Fraunhofer prediction", "de Broglie lambda = h / m v")
  check.near(r.transmitted_fraction[1], r.slit_probability_before[1], 1e-12, "aperture transmission = probability in slit", "Born rule (common practice)")
  -- A uniform wave puts 1/n on every grid point: M open points pass M / n.
  check.near(r.transmitted_fraction[1], M / n, 1e-12, "aperture uniform beam passes M/n", "Born rule on a uniform state (common practice)")
  local log = out.wave:log()
  check.equal(log[2].kind .. "/" .. log[2].method, "mask/slit", "aperture slit is the native mask step")
  check.near(log[2].removed, 1 - r.transmitted_fraction[1], 1e-12, "aperture logged removed = 1 - transmitted", "probability conservation (common practice)")
  -- An odd count of points across the slit: the grid puts points on integer
  -- multiples of dx, so the edges again lie midway and M points are open.
  local odd = ap.run(params(ap, {beam_width = 0, points_per_slit = 15, lobes = 6}))
  check.near(odd.results.transmitted_fraction[1], 15 / odd.points, 1e-12, "aperture odd slit passes M/n", "Born rule on a uniform state (common practice)")
end

-- arrival_time: a fast narrow packet arrives at L / v (classical kinematics,
-- common practice); all of it is detected in the window.  The mean and rms
-- arrival times against the flux of the free Gaussian packet at x = L,
-- J(t) = rho(L, t) (v + (L - v t) t / (tau^2 + t^2)), tau = 2 m sigma0^2 /
-- hbar, rho Gaussian of width sigma0 sqrt(1 + t^2 / tau^2) (textbook),
-- integrated here by the composite Simpson rule on 200000 intervals.
do
  local at = require "psiflight.recipes.arrival_time"
  local p = params(at, {samples = 100})
  local out = at.run(p)
  local r = out.results
  check.near(r.mean_arrival_time[1], p.distance / p.velocity, 5e-3, "arrival mean time vs L / v", "classical kinematics (common practice)")
  check.near(r.detected_fraction[1], 1, 1e-12, "arrival detected fraction", "probability conservation (common practice)")
  check.close(r.negative_flux_part[1], 0, 1e-12, "arrival negative flux", "no backward momentum content (common practice)")
  local m, v, s0, L = p.mass, p.velocity, p.sigma, p.distance
  local tau = 2 * m * s0 * s0 / hbar
  local function J(t)
    local st = s0 * math.sqrt(1 + (t / tau) ^ 2)
    local rho = math.exp(-(L - v * t) ^ 2 / (2 * st * st)) / (math.sqrt(2 * math.pi) * st)
    return rho * (v + (L - v * t) * t / (tau * tau + t * t))
  end
  local N, T = 200000, p.window
  local dt = T / N
  local s0_, s1, s2 = 0, 0, 0
  for i = 0, N do
    local t = i * dt
    local wgt = (i == 0 or i == N) and 1 or (i % 2 == 1 and 4 or 2)
    local j = J(t) * wgt
    s0_, s1, s2 = s0_ + j, s1 + j * t, s2 + j * t * t
  end
  local mean = s1 / s0_
  local rms = math.sqrt(s2 / s0_ - mean * mean)
  check.near(r.mean_arrival_time[1], mean, 1e-11, "arrival mean time vs free-Gaussian flux", "free Gaussian probability current (textbook)")
  check.near(r.rms_arrival_spread[1], rms, 1e-9, "arrival rms spread vs free-Gaussian flux", "free Gaussian probability current (textbook)")
  local worst = 0
  for j = 1, #out.mids do
    worst = math.max(worst, math.abs(out.flux[j] - J(out.mids[j])))
  end
  check.close(worst / J(L / v), 0, 1e-9, "arrival flux at sample midpoints vs J(L, t)", "free Gaussian probability current (textbook)")
end
-- arrival_time with an acceleration: a 87Rb cloud launched upwards at 0.2 m/s
-- onto a plane 5 cm below falls in its own frame on a grid that holds only its spread.  The
-- flux against the free Gaussian current moved by the uniform force (the
-- density displaced by a t^2/2, the velocity field raised by a t; Avron-Herbst
-- form, from memory), J(t) = rho(L - v t - a t^2/2, t) (v + a t + (L - v t -
-- a t^2/2) t / (tau^2 + t^2)), integrated by Simpson's rule on 200000
-- intervals around the arrival; the classical time, the root of
-- L = v t + a t^2 / 2 (Newton).
do
  local at = require "psiflight.recipes.arrival_time"
  local g = pf.constants.g_n
  local p = params(at, {mass = pf.mass("87Rb"), velocity = 0.2, sigma = 5e-6, distance = -0.05, window = 0.14,
                        samples = 200, acceleration = -g})
  local out = at.run(p)
  local r = out.results
  check.truthy(out.in_frame and out.points <= 128, "the dropped cloud needs " .. out.points .. " points (the drop is the frame's)")
  local tc = (0.2 + math.sqrt(0.04 + 2 * g * 0.05)) / g
  check.near(r.classical_time[1], tc, 1e-14, "classical arrival time (v + sqrt(v^2 + 2 g h)) / g", "Newton (common practice)")
  check.near(r.detected_fraction[1], 1, 1e-9, "dropped cloud: all of it crosses the plane", "probability conservation (common practice)")
  local m, s0, L, a, v = p.mass, p.sigma, p.distance, -g, 0.2
  local tau = 2 * m * s0 * s0 / hbar
  local function J(t)
    local st = s0 * math.sqrt(1 + (t / tau) ^ 2)
    local d = L - v * t - 0.5 * a * t * t
    local rho = math.exp(-d * d / (2 * st * st)) / (math.sqrt(2 * math.pi) * st)
    return -rho * (v + a * t + d * t / (tau * tau + t * t)) -- counted downwards, towards the plane
  end
  local N, t0, T = 200000, tc - 3e-4, 6e-4
  local dt = T / N
  local s0_, s1, s2 = 0, 0, 0
  for i = 0, N do
    local t = t0 + i * dt
    local wgt = (i == 0 or i == N) and 1 or (i % 2 == 1 and 4 or 2)
    local j = J(t) * wgt
    s0_, s1, s2 = s0_ + j, s1 + j * t, s2 + j * t * t
  end
  local mean = s1 / s0_
  local rms = math.sqrt(s2 / s0_ - mean * mean)
  print(string.format("note dropped arrival: mean %.12e s (want %.12e), rms %.6e s (want %.6e)", r.mean_arrival_time[1], mean,
    r.rms_arrival_spread[1], rms))
  check.near(r.mean_arrival_time[1], mean, 1e-11, "dropped cloud: mean arrival time vs the exact current", "Gaussian current under a uniform force (from memory)")
  check.near(r.rms_arrival_spread[1], rms, 1e-6, "dropped cloud: arrival spread vs the exact current", "Gaussian current under a uniform force (from memory)")
end
check.done()
