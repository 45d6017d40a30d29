-- test_covariance.lua - w:position_momentum_covariance() through the Lua API:
-- the d x d table, SI units, the chirped-Gaussian closed form and the
-- free-particle moment equations.  Tight checks: tests/unit/measure/test_covariance.c.
local pf = require "psiflight"
local check = require "check"
pf.setup{planning = "estimate"}
local hbar = pf.constants.hbar
local m = pf.mass("87Rb")

-- Chirped Gaussian psi ~ exp(-u^2/(4 s^2) + i b u^2 + i k0 x): closed form
-- <xp+px>/2 - <x><p> = 2 hbar b s^2 (textbook Gaussian integrals; derived in
-- tests/unit/measure/test_covariance.c).
local s, b, c, k0 = 2e-6, 2e10, -5e-6, 3e5
local g1 = pf.grid{points = 256, span = 100e-6}
local w = pf.wave(g1, {mass = m, position = function(x)
  local u = x - c
  local a, ph = math.exp(-u * u / (4 * s * s)), b * u * u + k0 * x
  return a * math.cos(ph), a * math.sin(ph)
end})
local C = w:position_momentum_covariance()
check.equal(#C, 1, "1D: one row")
check.equal(#C[1], 1, "1D: one column")
check.near(C[1][1], 2 * hbar * b * s * s, 1e-10, "chirped Gaussian covariance in m kg m/s",
  "2 hbar b s^2 (textbook closed form)")

-- Free flight: d<dx^2>/dt = 2 C / m (free-particle moment equations, common
-- practice), against a central difference of the engine's own variances.
local t, h = 5e-3, 1e-3
local mid = w:copy():fly(t)
local Cm = mid:position_momentum_covariance()[1][1]
local vlo = w:copy():fly(t - h):position_variance()
local vhi = w:copy():fly(t + h):position_variance()
check.near((vhi - vlo) / (2 * h), 2 * Cm / m, 1e-8, "d<dx^2>/dt = 2 C / m after a flight",
  "free-particle moment equations (common practice)")

-- 2D product state: a 2 x 2 table whose cross terms vanish (independent axes).
local g2 = pf.grid{points = {64, 64}, span = {40e-6, 40e-6}}
local w2 = pf.wave(g2, {mass = m, position = function(x, y)
  local a = math.exp(-x * x / (4 * 9e-12) - y * y / (4 * 4e-12))
  local ph = 1e10 * x * x - 2e10 * y * y
  return a * math.cos(ph), a * math.sin(ph)
end})
local C2 = w2:position_momentum_covariance()
check.equal(#C2, 2, "2D: two rows")
check.close(C2[1][2] / hbar, 0, 1e-9, "product state: C_xy = 0", "independent axes")
check.close(C2[2][1] / hbar, 0, 1e-9, "product state: C_yx = 0", "independent axes")
check.near(C2[2][2], 2 * hbar * -2e10 * 4e-12, 1e-10, "product state: C_yy", "2 hbar b s^2 (textbook closed form)")

w2:close()
check.fails(function() return w2:position_momentum_covariance() end, "a closed wave is refused", "closed")
check.done()
