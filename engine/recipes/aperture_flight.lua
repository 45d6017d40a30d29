-- aperture_flight.lua - a beam passes a slit, then flies to a far detector plane
--
-- Transverse model of a beam experiment: a wide transverse Gaussian (or a
-- uniform wave when beam_width is 0) passes a slit of full width `slit`
-- centred on the axis (the engine's hard mask w:slit, which logs the step
-- and returns the probability it removed); the part that passes is
-- renormalised (the recipe follows the particles that pass) and flies for
-- t = distance / velocity.
-- Results: the transmitted fraction, the Fresnel number
-- F = (slit / 2)^2 / (lambda_dB distance) with lambda_dB = h / (m v), the
-- position of the first diffraction minimum found in the flown density and
-- the Fraunhofer prediction x1 = lambda_dB distance / slit (single-slit
-- diffraction, e.g. Born and Wolf, Principles of Optics, section 8.5).
--
-- Model: paraxial, the longitudinal motion is classical at the given
-- velocity (transverse time t = distance / velocity), an ideal absorbing slit
-- of zero thickness, no van der Waals interaction with the slit walls (it
-- narrows the effective slit for atoms and molecules).  Outputs are model
-- predictions.
local pf = require "psiflight"
local common = require "psiflight.recipes.common"

local recipe = {name = "aperture_flight"}

recipe.parameters = {
  mass = {default = common.mass_u("4He"), unit = "u", help = "particle mass"},
  velocity = {default = 1000, unit = "m/s", help = "beam velocity (sets the transverse flight time)"},
  distance = {default = 0.5, unit = "m", help = "slit-to-detector distance"},
  slit = {default = 2, unit = "um", help = "full width of the slit"},
  beam_width = {default = 40, unit = "um", help = "rms width of the incident beam (0: uniform)"},
  points_per_slit = {default = 24, help = "grid points across the slit", min = 4, max = 100000},
  lobes = {default = 8, help = "far-field lobes the grid must hold each side", min = 2, max = 1000},
}

-- Applies the slit with the engine's mask step: psi is kept where
-- |x| <= width / 2 and set to zero elsewhere.  Returns the wave and the
-- probability removed.
-- The slit is cell-switched (edges = "cells"): the recipe puts its edges
-- midway between points, so the open points are exactly the slit.
function recipe.apply_slit(w, width)
  return w:slit{width = width, edges = "cells"}
end

-- The incident beam: a Gaussian of rms width beam_width (pf.gaussian), or a
-- uniform wave for beam_width 0 (pf.sampled from two samples of the constant
-- 1 at the ends of the grid, linearly interpolated: 1 at every point).
local function incident(grid, mass, beam_width)
  if beam_width > 0 then return pf.gaussian(grid, {mass = mass, width = beam_width}) end
  local xs = grid:x_axis(1)
  return pf.sampled(grid, {mass = mass, x = {xs[1], xs[#xs]}, values = {1, 1}})
end

function recipe.run(p)
  common.check_params(recipe, p)
  local t = p.distance / p.velocity
  local lambda = common.h / (p.mass * p.velocity)
  local x1 = lambda * p.distance / p.slit
  local dx = p.slit / p.points_per_slit
  local span = math.max(2 * p.lobes * x1, 8 * p.beam_width)
  local n = common.pow2(span / dx)
  span = n * dx -- keep the spacing so the slit holds whole points
  -- The slit edges at +-slit / 2 lie midway between grid points: points at
  -- half-integer multiples of dx for an even count, integer multiples for an
  -- odd one, so exactly points_per_slit points are open (the midpoint rule
  -- for the mask) and the discrete slit has the full width.
  local origin = p.points_per_slit % 2 == 0 and dx / 2 or 0
  local grid = pf.grid{points = n, span = span, origin = origin}
  local beam = incident(grid, p.mass, p.beam_width)
  local incident_norm = beam:norm()
  local before = beam:probability_in(pf.box{min = {-p.slit / 2}, max = {p.slit / 2}})
  local _, removed = recipe.apply_slit(beam, p.slit)
  local passed = (incident_norm - removed) / incident_norm
  -- The passing part is renormalised only at the end, its densities scaled
  -- here instead: the grid guard judges the state at each transform against
  -- the norm last logged (the mask's, carried by the flight), and
  -- w:normalize logs no step, so normalising earlier would inflate the
  -- guard figures by 1 / transmitted.
  local kept = beam:norm()
  local phi_after = beam:momentum_density()
  for j = 1, #phi_after do phi_after[j] = phi_after[j] / kept end
  beam:fly(t)
  -- First minimum: the lowest density between 0.5 x1 and 1.5 x1 (the
  -- position is unchanged by the normalisation).
  local xs, rho = grid:x_axis(1), beam:density()
  beam:normalize()
  local best, xmin = math.huge, nil
  for i = 1, n do
    if xs[i] > 0.5 * x1 and xs[i] < 1.5 * x1 and rho[i] < best then best, xmin = rho[i], xs[i] end
  end
  return {
    points = n, span = span, flight_time = t, momentum_density = phi_after, wave = beam,
    results = {
      transmitted_fraction = {passed, ""},
      slit_probability_before = {before, ""},
      fresnel_number = {(p.slit / 2) ^ 2 / (lambda * p.distance), ""},
      de_broglie_wavelength = {lambda, "m"},
      first_minimum = {xmin or 0 / 0, "m"},
      first_minimum_fraunhofer = {x1, "m"},
    },
  }
end

function recipe.main(p)
  local out = recipe.run(p)
  print(string.format("aperture_flight: %d points over %.4g um, transverse flight %.4g ms",
    out.points, out.span * 1e6, out.flight_time * 1e3))
  for _, name in ipairs(common.sorted_keys(out.results)) do
    common.report(name, out.results[name][1], out.results[name][2])
  end
  local g = out.wave:grid()
  local k = g:k_axis(1)
  local rho = out.wave:density()
  common.write_results(recipe.name, out, {
    waves = {{"beam", out.wave, "both"}},
    tables = {{"momentum_density", {{"k", "1/m", k}, {"density", "m", out.momentum_density}}}},
    pictures = {{"aperture_flight.png", {
      title = "beam after the slit and the flight", x_name = "x", x_quantity = "length",
      y_name = "|#gq|#u2#d", y_per_x = true, legend = "upper right",
      series = {{x = g:x_axis(1), y = rho, label = "engine"}},
    }}},
  })
  return out
end

return recipe
