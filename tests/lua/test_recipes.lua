-- test_recipes.lua - the bundled recipes against published formulas.
-- Masses are AME2020 values quoted from memory; h is exact (2019 SI,
-- CODATA 2018); u is CODATA 2018.
local pf = require "psiflight"
local check = require "check"
pf.setup{planning = "estimate"}
local h = 6.62607015e-34
local hbar = h / (2 * math.pi)
local u = 1.66053906660e-27

-- Fills a recipe's defaults (in SI) the way pf.parameters would, then
-- applies overrides (SI).  The unit factors are the SI prefixes.
local factor = {u = u, Hz = 1, ms = 1e-3, um = 1e-6, nm = 1e-9, ["m/s"] = 1, m = 1, ["mm/s"] = 1e-3,
  ["m/s2"] = 1}
local function params(recipe, over)
  local p = {}
  for name, spec in pairs(recipe.parameters) do
    p[name] = spec.default * (spec.unit and factor[spec.unit] or 1)
  end
  for k, v in pairs(over or {}) do p[k] = v end
  return p
end

-- tof_image: camera widths against the textbook free expansion of a Gaussian
-- ground state, sigma(t) = sigma0 sqrt(1 + (hbar t / 2 m sigma0^2)^2).
do
  local tof = require "psiflight.recipes.tof_image"
  local p = params(tof, {tof = 8e-3, pixel = 1e-6, atoms = 2.5e4})
  local r = tof.run(p).results
  local m = p.mass
  local function law(f)
    local s0 = math.sqrt(hbar / (2 * m * 2 * math.pi * f))
    return s0 * math.sqrt(1 + (hbar * p.tof / (2 * m * s0 * s0)) ^ 2)
  end
  check.near(r.sigma_x_camera[1], law(p.trap_x), 1e-6, "tof_image sigma_x on camera", "Gaussian free-expansion law (textbook)")
  check.near(r.sigma_y_camera[1], law(p.trap_y), 1e-6, "tof_image sigma_y on camera", "Gaussian free-expansion law (textbook)")
  check.near(r.sigma_x_textbook[1], law(p.trap_x), 1e-12, "tof_image textbook width", "Gaussian free-expansion law (textbook)")
  check.near(r.atoms_on_camera[1], 2.5e4, 1e-9, "tof_image atoms on camera", "sum rule: binning conserves atom number (common practice)")
end

-- talbot_scan: revival at T_T = 2 m d^2 / h, shifted revival at T_T / 2
-- (Talbot 1836; Rayleigh 1881, z_T = 2 d^2 / lambda).
do
  local talbot = require "psiflight.recipes.talbot_scan"
  local p = params(talbot, {periods = 4, points_per_period = 32, steps = 4})
  local out = talbot.run(p)
  local r = out.results
  check.near(r.talbot_time[1], 2 * p.mass * p.period ^ 2 / h, 1e-14, "talbot time", "Rayleigh 1881: T_T = 2 m d^2 / h")
  check.close(r.revival_overlap[1], 1, 1e-9, "talbot full revival overlap", "Talbot effect: image at T_T")
  check.close(r.half_revival_shifted_overlap[1], 1, 1e-9, "talbot half revival, shifted by d/2", "Talbot effect: shifted image at T_T/2")
  check.truthy(r.half_revival_direct_overlap[1] < 0.1, "talbot half revival is not the unshifted image")
  check.truthy(out.scan[2].image < 0.9, "talbot pattern dephases at T_T/4")
end

-- mach_zehnder: upper-port fraction (1 - cos(phi3 + k_eff a T^2)) / 2,
-- Kasevich and Chu, PRL 67, 181 (1991), for ideal pulses.
do
  local mz = require "psiflight.recipes.mach_zehnder"
  local p = params(mz, {T = 0.2e-3, phase_steps = 6})
  local out = mz.run(p)
  local keff = 4 * math.pi / p.wavelength
  local gp = keff * p.accel * p.T ^ 2
  check.near(out.results.gravity_phase[1], gp, 1e-14, "mach_zehnder gravity phase", "Kasevich-Chu 1991: k_eff g T^2")
  local worst = 0
  for _, s in ipairs(out.scan) do
    worst = math.max(worst, math.abs(s.upper - (1 - math.cos(s.phase + gp)) / 2))
  end
  check.close(worst, 0, 1e-9, "mach_zehnder fringe vs (1 - cos phi)/2", "Kasevich-Chu 1991 interferometer phase")
  check.near(out.results.arm_separation[1], hbar * keff / p.mass * p.T, 1e-12, "mach_zehnder arm separation", "recoil velocity hbar k_eff / m (textbook)")
  local weak = mz.run(params(mz, {T = 0.2e-3, phase_steps = 6, area_scale = 0.8}))
  check.truthy(weak.results.fringe_contrast[1] < 0.99, "mach_zehnder imperfect pulses lose contrast")
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
  check.close(worst, 0, 1e-10, "aperture momentum density vs Dirichlet kernel", "discrete Fraunhofer single slit (DFT of a boxcar)")
  local r = out.results
  check.near(r.first_minimum[1], r.first_minimum_fraunhofer[1], 5e-3, "aperture first minimum", "Born & Wolf 8.5: x1 = lambda L / a")
  check.near(r.first_minimum_fraunhofer[1], h / (p.mass * p.velocity) * p.distance / p.slit, 1e-12,
    "aperture Fraunhofer prediction", "de Broglie lambda = h / m v")
  check.near(r.transmitted_fraction[1], r.slit_probability_before[1], 1e-12, "aperture transmission = probability in slit", "Born rule (common practice)")
end

-- arrival_time: a fast narrow packet arrives at L / v (classical kinematics,
-- common practice); all of it is detected in the window.
do
  local at = require "psiflight.recipes.arrival_time"
  local p = params(at, {samples = 100})
  local r = at.run(p).results
  check.near(r.mean_arrival_time[1], p.distance / p.velocity, 5e-3, "arrival mean time vs L / v", "classical kinematics (common practice)")
  check.near(r.detected_fraction[1], 1, 1e-9, "arrival detected fraction", "probability conservation (common practice)")
  check.close(r.negative_flux_part[1], 0, 1e-9, "arrival negative flux", "no backward momentum content (common practice)")
end
check.done()
