-- test_protocol_evolve.lua - split-step evolution and relaxation through the
-- Lua API: potentials as functions and tables, default steps, 3D steps,
-- warnings in strict mode, failure part-way, repeatability.
local pf = require "psiflight"
local check = require "check"
pf.setup{planning = "estimate"}

-- CODATA 2018 (h exact in the 2019 SI); the 7Li mass from the engine's
-- species table (AME2020) for this file's invented lithium scenario.
local hbar = 6.62607015e-34 / (2 * math.pi)
local m = pf.mass("7Li")
local omega = 2 * math.pi * 400.0
local aho = math.sqrt(hbar / (m * omega))

local function trap1(x) return 0.5 * m * omega * omega * x * x end

-- A potential given as a table equals the same potential given as a function.
do
  local g = pf.grid{points = 128, span = 20 * aho}
  local V = {}
  for i = 1, g:points() do V[i] = trap1(g:x(1, i)) end
  local start = function(x) return math.exp(-(x - 2 * aho) ^ 2 / (2 * aho * aho)) end
  local a = pf.wave(g, {mass = m, position = start})
  local b = pf.wave(g, {mass = m, position = start})
  a:evolve(1e-3, {potential = trap1, dt = 1e-5})
  b:evolve(1e-3, {potential = V, dt = 1e-5})
  local worst = 0
  for i = 1, g:points() do worst = math.max(worst, (a:psi(i) - b:psi(i)):abs()) end
  check.close(worst, 0, 0, "table potential = function potential (bitwise)", "definition")
  check.fails(function() b:evolve(1e-3, {potential = {1, 2, 3}}) end, "potential table of the wrong length",
    "test_protocol_evolve.lua:", "one value per grid point (128)")
end

-- A pf.potential object (sampled once, exponentials cached) gives the same
-- bits as resampling a function on every call; chunked evolution agrees with
-- one long call (merged half-steps) to rounding.
do
  local g = pf.grid{points = 128, span = 20 * aho}
  local P = pf.potential(g, trap1)
  local lo, hi = P:range()
  check.near(lo, 0, 0, "potential range: minimum of the trap", "definition", 1e-40)
  check.near(hi, trap1(g:x(1, 1)), 1e-15, "potential range: maximum at the grid edge", "definition")
  local start = function(x) return math.exp(-(x - 2 * aho) ^ 2 / (2 * aho * aho)) end
  local a = pf.wave(g, {mass = m, position = start})
  local b = pf.wave(g, {mass = m, position = start})
  local c = pf.wave(g, {mass = m, position = start})
  for _ = 1, 10 do
    a:evolve(1e-4, {potential = trap1, dt = 1e-5})
    b:evolve(1e-4, {potential = P, dt = 1e-5})
  end
  c:evolve(1e-3, {potential = P, dt = 1e-5})
  local same, near = 0, 0
  for i = 1, g:points() do
    same = math.max(same, (a:psi(i) - b:psi(i)):abs())
    near = math.max(near, (a:psi(i) - c:psi(i)):abs())
  end
  check.close(same, 0, 0, "pf.potential (cached) = function resampled per call (bitwise)", "definition")
  check.close(near * math.sqrt(aho), 0, 1e-12, "ten chunks = one call (merged half-steps)", "definition")
  local other = pf.grid{points = 64, span = 20 * aho}
  local o = pf.wave(other, {mass = m, position = start})
  check.fails(function() o:evolve(1e-4, {potential = P}) end, "potential from another grid",
    "test_protocol_evolve.lua:", "different grid")
  local _, info = c:relax{potential = P, dt = 0.01 / omega}
  check.near(info.energy, 0.5 * hbar * omega, 1e-6, "relax with a pf.potential object", "textbook")
  check.fails(function() c:evolve(1e-4, {potential = P, dt = -1e-6}) end, "a negative evolve step is refused",
    "evolve", "field 'dt' must be positive (s)", "got -9.99")
  check.fails(function() c:relax{potential = P, dt = 0} end, "a zero relax step is refused",
    "relax", "field 'dt' must be positive (s)", "got 0")
  P:close()
  check.fails(function() c:evolve(1e-4, {potential = P}) end, "closed potential", "closed")
end

-- envelope = function(t): V(x, t) = envelope(t) V(x) costs one Lua call per
-- sample time.  A force growing linearly in time, V = -m alpha t x, moves
-- <x> by alpha t^3 / 6 (Ehrenfest theorem, exact for a linear potential);
-- a constant envelope of 1 reproduces the static evolution.
do
  -- 7Li spreads fast: a wide packet on a wide grid keeps it off the cell
  -- boundary, where the periodic copy of the ramp jumps.
  local g = pf.grid{points = 2048, span = 240e-6}
  local alpha, T = 100.0, 10e-3
  local ramp = pf.potential(g, function(x) return -m * alpha * x end)
  local w = pf.wave(g, {mass = m, position = function(x) return math.exp(-(x + 8e-6) ^ 2 / (4 * 6e-6 ^ 2)) end})
  local x0 = w:position_mean()
  w:evolve(T, {potential = ramp, envelope = function(t) return t end, dt = T / 50, order = 4})
  check.near(w:position_mean() - x0, alpha * T ^ 3 / 6, 1e-7, "envelope t: <x> moves by alpha t^3/6",
    "Ehrenfest theorem, linear potential")
  local g1 = pf.grid{points = 128, span = 20 * aho}
  local start = function(x) return math.exp(-(x - 2 * aho) ^ 2 / (2 * aho * aho)) end
  local a = pf.wave(g1, {mass = m, position = start})
  local b = pf.wave(g1, {mass = m, position = start})
  a:evolve(1e-3, {potential = trap1, dt = 1e-5})
  b:evolve(1e-3, {potential = trap1, envelope = function(t) return 1 end, dt = 1e-5})
  local worst = 0
  for i = 1, g1:points() do worst = math.max(worst, (a:psi(i) - b:psi(i)):abs()) end
  check.close(worst * math.sqrt(aho), 0, 1e-12, "envelope 1 = static potential", "definition")
  check.fails(function() b:evolve(1e-4, {potential = trap1, envelope = function(t) return 0 / 0 end}) end,
    "envelope returning NaN", "test_protocol_evolve.lua:", "envelope", "t = ")
  check.fails(function() b:evolve(1e-4, {envelope = function(t) return 1 end}) end, "envelope without a potential",
    "test_protocol_evolve.lua:", "static 'potential'")
end

-- Relaxation with the default step reaches hbar omega / 2 (textbook harmonic
-- oscillator) and w:energy agrees with the value relax reports.
do
  local g = pf.grid{points = 128, span = 20 * aho}
  local w = pf.wave(g, {mass = m, position = function(x) return math.exp(-x * x / (aho * aho)) end})
  local _, info = w:relax{potential = trap1}
  check.truthy(info.converged, "relax converged with the default step")
  check.near(info.energy, 0.5 * hbar * omega, 1e-6, "default-step ground energy = hbar omega / 2", "textbook")
  local e, mu = w:energy{potential = trap1}
  check.near(e, info.energy, 1e-12, "w:energy = relax energy", "definition")
  check.near(mu, e, 1e-12, "mu = E without mean field", "definition")
  check.near(w:norm(), 1, 1e-12, "relax leaves the state normalised", "definition")
end

-- 3D: a coherent state in an isotropic trap reaches <x> = 0 at a quarter
-- period with its momentum -m omega x0 (textbook), fourth order.
do
  local g = pf.grid{points = {32, 32, 32}, span = 14 * aho}
  local x0 = 1.5 * aho
  local w = pf.wave(g, {mass = m, position = function(x, y, z)
    return math.exp(-((x - x0) ^ 2 + y * y + z * z) / (2 * aho * aho)) end})
  local V = function(x, y, z) return 0.5 * m * omega * omega * (x * x + y * y + z * z) end
  w:evolve(0.25 * 2 * math.pi / omega, {potential = V, order = 4, dt = 2 * math.pi / omega / 200})
  local mx = w:position_mean()
  local px = w:momentum_mean()
  check.close(mx / aho, 0, 1e-6, "3D coherent state: <x> = 0 at a quarter period", "textbook coherent state")
  check.near(px, -m * omega * x0, 1e-6, "3D coherent state: <p> = -m omega x0", "textbook coherent state")
  local _, removed = w:aperture{shape = "circle", radius = 1e9, axes = {2, 3}}
  check.close(removed, 0, 1e-15, "3D circular aperture wider than the grid removes nothing", "geometry")
end

-- 3D ground state of an anisotropic trap: E = hbar (wx + wy + wz) / 2
-- (textbook harmonic oscillator), default imaginary-time step.
do
  local g = pf.grid{points = {24, 24, 32}, span = {12 * aho, 12 * aho, 10 * aho}}
  local w = pf.wave(g, {mass = m, position = function(x, y, z)
    return math.exp(-(x * x + y * y + z * z) / (3 * aho * aho)) end})
  local V = function(x, y, z) return 0.5 * m * omega * omega * (x * x + y * y + 2.25 * z * z) end
  local _, info = w:relax{potential = V, tolerance = 1e-11}
  check.truthy(info.converged, "3D relax converged")
  check.near(info.energy, 0.5 * hbar * omega * (1 + 1 + 1.5), 1e-6, "3D ground energy = hbar (wx+wy+wz)/2", "textbook")
end

-- Circular aperture in 3D (axes 1 and 3): the Rayleigh tail exp(-R^2/2s^2)
-- of an isotropic Gaussian (std. dev. s per axis), staircase edge: 2%.
do
  local s, R = 2e-6, 2.5e-6
  local g = pf.grid{points = {96, 24, 96}, span = {24e-6, 24e-6, 24e-6}}
  local w = pf.wave(g, {mass = m, position = function(x, y, z)
    return math.exp(-(x * x + y * y + z * z) / (4 * s * s)) end})
  local _, removed = w:aperture{shape = "circle", radius = R, axes = {1, 3}}
  check.near(removed, math.exp(-R * R / (2 * s * s)), 2e-2, "3D circle (axes 1,3) removes exp(-R^2/2s^2)", "Rayleigh tail")
end

-- A large potential phase per step warns; strict mode makes it an error.
do
  local g = pf.grid{points = 64, span = 20 * aho}
  local w = pf.wave(g, {mass = m, position = function(x) return math.exp(-x * x / (2 * aho * aho)) end})
  pf.setup{strict = true}
  check.fails(function() w:evolve(1e-3, {potential = trap1, dt = 1e-3}) end, "huge step in strict mode",
    "test_protocol_evolve.lua:", "strict mode", "potential phase per step")
  pf.setup{strict = false}
  local _, info = w:evolve(1e-4, {potential = trap1})
  check.truthy(info.phase_per_step <= 0.5 + 1e-12, "default step keeps the phase per step at 0.5 rad")
end

-- A time-dependent potential failing part-way: an error naming t, and the
-- clock is not advanced.
do
  local g = pf.grid{points = 64, span = 20 * aho}
  local w = pf.wave(g, {mass = m, position = function(x) return math.exp(-x * x / (2 * aho * aho)) end})
  local c0 = w:clock()
  check.fails(function()
    w:evolve(1e-3, {time_dependent = true, dt = 1e-4, potential = function(x, t)
      if t > 5e-4 then error("laser interlock model: beam blocked") end
      return trap1(x)
    end})
  end, "V(x,t) raising an error part-way", "laser interlock model")
  check.equal(w:clock(), c0, "clock unchanged after the failed evolve")
end

-- Repeatability: the same steps give bit-identical results (same thread
-- count).  The hard aperture sends content to the grid edges; that is not
-- the subject here, so the guards are off.
do
  pf.setup{guard_threshold = math.huge}
  local function once()
    local g = pf.grid{points = {64, 64}, span = {40e-6, 40e-6}}
    local w = pf.wave(g, {mass = m, position = function(x, y) return math.exp(-(x * x + y * y) / (4 * 3e-6 ^ 2)) end})
    local _, r1 = w:aperture{shape = "circle", radius = 4e-6}
    w:grating{depth = 0.8, period = 3e-6}:fall(1e-4, {0, -9.80665})
    w:evolve(2e-4, {potential = function(x, y) return 1e-30 * (x * x + 2 * y * y) end, g = 1e-40, order = 4})
    return string.format("%.17g %.17g %.17g", r1, w:norm(), (w:position_mean()))
  end
  check.equal(once(), once(), "identical runs give bit-identical removed, norm and <x>")
  pf.setup{guard_threshold = 1e-6}
end

check.done()
