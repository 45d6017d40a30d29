-- mach_zehnder.lua - three-pulse light-pulse interferometer (pi/2 - pi - pi/2) on two internal levels, lab frame
-- (or, with frame = true, the levels' shared moving frame)
--
-- A cloud is split, reflected and recombined by three two-photon Raman pulses
-- (Rabi pulses of durations tau, 2 tau, tau) separated by free flights of
-- duration T; each pulse moves atoms between the levels `lower` and `upper`
-- and changes their momentum by hbar k_eff (k_eff = 2 x 2 pi / lambda for
-- counter-propagating beams).  The last pulse's laser phase is scanned; the
-- fraction in the upper level follows P = (1 - C cos phi) / 2 with
-- phi = phi1 - 2 phi2 + phi3 + k_eff a T^2 for short pulses (M. Kasevich and
-- S. Chu, Phys. Rev. Lett. 67, 181 (1991)) and (k_eff a - alpha)(T + 2 tau)
-- (T + 4 tau / pi) for finite ones with the laser frequency chirped at the
-- rate alpha (P. Cheinet et al., IEEE Trans. Instrum. Meas. 57, 1141 (2008)).
--
-- Built on pf.levels (docs/internal-states.md): the pulses are the exact
-- two-level propagators in momentum space (Doppler and recoil detuning,
-- velocity selectivity), the acceleration acts during the flights (exact
-- uniform-force propagator) and during the pulses (sliced), so the gravity
-- phase comes out of the flight itself, in the lab frame.  Model: rotating-
-- wave approximation, no spontaneous emission, adiabatic elimination of the
-- excited state, no light shift.  Outputs are model predictions; a real
-- sensor needs the full model and calibration.
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
  pulse_time = {default = 1, unit = "us", help = "duration tau of the pi/2 pulses (the pi pulse lasts 2 tau)", min = 1e-6},
  chirp = {default = 0, help = "chirp rate alpha of the two-photon detuning (rad/s^2)"},
  slices = {default = 16, help = "time slices per pulse for the acceleration and the chirp", min = 1, max = 10000},
  frame = {default = false, type = "boolean",
           help = "carry the fall in the levels' shared moving frame (the grid holds the cloud, not the drop)"},
}

-- Phase of the fringe P = (1 - C cos(phase + phi)) / 2 from a scan over
-- equally spaced phases phi_j (least squares of 1, cos, sin; needs 3 or more).
local function fringe_phase(scan)
  if #scan < 3 then return nil end
  local c, s = 0, 0
  for _, pt in ipairs(scan) do
    c = c + (1 - 2 * pt.upper) * math.cos(pt.phase)
    s = s + (1 - 2 * pt.upper) * math.sin(pt.phase)
  end
  return math.atan(-s, c)
end

function recipe.run(p)
  common.check_params(recipe, p)
  local keff = 4 * math.pi / p.wavelength
  local tau = p.pulse_time
  local t_end = 2 * p.T + 4 * tau
  -- Lab frame: the grid holds the fall a t^2 / 2, the arm separation
  -- hbar k_eff T / m, 10 sigma and the spreading on each side, plus the grid
  -- guards' outer bands (1/32 of the span at each end).  The span is a whole
  -- number of lattice periods (2 pi / k_eff), so k_eff is an exact multiple
  -- of the grid's k spacing.
  local vrec = common.hbar * keff / p.mass
  -- In the moving frame (frame = true) the fall and its momentum stay in the
  -- frame: the grid holds the cloud and the arms only.
  local frame = p.frame == true
  local fall = frame and 0 or p.accel * t_end * t_end / 2
  local lo_x, hi_x = math.min(0, fall), math.max(0, fall) + vrec * (p.T + 2 * tau)
  local spread = common.hbar * t_end / (2 * p.mass * p.sigma)
  local span = (hi_x - lo_x + 20 * p.sigma + 2 * spread) * 32 / 30
  local cells = math.ceil(span * keff / (2 * math.pi))
  span = cells * 2 * math.pi / keff
  -- Momenta from the start (0) to the end of the fall, plus k_eff, plus 10
  -- momentum widths (1 / 2 sigma) on each side.
  local kfall = frame and 0 or p.mass * p.accel * t_end / common.hbar
  local kneed = math.max(math.abs(math.min(0, kfall)), math.max(0, kfall) + keff) + 10 / (2 * p.sigma)
  local n = common.pow2(2 * kneed * span / (2 * math.pi) * 32 / 30)
  if n > p.max_points then
    error(string.format("mach_zehnder: needs %d grid points; raise max_points or shorten T", n), 0)
  end
  local grid = pf.grid{points = n, span = span, origin = (lo_x + hi_x) / 2}
  local shift = math.floor(keff / grid:kspacing(1) + 0.5)
  local kick = shift * grid:kspacing(1) -- k_eff on the grid's k lattice
  local start = pf.gaussian(grid, {mass = p.mass, width = p.sigma})
  local lv = pf.levels{labels = {"lower", "upper"}, waves = {lower = start}, frame = frame}
  start:close()
  local rabi = p.area_scale * math.pi / (2 * tau)
  local recoil = common.hbar * kick * kick / (2 * p.mass) -- resonance of the class at rest
  local function pulse(levels, duration, phase)
    levels:pulse{from = "lower", to = "upper", rabi = rabi, duration = duration, wavenumber = kick, detuning = recoil,
                 chirp = p.chirp, phase = phase, acceleration = p.accel, slices = p.slices}
  end
  local scan, ports = {}, nil
  -- The first two pulses and flights do not depend on the scanned phase.
  pulse(lv, tau, 0)
  lv:fly(p.T, {acceleration = p.accel})
  pulse(lv, 2 * tau, 0)
  lv:fly(p.T, {acceleration = p.accel})
  for j = 0, p.phase_steps - 1 do
    local phi3 = 2 * math.pi * j / p.phase_steps
    local last = pf.levels{labels = {"lower", "upper"},
                           waves = {lower = lv:level("lower"), upper = lv:level("upper")}, frame = frame}
    pulse(last, tau, phi3)
    local pop = last:populations()
    scan[#scan + 1] = {phase = phi3, upper = pop.upper / (pop.upper + pop.lower)}
    if j == 0 then ports = {lower = last:level("lower"), upper = last:level("upper"), levels = last}
    else last:close() end
  end
  local lo, hi = math.huge, -math.huge
  for _, s in ipairs(scan) do lo = math.min(lo, s.upper); hi = math.max(hi, s.upper) end
  local gravity_phase = keff * p.accel * p.T * p.T
  local finite = (keff * p.accel - p.chirp) * (p.T + 2 * tau) * (p.T + 4 * tau / math.pi)
  local results = {
    k_eff = {keff, "1/m"},
    gravity_phase = {gravity_phase, "rad"},
    gravity_phase_mod_2pi = {gravity_phase % (2 * math.pi), "rad"},
    finite_pulse_phase = {finite, "rad"},
    arm_separation = {vrec * p.T, "m"},
    fringe_contrast = {hi + lo > 0 and (hi - lo) / (hi + lo) or 0, ""}, -- no pulse area: no fringe
    upper_fraction_phase0 = {scan[1].upper, ""},
  }
  local measured = fringe_phase(scan)
  if measured then results.fringe_phase = {measured, "rad"} end
  return {scan = scan, frame = frame, points = n, span = span, shift = shift, keff = keff, ports = ports, results = results}
end

function recipe.main(p)
  local out = recipe.run(p)
  print(string.format("mach_zehnder: %d points over %.4g um (kick = %d k steps), T = %.4g ms%s",
    out.points, out.span * 1e6, out.shift, p.T * 1e3, out.frame and ", fall in the moving frame" or ""))
  print("  phase3 (rad)   upper fraction   (1 - cos(phase3 + phi)) / 2, phi = (k_eff a - alpha)(T + 2 tau)(T + 4 tau/pi)")
  local gp = out.results.finite_pulse_phase[1]
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
      y_name = "upper-port fraction", legend = "lower right",
      series = {{x = phases, y = upper, label = "engine"},
                {x = phases, y = formula, label = "textbook fringe", points = true}},
    }}},
  })
  return out
end

return recipe
