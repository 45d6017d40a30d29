-- mach_zehnder.lua - three-pulse light-pulse interferometer (pi/2 - pi - pi/2) with momentum kicks and free flights
--
-- A cloud is split, reflected and recombined by three light pulses separated
-- by free flights of duration T; each pulse couples the momentum classes p
-- and p + hbar k_eff (two-photon transitions, k_eff = 2 x 2 pi / lambda for
-- counter-propagating beams).  The last pulse's laser phase is scanned; the
-- fraction in the upper output port follows P = (1 - cos phi) / 2 with
-- phi = phi1 - 2 phi2 + phi3 + k_eff a T^2 (M. Kasevich and S. Chu, Phys.
-- Rev. Lett. 67, 181 (1991)).
--
-- Scalar approximation (documented in docs/recipes/mach_zehnder.md): the
-- internal state is not tracked - it is tagged by the momentum class, as for
-- Bragg pulses.  The two classes (p and p + hbar k_eff) are held as two wave
-- functions on one grid, `lower` and `upper`, whose sum is the scalar state;
-- they never overlap in momentum (the grid keeps them 10 momentum widths
-- from each other's edges).  Each pulse is instantaneous and ideal (area
-- pi/2 or pi times `area_scale`, no velocity selectivity, no light shift, no
-- spontaneous emission) and is made of native engine steps: exact momentum
-- kicks of +-k_eff (w:kick; k_eff is a multiple of the grid's k spacing)
-- and the wave arithmetic (w:copy, w:scale, w:add); the flights are w:fly.
-- The acceleration a enters through the laser phase seen in the freely
-- falling frame, phi_i + k_eff a t_i^2 / 2.  Outputs are model predictions;
-- a real sensor needs the full model and calibration.
local pf = require "psiflight"
local common = require "psiflight.recipes.common"

local recipe = {name = "mach_zehnder"}

recipe.parameters = {
  mass = {default = common.mass_u("133Cs"), unit = "u", help = "particle mass"},
  wavelength = {default = 852.3, unit = "nm", help = "laser wavelength (k_eff = 4 pi / wavelength)"},
  T = {default = 0.5, unit = "ms", help = "free flight between pulses"},
  accel = {default = pf.constants.g_n, unit = "m/s2", help = "acceleration along the beams (default: standard gravity)"},
  sigma = {default = 3, unit = "um", help = "rms width of the initial cloud"},
  area_scale = {default = 1.0, help = "pulse areas relative to pi/2 and pi (1: ideal)", min = 0},
  phase_steps = {default = 12, help = "laser phases of the last pulse scanned over 2 pi", min = 1, max = 10000},
  max_points = {default = 8192, help = "largest grid size", min = 64, max = 1048576},
}

-- Applies one pulse of area theta and laser phase phi to the pair of
-- classes (lower may stand alone before the first pulse: upper = nil):
-- lower' = cos(theta/2) lower + i sin(theta/2) e^{-i phi} upper(k + k_eff)
-- upper' = cos(theta/2) upper + i sin(theta/2) e^{+i phi} lower(k - k_eff)
-- Returns the new (lower, upper).
local function pulse(lower, upper, keff, theta, phi)
  local c, s = math.cos(theta / 2), math.sin(theta / 2)
  local up = pf.polar(s, phi + math.pi / 2)    -- i s e^{i phi}
  local down = pf.polar(s, -phi + math.pi / 2) -- i s e^{-i phi}
  local raised = lower:copy():kick(keff)       -- lower(k - k_eff): lower moved up by k_eff
  local lowered = upper and upper:copy():kick(-keff)
  lower:scale(c)
  if lowered then lower:add(lowered, down); lowered:close() end
  if upper then
    upper:scale(c):add(raised, up)
    raised:close()
  else
    upper = raised:scale(up)
  end
  return lower, upper
end

function recipe.run(p)
  common.check_params(recipe, p)
  local keff = 4 * math.pi / p.wavelength
  -- Span: the arms separate by hbar k_eff T / m and stay between 0 and that
  -- distance; the grid is centred on the middle and holds the separation plus
  -- 10 sigma and the spreading on each side, plus the grid guards' outer bands
  -- (1/32 of the span at each end), so no arm reaches them.
  -- The span is a whole number of lattice periods (2 pi / k_eff), so k_eff is
  -- an exact multiple of the grid's k spacing and a kick is an index shift.
  local vrec = common.hbar * keff / p.mass
  local span = (vrec * p.T + 20 * p.sigma + 2 * common.hbar * 2 * p.T / (2 * p.mass * p.sigma)) * 32 / 30
  local cells = math.ceil(span * keff / (2 * math.pi))
  span = cells * 2 * math.pi / keff
  -- Resolve k up to k_eff plus 10 momentum widths (1 / 2 sigma).
  local kneed = keff + 10 / (2 * p.sigma)
  local n = common.pow2(2 * kneed * span / (2 * math.pi))
  if n > p.max_points then
    error(string.format("mach_zehnder: needs %d grid points; raise max_points or shorten T", n), 0)
  end
  local grid = pf.grid{points = n, span = span, origin = vrec * p.T / 2}
  local shift = math.floor(keff / grid:kspacing(1) + 0.5)
  local kick = shift * grid:kspacing(1) -- k_eff on the grid's k lattice
  local start = pf.gaussian(grid, {mass = p.mass, width = p.sigma})
  local half, full = p.area_scale * math.pi / 2, p.area_scale * math.pi
  local gphase = function(t) return keff * p.accel * t * t / 2 end
  local scan, ports = {}, nil
  -- The first two pulses and flights do not depend on the scanned phase.
  local lower, upper = pulse(start, nil, kick, half, gphase(0))
  lower:fly(p.T); upper:fly(p.T)
  lower, upper = pulse(lower, upper, kick, full, gphase(p.T))
  lower:fly(p.T); upper:fly(p.T)
  for j = 0, p.phase_steps - 1 do
    local phi3 = 2 * math.pi * j / p.phase_steps
    local lo, hi = pulse(lower:copy(), upper:copy(), kick, half, phi3 + gphase(2 * p.T))
    local pu, pl = hi:norm(), lo:norm()
    scan[#scan + 1] = {phase = phi3, upper = pu / (pu + pl)}
    if j == 0 then ports = {lower = lo, upper = hi} else lo:close(); hi:close() end
  end
  local lo, hi = math.huge, -math.huge
  for _, s in ipairs(scan) do lo = math.min(lo, s.upper); hi = math.max(hi, s.upper) end
  local gravity_phase = keff * p.accel * p.T * p.T
  return {
    scan = scan, points = n, span = span, shift = shift, keff = keff, ports = ports,
    results = {
      k_eff = {keff, "1/m"},
      gravity_phase = {gravity_phase, "rad"},
      gravity_phase_mod_2pi = {gravity_phase % (2 * math.pi), "rad"},
      arm_separation = {vrec * p.T, "m"},
      fringe_contrast = {hi + lo > 0 and (hi - lo) / (hi + lo) or 0, ""}, -- no pulse area: no fringe
      upper_fraction_phase0 = {scan[1].upper, ""},
    },
  }
end

function recipe.main(p)
  local out = recipe.run(p)
  print(string.format("mach_zehnder: %d points over %.4g um (kick = %d k steps), T = %.4g ms",
    out.points, out.span * 1e6, out.shift, p.T * 1e3))
  print("  phase3 (rad)   upper fraction   (1 - cos(phase3 + k_eff a T^2)) / 2")
  local gp = out.results.gravity_phase[1]
  for _, s in ipairs(out.scan) do
    print(string.format("  %11.6f   %14.10f   %14.10f", s.phase, s.upper, (1 - math.cos(s.phase + gp)) / 2))
  end
  for _, name in ipairs(common.sorted_keys(out.results)) do
    common.report(name, out.results[name][1], out.results[name][2])
  end
  local phases, upper, formula = {}, {}, {}
  for i, s in ipairs(out.scan) do
    phases[i], upper[i], formula[i] = s.phase, s.upper, (1 - math.cos(s.phase + gp)) / 2
  end
  common.write_results(recipe.name, out, {
    waves = {{"upper_port", out.ports.upper}, {"lower_port", out.ports.lower}},
    tables = {{"fringe", {{"phase3", "rad", phases}, {"upper_fraction", "", upper}, {"formula", "", formula}}}},
    pictures = {{"mach_zehnder.png", {
      title = "upper-port fraction against the last pulse's phase", x_name = "laser phase (rad)",
      y_name = "upper-port fraction", legend = "upper right",
      series = {{x = phases, y = upper, label = "engine"},
                {x = phases, y = formula, label = "textbook fringe", points = true}},
    }}},
  })
  return out
end

return recipe
