-- test_protocol_steps.lua - the protocol steps through the Lua API: Talbot
-- revivals, lens focusing, apertures, velocity selection, shifts, kicks, a
-- time-dependent potential, the step log, and argument errors.
local pf = require "psiflight"
local check = require "check"
pf.setup{planning = "estimate"}

-- CODATA 2018 (h exact in the 2019 SI); 87Rb mass from the engine's species
-- table (AME2020).
local hbar = 6.62607015e-34 / (2 * math.pi)
local m = pf.mass("87Rb")

local function max_abs_diff(a, b, shift)
  local n, worst = #a, 0
  for i = 1, n do
    local j = (i - 1 + (shift or 0)) % n + 1
    worst = math.max(worst, math.abs(a[i] - b[j]))
  end
  return worst
end

-- Talbot effect (Talbot 1836; Rayleigh 1881; years from memory): a grating of period d revives
-- after T_T = m d^2 / (pi hbar) (z_T = 2 d^2 / lambda mapped to time with
-- z = v t, lambda = h / m v) and appears shifted by d/2 at T_T / 2.  On a
-- grid whose span is a multiple of d every diffraction order sits on the
-- momentum grid, so the revival is exact up to rounding.
do
  -- A plane wave fills the periodic cell by design here, and the hard
  -- grating edges reach the Nyquist limit: the grid guards would rightly
  -- warn about both, so they are switched off for this block.
  pf.setup{guard_threshold = math.huge}
  local d = 8e-6
  local g = pf.grid{points = 1024, span = 16 * d}  -- 64 points per period
  local TT = m * d * d / (math.pi * hbar)
  local w = pf.wave(g, {mass = m, position = function(x) return 1 end})
  local _, removed_cells = w:copy():mask_grating{period = d, open_fraction = 0.5, edges = "cells"}
  check.near(removed_cells, 0.5, 1e-12, "cell-switched amplitude grating (open 1/2) removes half",
    "geometry: opening fraction")
  -- Exact (default) edges keep the grating's Fourier series up to Nyquist
  -- (harmonic 32 at 64 points per period): the probability beyond it is
  -- removed too, (2 / pi^2) sum over odd h >= 33 of 1 / h^2 (rectangular-wave
  -- series c_h = sin(pi h / 2) / (pi h) and Parseval's theorem, textbook;
  -- the sum's tail past h = 2e6 is 1 / (2 h), below 3e-7 x 2/pi^2).
  local _, removed = w:mask_grating{period = d, open_fraction = 0.5}
  local tail = 0
  for h = 33, 2000001, 2 do tail = tail + 1 / (h * h) end
  tail = tail + 1 / (2 * 2000003)
  check.near(removed, 0.5 + 2 / math.pi ^ 2 * tail, 1e-9, "exact amplitude grating (open 1/2) removes half plus the band tail",
    "rectangular-wave Fourier series + Parseval")
  local rho0 = w:density()
  local peak = 0
  for i = 1, #rho0 do peak = math.max(peak, rho0[i]) end
  w:fly(TT / 2)
  check.close(max_abs_diff(w:density(), rho0, 32) / peak, 0, 1e-10,
    "Talbot: density at T_T/2 = start shifted by d/2", "Talbot/Rayleigh, T_T = m d^2/(pi hbar)")
  w:fly(TT / 2)
  check.close(max_abs_diff(w:density(), rho0) / peak, 0, 1e-10,
    "Talbot: density revives at T_T", "Talbot/Rayleigh, T_T = m d^2/(pi hbar)")

  -- Phase grating: the whole wave function revives, and at T_T/2 equals the
  -- start displaced by d/2.
  local p = pf.wave(g, {mass = m, position = function(x) return 1 end})
  p:grating{depth = 1.3, period = d, phase = 0.4}
  local re0, im0 = {}, {}
  for i = 1, g:points() do local z = p:psi(i); re0[i], im0[i] = z.re, z.im end
  p:fly(TT / 2)
  local worst = 0
  for i = 1, g:points() do
    local z = p:psi(i)
    local j = (i - 1 - 32) % g:points() + 1
    worst = math.max(worst, math.abs(z.re - re0[j]), math.abs(z.im - im0[j]))
  end
  check.close(worst * math.sqrt(g:span()), 0, 1e-10, "Talbot: phase grating psi at T_T/2 = psi0(x - d/2)",
    "Talbot/Rayleigh half-period shift")
  p:fly(TT / 2)
  worst = 0
  for i = 1, g:points() do
    local z = p:psi(i)
    worst = math.max(worst, math.abs(z.re - re0[i]), math.abs(z.im - im0[i]))
  end
  check.close(worst * math.sqrt(g:span()), 0, 1e-10, "Talbot: phase grating psi revives at T_T", "Talbot/Rayleigh")
  pf.setup{guard_threshold = 1e-6}
end

-- Thin lens of focal time f on a Gaussian of width s0 (no chirp): the width
-- follows s(t)^2 = s0^2 (1 - t/f)^2 + (hbar t / 2 m s0)^2, so the focus lies
-- at t* = f / (1 + (f / t_R)^2) with width s0 / sqrt(1 + (t_R / f)^2),
-- t_R = 2 m s0^2 / hbar - the Gaussian-beam thin-lens formulas (S. A. Self,
-- Appl. Opt. 22, 658 (1983); cited from memory) with z -> t.
do
  local s0, f = 20e-6, 0.2
  -- 8 s0 to each side: the lens phase is not periodic, so the state must
  -- vanish at the cell boundary.
  local g = pf.grid{points = 4096, span = 320e-6}
  local w = pf.wave(g, {mass = m, position = function(x) return math.exp(-x * x / (4 * s0 * s0)) end})
  w:lens(f)
  local tR = 2 * m * s0 * s0 / hbar
  local tstar = f / (1 + (f / tR) ^ 2)
  local smin = s0 / math.sqrt(1 + (tR / f) ^ 2)
  local probe = w:copy()
  probe:fly(tstar)
  check.near(probe:position_width(), smin, 1e-9, "lens: focus width s0/sqrt(1+(t_R/f)^2)", "Gaussian-beam thin lens (Self 1983)")
  local before, after = w:copy(), w:copy()
  before:fly(tstar * 0.99); after:fly(tstar * 1.01)
  check.truthy(before:position_width() > smin and after:position_width() > smin, "lens: width is smallest at t*")
  probe:fly(f - tstar)
  check.near(probe:position_width(), hbar * f / (2 * m * s0), 1e-9, "lens: width at t = f is hbar f / 2 m s0",
    "Gaussian-beam formula at t = f")
end

-- Circular aperture of radius R on an isotropic 2D Gaussian (std. dev. s per
-- axis) removes exp(-R^2 / 2 s^2) (Rayleigh distribution tail).  The hard
-- edge on a square grid is a staircase: tolerance 1%.
do
  local s, R = 5e-6, 6e-6
  local g = pf.grid{points = {256, 256}, span = {60e-6, 60e-6}}
  local w = pf.wave(g, {mass = m, position = function(x, y) return math.exp(-(x * x + y * y) / (4 * s * s)) end})
  local _, removed = w:aperture{shape = "circle", radius = R}
  check.near(removed, math.exp(-R * R / (2 * s * s)), 1e-2, "circle aperture removes exp(-R^2/2s^2)", "Rayleigh tail")
  local r = pf.wave(g, {mass = m, position = function(x, y) return math.exp(-(x * x + y * y) / (4 * s * s)) end})
  local _, rem2 = r:aperture{shape = "rectangle", size = {1e9, 1e9}}
  check.close(rem2, 0, 1e-15, "rectangle larger than the grid removes nothing", "geometry")
  local _, rem3 = r:copy():aperture{shape = "rectangle", size = {false, 1e9}}
  check.close(rem3, 0, 1e-15, "size false: unbounded along that axis", "geometry")
  -- The per-axis list reader (pfl_read_axis_list): count and entry rule.
  check.fails(function() r:aperture{shape = "rectangle", size = {1e-6}} end, "rectangle size needs one entry per axis",
    "aperture: field 'size' must have 2 entries (one per axis), got 1")
  check.fails(function() r:aperture{shape = "rectangle", size = {1e-6, "wide"}} end, "rectangle size entry checked",
    "aperture: field 'size' entry 2 must be a number (m) or false, got")
end

-- Gaussian velocity filter exp(-(v - c)^2 / 2 W^2) on a Gaussian velocity
-- distribution of std. dev. sv keeps W / sqrt(W^2 + sv^2) (Gaussian integral).
do
  local s = 1.5e-6
  local g = pf.grid{points = 2048, span = 200e-6}
  local w = pf.wave(g, {mass = m, position = function(x) return math.exp(-x * x / (4 * s * s)) end})
  local sv = hbar / (2 * m * s)
  local W = 0.7 * sv
  local _, removed = w:select_velocity{width = W, shape = "gaussian"}
  check.near(1 - removed, W / math.sqrt(W * W + sv * sv), 1e-9, "gaussian velocity filter keeps W/sqrt(W^2+sv^2)",
    "Gaussian integral")
  check.equal(w:representation(), "momentum", "velocity selection leaves the wave in momentum space")
end

-- Exact displacement and kick (common practice: translation theorem of the
-- Fourier transform; momentum shift by hbar k).
do
  local g = pf.grid{points = 512, span = 100e-6}
  local dx, dk = g:spacing(), g:kspacing()
  local w = pf.wave(g, {mass = m, position = function(x) return math.exp(-(x - 3e-6) ^ 2 / (4 * 4e-6 ^ 2)) end})
  local x0, s0 = w:position_mean(), w:position_width()
  local k0 = w:wavenumber_mean()
  w:shift(3.7 * dx)
  check.near(w:position_mean() - x0, 3.7 * dx, 1e-10, "shift by 3.7 dx moves <x> by 3.7 dx", "Fourier shift theorem")
  check.near(w:position_width(), s0, 1e-12, "shift keeps the width", "Fourier shift theorem")
  w:kick(5 * dk)
  check.near(w:wavenumber_mean() - k0, 5 * dk, 1e-10, "kick by 5 dk moves <k> by 5 dk", "momentum shift exp(ikx)")
end

-- Time-dependent potential V(x, t) = -m alpha t x: a force growing linearly
-- in time moves <x> by alpha t^3 / 6 (Ehrenfest's theorem is exact for a
-- linear potential; classical kinematics).  Exercises the Lua V(x, t) path.
do
  local g = pf.grid{points = 1024, span = 100e-6}
  local alpha, T = 100.0, 10e-3
  for _, order in ipairs{2, 4} do
    local w = pf.wave(g, {mass = m, position = function(x) return math.exp(-(x + 8e-6) ^ 2 / (4 * 3e-6 ^ 2)) end})
    local x0 = w:position_mean()
    local _, info = w:evolve(T, {potential = function(x, t) return -m * alpha * t * x end, time_dependent = true,
                                 dt = T / 50, order = order})
    check.equal(info.steps, 50, "evolve took the requested number of steps (order " .. order .. ")")
    -- Strang samples the force at step boundaries: relative error (dt/T)^2
    -- = 4e-4 expected; the fourth-order scheme must do far better.
    check.near(w:position_mean() - x0, alpha * T ^ 3 / 6, order == 2 and 1e-3 or 1e-7, "V(x,t) = -m alpha t x moves <x> by alpha t^3/6 (order " .. order .. ")",
      "Ehrenfest theorem, linear potential")
    check.near(w:clock(), T, 1e-15, "evolve advances the clock", "definition")
  end
end

-- The step log: one entry per step, masks record the removed probability,
-- stable text columns.  (Hard slits on a small grid reach the Nyquist band:
-- guards off, the subject here is the log.)
do
  pf.setup{guard_threshold = math.huge}
  local g = pf.grid{points = 256, span = 50e-6}
  local w = pf.wave(g, {mass = m, position = function(x) return math.exp(-x * x / (4 * 3e-6 ^ 2)) end})
  local _, removed = w:slits{count = 3, width = 2e-6, pitch = 6e-6}
  w:fly(1e-3):fall(1e-3, -9.80665)
  local log = w:log()
  check.equal(#log, 4, "log has build, mask, flight, fall")
  check.equal(log[2].kind, "mask", "mask step kind")
  check.equal(log[2].method, "slits", "mask step method")
  check.near(log[2].removed, removed, 0, "log records the removed probability", "definition")
  check.near(log[2].norm, 1 - removed, 1e-12, "log norm after the mask = 1 - removed", "definition")
  check.equal(log[4].kind, "fall", "fall step kind")
  local text = w:log_text()
  check.truthy(text:find("^step kind method duration_s clock_s norm removed edge_x edge_k\n"), "log header")
  check.truthy(text:find("\n2 mask slits 0%.000000000e%+00 0%.000000000e%+00 0%.%d+ %d%.%d+e%-%d+ [%-%d][^ ]* [%-%d][^ ]*\n"),
    "mask line in the stable text form")
  pf.setup{guard_threshold = 1e-6}
end

-- Invalid arguments: clear errors naming the argument and the script line.
do
  local g = pf.grid{points = 128, span = 50e-6}
  local w = pf.wave(g, {mass = m, position = function(x) return math.exp(-x * x / (4 * 3e-6 ^ 2)) end})
  local here = "test_protocol_steps.lua:"
  check.fails(function() w:grating{depth = 1, period = 0} end, "grating with zero period",
    here, "grating", "period must be finite and positive", "got 0")
  check.fails(function() w:mask_grating{period = 0} end, "mask grating with zero period", here, "period")
  check.fails(function() w:lens(0) end, "lens with zero focal time", here, "focal time", "non-zero")
  check.fails(function() w:lens(0 / 0) end, "lens with NaN focal time", here, "focal time", "finite")
  check.fails(function() w:evolve(1e-3, {potential = function(x) return x > 1e-5 and 0 / 0 or 0 end}) end,
    "evolve with a NaN potential", here, "evolve", "potential", "NaN", "x = ")
  check.fails(function() w:evolve(1e-3, {potential = function(x, t) return t > 2e-4 and 0 / 0 or 0 end,
                                        time_dependent = true, dt = 1e-4}) end,
    "evolve with a V(x,t) turning NaN", here, "potential", "NaN", "t = ")
  check.fails(function() w:imprint(function(x) return 0 / 0 end) end, "imprint returning NaN", here, "phase", "NaN")
  check.fails(function() w:slit{width = -1e-6} end, "slit with negative width", here, "width")
  check.fails(function() w:mask_grating{period = 1e-6, open_fraction = 1.5} end, "opening fraction above 1", here,
    "open_fraction")
  check.fails(function() w:mask(function(x) return 2 end) end, "amplifying mask", here, "modulus at most 1")
  check.fails(function() w:evolve(1e-3, {order = 3}) end, "evolve order 3", here, "order")
  check.fails(function() w:evolve(1e-3, {dt = -1}) end, "evolve negative dt", here, "dt")
  check.fails(function() w:slit{widht = 1e-6} end, "misspelt option", here, "unknown option", "widht")
  check.fails(function() w:relax{} end, "relax without a potential", here, "potential")
  check.fails(function() w:aperture{shape = "circle", radius = 1e-6} end, "circle on a 1D grid", here, "2D or 3D")
  check.fails(function() w:fall(1e-3) end, "fall without acceleration", here, "acceleration")
  check.fails(function() w:select_velocity{width = 0} end, "velocity window of zero width", here, "width")
  check.near(w:norm(), 1, 1e-12, "failed steps left the wave untouched", "definition")
end

check.done()
