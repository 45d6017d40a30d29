-- test_input_range.lua - inputs that used to give silently wrong numbers
-- (inf or NaN widths and norms, absurd remedies) now stop with an error that
-- names the script line and the bad value.  The range itself is the
-- engine's documented one (docs/conventions.md, "Range of grids"): no
-- physics value is compared here, so no outside reference is involved.
local pf = require "psiflight"
local check = require "check"
pf.setup{planning = "estimate"}

local mass = 1.4e-25 -- kg, an invented species of about 84 u
local function gauss(w) return function(x) return math.exp(-(x / w) ^ 2) end end
-- The line of the call that fails, as the error should name it.
local function here() return "test_input_range.lua:" .. debug.getinfo(2, "l").currentline .. ":" end

local at
-- check.fails, with the failing call's own line (set by f through here())
-- among the texts the message must hold.
local function refused(f, label, ...)
  local ok, msg = pcall(f)
  check.fails(function() if not ok then error(msg, 0) end end, label, at, ...)
end
-- span = 1e300 once gave width inf and a remedy of 2^64 - 1 points
refused(function() at = here(); pf.grid{points = 64, span = 1e300} end,
  "a span beyond 1e30 m is refused", "span on axis 1 must be at most 1e+30 m", "got 1e+300 m")
-- span = 1e-320 once gave norm inf
refused(function() at = here(); pf.grid{points = 64, span = 1e-320} end,
  "a spacing below 1e-30 m is refused", "spacing on axis 1", "at least 1e-30 m")
refused(function() at = here(); pf.grid{points = 16, spacing = 1e-31} end,
  "spacing given directly is held to the same floor", "spacing on axis 1", "1e-31")
refused(function() at = here(); pf.grid{points = 64, span = 1e-4, origin = 2e30} end,
  "an origin beyond 1e30 m is refused", "origin on axis 1", "2e+30")
-- a 2-point grid once sent inf through a conversion to size_t in the guard
refused(function() at = here(); pf.grid{points = 2, span = 1e-4} end,
  "fewer than 4 points per axis are refused", "points on axis 1", "at least 4", "got 2")
refused(function() at = here(); pf.grid{points = {64, 3}, span = 1e-4} end,
  "the minimum holds on every axis", "points on axis 2", "got 3")
-- the limits themselves are accepted
check.truthy(pf.grid{points = 4, span = 1e30}, "span 1e30 m on 4 points is accepted")
check.truthy(pf.grid{points = 64, span = 64e-30}, "spacing 1e-30 m is accepted")

local g = pf.grid{points = 64, span = 1e-4}
local w = pf.wave(g, {mass = mass, position = gauss(1e-5)})
-- fly_long(1e300) once gave width inf with no warning
refused(function() at = here(); w:fly_long(1e300) end,
  "fly_long over an image beyond the grid range is refused", "a flight of 1e+300 s", "largest grid span")
refused(function() at = here(); w:fly_scaled(1e300) end,
  "fly_scaled likewise", "a flight of 1e+300 s", "largest grid span")
-- fly(1e300) gave a finite result made of phase noise
refused(function() at = here(); w:fly(1e300) end,
  "a flight whose phase no double can hold is refused", "a flight of 1e+300 s", "Nyquist limit")
check.equal(w:clock(), 0, "a refused flight leaves the clock alone")
check.near(w:norm(), 1, 1e-13, "a refused flight leaves the state alone", "definition (unit norm after the builder)")
refused(function() at = here(); w:grid_advice{time = 1e300} end,
  "the grid advisor refuses a grid beyond the largest axis", "advisor", "beyond the largest axis")
-- an ordinary long flight still works
w:fly_long(1e-1)
local width = w:position_width()
check.truthy(width > 0 and width < math.huge, "an ordinary long flight still gives a finite width")
check.done()
