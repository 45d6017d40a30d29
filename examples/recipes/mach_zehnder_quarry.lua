-- mach_zehnder_quarry.lua - the (invented) Quarry Hill gravimeter prototype:
-- rubidium-87, counter-propagating 780.24 nm beams, T = 1 ms between pulses,
-- laser phase of the last pulse scanned over 2 pi.  Outputs are model
-- predictions of the two-level model (docs/recipes/mach_zehnder.md);
-- laser settings on the apparatus follow the local laser safety rules.
--   build/psiflight run examples/recipes/mach_zehnder_quarry.lua --set T=0.8ms
local pf = require "psiflight"
local common = require "psiflight.recipes.common"
local recipe = require "psiflight.recipes.mach_zehnder"

-- 87Rb mass from the engine's species table (AME2020), in u.
local p = pf.parameters(common.with_defaults(recipe.parameters, {
  mass = common.mass_u("87Rb"), wavelength = 780.24, T = 1, sigma = 4, phase_steps = 16,
}))
print("Quarry Hill: three-pulse interferometer fringe, 87Rb")
recipe.main(p)
