-- aperture_millbrook.lua - the (invented) Millbrook helium-beam setup: a
-- helium-4 beam at 1800 m/s passes a 1 um slit and is detected 1.2 m
-- downstream.  Prints the diffraction figures of the bundled
-- aperture_flight recipe.
--   build/psiflight run examples/recipes/aperture_millbrook.lua --set slit=0.5um
local pf = require "psiflight"
local common = require "psiflight.recipes.common"
local recipe = require "psiflight.recipes.aperture_flight"

local p = pf.parameters(common.with_defaults(recipe.parameters, {
  velocity = 1800, distance = 1.2, slit = 1, beam_width = 20,
}))
print("Millbrook: 4He single-slit diffraction")
recipe.main(p)
