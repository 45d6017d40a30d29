-- test_interp.lua - w:psi_at and w:density_at: the grid's band-limited
-- interpolant evaluated between grid points, against the closed-form free
-- Gaussian (textbook: psi(x, t) = (2 pi s^2)^(-1/4) (1 + i tau)^(-1/2)
-- exp(-(d - v t)^2 / (4 s^2 (1 + i tau)) + i k0 d - i hbar k0^2 t / 2m),
-- tau = hbar t / (2 m s^2), d = x - x0; e.g. Cohen-Tannoudji, Quantum
-- Mechanics, complement G_I), which a well-resolved grid represents to
-- rounding, so its interpolant must too.
local pf = require "psiflight"
local check = require "check"
pf.setup{planning = "estimate"}
local hbar = pf.constants.hbar
local m = pf.mass("87Rb")

local function gauss_t(x, x0, s, k0, t)
  local tau = hbar * t / (2 * m * s * s)
  local d = x - x0
  local v = hbar * k0 / m
  local one_it = pf.complex(1, tau)
  local e = -(d - v * t) ^ 2 / (4 * s * s) / one_it + pf.complex(0, k0 * d - hbar * k0 * k0 * t / (2 * m))
  return pf.cexp(e) / (one_it ^ 0.5) * (2 * math.pi * s * s) ^ -0.25
end

-- 1D: 256 points over 100 um, s = 4 um, moving; points between grid points.
local s, x0, k0, t = 4e-6, -3.1e-6, 2.5e6, 0.8e-3
local g = pf.grid{points = 256, span = 100e-6}
local w = pf.gaussian(g, {mass = m, width = s, center = x0, momentum = hbar * k0})
w:fly(t)
local dx = g:spacing(1)
local xs = {}
for i = 1, 200 do xs[i] = -30e-6 + (i - 1) * 0.3011 * dx end
local psi = w:psi_at(xs)
local peak = (2 * math.pi * s * s) ^ -0.25
local worst = 0
for i, x in ipairs(xs) do worst = math.max(worst, (psi[i] - gauss_t(x, x0, s, k0, t)):abs()) end
check.close(worst / peak, 0, 1e-12, "psi_at between grid points = free Gaussian closed form (1D, 200 points)",
  "free Gaussian, Cohen-Tannoudji complement G_I")
local one = w:psi_at(xs[17])
check.close((one - psi[17]):abs() / peak, 0, 0, "one point = the same point in a table", "definition")
local rho = w:density_at(xs)
check.close(math.abs(rho[33] - psi[33]:abs2()) / peak ^ 2, 0, 1e-15, "density_at = |psi_at|^2", "definition")
-- At a grid point the interpolant is the sample.
check.close((w:psi_at(g:x(1, 100)) - w:psi(100)):abs() / peak, 0, 1e-13, "psi_at at a grid point = w:psi",
  "interpolation property of the trigonometric interpolant, common practice")

-- 2D: anisotropic Gaussian, points scattered in the plane.
local g2 = pf.grid{points = {64, 96}, span = {48e-6, 72e-6}}
local s2 = {2e-6, 3e-6}
local w2 = pf.gaussian(g2, {mass = m, width = s2, center = {1e-6, -2e-6}, momentum = {0, hbar * 1e6}})
w2:fly(0.3e-3)
local X, Y = {}, {}
for i = 1, 50 do X[i] = -8e-6 + i * 0.317e-6; Y[i] = -10e-6 + i * 0.431e-6 end
local v2 = w2:psi_at(X, Y)
local peak2 = (2 * math.pi * s2[1] ^ 2) ^ -0.25 * (2 * math.pi * s2[2] ^ 2) ^ -0.25
local worst2 = 0
for i = 1, 50 do
  local want = gauss_t(X[i], 1e-6, s2[1], 0, 0.3e-3) * gauss_t(Y[i], -2e-6, s2[2], 1e6, 0.3e-3)
  worst2 = math.max(worst2, (v2[i] - want):abs())
end
check.close(worst2 / peak2, 0, 1e-12, "psi_at in 2D = product of free Gaussians (50 points)",
  "free Gaussian, Cohen-Tannoudji complement G_I")

-- Refused: a point outside the grid's cell, a wrong count of coordinates.
check.fails(function() w:psi_at(60e-6) end, "point outside the grid refused", "outside the grid", "6e-05")
check.fails(function() w2:psi_at(1e-6) end, "2D wave needs two coordinates", "coordinate 2")
check.fails(function() w2:psi_at({1e-6, 2e-6}, {0}) end, "unequal tables refused", "equal lengths")

-- A wave with a moved frame (a flight under acceleration): psi_at takes lab
-- coordinates.  Uniform-force closed form (written from memory; it follows
-- from the Avron-Herbst factorisation, docs/frames.md): psi_a(x, t) =
-- exp(i (m a t x / hbar - m a^2 t^3 / (6 hbar))) psi_free(x - a t^2 / 2, t).
do
  local acc, tf = -9.80665, 2e-3
  local gf = pf.grid{points = 256, span = 100e-6}
  local wf = pf.gaussian(gf, {mass = m, width = s, center = x0, momentum = hbar * k0})
  wf:fly(tf, {acceleration = {acc}})
  local drop = acc * tf * tf / 2
  local lx, worst_f = {}, 0
  for i = 1, 100 do lx[i] = drop - 20e-6 + (i - 1) * 0.4123e-6 end
  local vals = wf:psi_at(lx)
  for i, x in ipairs(lx) do
    local ph = m * acc * tf * x / hbar - m * acc * acc * tf ^ 3 / (6 * hbar)
    local want = pf.cexp(pf.complex(0, ph)) * gauss_t(x - drop, x0, s, k0, tf)
    worst_f = math.max(worst_f, (vals[i] - want):abs())
  end
  check.close(worst_f / peak, 0, 1e-11, "moved frame: psi_at(lab x) = uniform-force closed form (100 points)",
    "free Gaussian under uniform force, Avron-Herbst form")
  local xi = wf:x_axis(1)[77]
  check.close((wf:psi_at(xi) - wf:psi(77)):abs() / peak, 0, 1e-12,
    "moved frame: psi_at at a grid point's lab position = w:psi", "definition (lab value of the frame)")
end
-- A state the grid does not resolve (content at the Nyquist limit): values
-- between points are not the wave function, which strict mode refuses.
do
  local gq = pf.grid{points = 64, span = 64e-6}
  local wq = pf.gaussian(gq, {mass = m, width = 4e-6})
  wq:kick(0.9 * gq:knyquist(1))
  wq:psi_at(0.5e-6) -- the grid guard warns once (not strict)
  pf.setup{strict = true}
  check.fails(function() wq:psi_at(0.5e-6) end, "unresolved state: psi_at refused in strict mode, every call",
    "between grid points", "Nyquist")
  pf.setup{strict = false}
end
check.done()
