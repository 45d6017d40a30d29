-- talbot_linden.lua - the (invented) Linden Street beam group checks the
-- Talbot revival of a lithium-7 wave behind a 1.5 um nanofabricated grating
-- with 0.12 um rms transmission windows, scanning two Talbot times.
--   build/psiflight run examples/recipes/talbot_linden.lua [--set period=1um]
local pf = require "psiflight"
local common = require "psiflight.recipes.common"
local recipe = require "psiflight.recipes.talbot_scan"

-- 7Li mass from the engine's species table (AME2020), in u.
local p = pf.parameters(common.with_defaults(recipe.parameters, {
  mass = common.mass_u("7Li"), period = 1.5, slit = 0.12, periods = 6, steps = 24, stop = 2,
}))
print("Linden Street: Talbot carpet of 7Li behind a 1.5 um grating")
recipe.main(p)
