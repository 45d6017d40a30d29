-- test_advice_resolution.lua - one definition of "resolved": every grid the
-- advisor proposes for a Gaussian state passes the Gaussian builder's own
-- resolution check (feature >= 3 dx, momentum inside Nyquist, state inside
-- the grid), which strict mode turns into an error.  The builder's rule and
-- the advisor's share pf_resolution_max_spacing (engine/core/states/pf_resolution.c);
-- before, a 3D proposal was refused ("smallest feature spans only 2.63 grid
-- spacings (want 3)").  Consistency check between two parts of the engine
-- (no outside reference is involved).
local pf = require "psiflight"
local check = require "check"
pf.setup{planning = "estimate", strict = true}
local m = pf.mass("87Rb")

local function grid_of(p)
  return pf.grid{points = p.points, span = p.span, origin = p.origin}
end

local cases = {
  {width = 1e-6, time = 1e-3},
  {width = 3.7e-6, time = 25e-3, wavenumber = 2e6},
  {width = {2e-6, 5e-6}, time = 5e-3},
  {width = {1.5e-6, 1.5e-6, 4e-6}, time = 2e-3},
}
for i, c in ipairs(cases) do
  local adv = pf.grid_advice{mass = m, time = c.time, width = c.width, wavenumber = c.wavenumber}
  for _, which in ipairs{"same", "input"} do
    local p = which == "same" and adv.same_grid or adv.scaled.input
    local g = grid_of(p)
    local dims = type(c.width) == "table" and #c.width or 1
    local ok, err = pcall(function()
      local w = pf.gaussian(g, {mass = m, width = c.width, center = p.origin,
        momentum = c.wavenumber and pf.constants.hbar * c.wavenumber or nil})
      w:close()
    end)
    check.truthy(ok, string.format("case %d (%dD), %s proposal %s: the Gaussian builder accepts it in strict mode%s",
      i, dims, which, table.concat(p.points, "x"), ok and "" or (": " .. tostring(err))))
    -- The shared rule itself: the proposed spacing resolves the FWHM.
    local w1 = type(c.width) == "table" and c.width or {c.width}
    for a = 1, dims do
      check.truthy(2.3548200450309493 * w1[a] >= 3 * p.spacing[a],
        string.format("case %d %s axis %d: FWHM spans %.2f >= 3 spacings", i, which, a,
          2.3548200450309493 * w1[a] / p.spacing[a]))
    end
  end
end
pf.setup{strict = false}
check.done()
