-- test_states.lua - the state builders through the Lua API, checked against
-- textbook formulas (named beside each check).  The engine's hbar is the
-- CODATA 2018 value, itself checked in test_units.lua and against scipy.
local pf = require "psiflight"
local check = require "check"
pf.setup{planning = "estimate"}
local U, C = pf.units, pf.constants
local hbar = C.hbar

-- Trap ground state (textbook harmonic oscillator): sigma_x = sqrt(hbar/2 m w),
-- sigma_p = sqrt(hbar m w / 2).  3D with three different trap frequencies.
local m = pf.mass("87Rb")
local w = {2 * math.pi * 80, 2 * math.pi * 120, 2 * math.pi * 200}
local g3 = pf.grid{points = {64, 48, 40}, span = {16e-6, 12e-6, 10e-6}}
local gs = pf.ground_state(g3, {mass = "87Rb", omega = w, center = {0.3e-6, 0, -0.2e-6}})
local sx = {gs:position_width()}
local sp = {gs:momentum_width()}
for a = 1, 3 do
  check.near(sx[a], math.sqrt(hbar / (2 * m * w[a])), 1e-10, "ground state sigma_x axis " .. a, "sigma_x = sqrt(hbar/2 m omega), textbook")
  check.near(sp[a], math.sqrt(hbar * m * w[a] / 2), 1e-10, "ground state sigma_p axis " .. a, "sigma_p = sqrt(hbar m omega/2), textbook")
end
check.near(select(3, gs:position_mean()), -0.2e-6, 1e-10, "ground state centre", "definition of the centre")
local g1 = pf.grid{points = 256, span = 24e-6}
local by_f = pf.ground_state(g1, {mass = "87Rb", frequency = 80 * U.Hz})
check.near(by_f:position_width(), math.sqrt(hbar / (2 * m * 2 * math.pi * 80)), 1e-10, "ground state from frequency in Hz", "omega = 2 pi f; textbook width")

-- Minimum uncertainty (textbook): a Gaussian given by its momentum width has
-- sigma_x sigma_p = hbar / 2.
local sig_p = hbar / (2 * 1.2e-6) * 1.3
local mp = pf.gaussian(g1, {mass = "87Rb", momentum_width = sig_p, velocity = 3 * U.mm_per_s})
check.near(mp:momentum_width(), sig_p, 1e-10, "momentum width as given", "definition")
check.near(mp:position_width() * mp:momentum_width(), hbar / 2, 1e-10, "sigma_x sigma_p", "minimum uncertainty hbar/2, textbook")
check.near(mp:velocity_mean(), 3e-3, 1e-10, "mean velocity", "p = m v")
local vw = pf.gaussian(g1, {mass = "87Rb", velocity_width = 1.5 * U.mm_per_s})
check.near(vw:momentum_width(), m * 1.5e-3, 1e-10, "velocity width", "sigma_p = m sigma_v")

-- Chirped packet (free Gaussian with initial phase curvature, textbook):
-- sigma_p^2 = hbar^2 (1/(4 s^2) + c^2 s^2) and after a flight t
-- sigma(t)^2 = s^2 (1 + hbar c t / m)^2 + (hbar t / (2 m s))^2, c = m r / hbar.
local gc = pf.grid{points = 1024, span = 400e-6}
local s0, rate = 4e-6, 30.0
local ch = pf.gaussian(gc, {mass = "23Na", width = s0, expansion_rate = rate})
local mna = pf.mass("23Na")
local c = mna * rate / hbar
check.near(ch:momentum_width(), hbar * math.sqrt(1 / (4 * s0 ^ 2) + c ^ 2 * s0 ^ 2), 1e-9, "chirped momentum width", "chirped Gaussian, textbook")
local t = 0.2e-3
ch:fly(t)
local want = math.sqrt(s0 ^ 2 * (1 + hbar * c * t / mna) ^ 2 + (hbar * t / (2 * mna * s0)) ^ 2)
check.near(ch:position_width(), want, 1e-9, "chirped packet width after 0.2 ms", "free Gaussian with initial chirp, textbook")

-- Non-separable 2D Gaussian: marginal widths are sqrt of the covariance diagonal.
local g2 = pf.grid{points = {64, 64}, span = {20e-6, 20e-6}}
local cv = pf.gaussian(g2, {mass = "6Li", covariance = {{2.0e-12, 0.9e-12}, {0.9e-12, 1.2e-12}}})
local wx, wy = cv:position_width()
check.near(wx, math.sqrt(2.0e-12), 1e-10, "correlated Gaussian sigma_x", "marginal of a bivariate normal")
check.near(wy, math.sqrt(1.2e-12), 1e-10, "correlated Gaussian sigma_y", "marginal of a bivariate normal")

-- Diffraction orders: two equal orders 0 and +1 of a two-photon kick
-- (2 hbar k at 780 nm): mean momentum hbar q / 2 (superposition of disjoint packets).
local q = 2 * pf.photon_momentum(780.241e-9)
local go = pf.grid{points = 2048, span = 300e-6}
local split = pf.momentum_orders(go, {mass = "87Rb", width = 15e-6, step_momentum = q,
  orders = {{n = 0, amplitude = 1}, {n = 1, amplitude = 1, phase = math.pi / 2}}})
check.near(split:momentum_mean(), q / 2, 1e-9, "two equal orders: <p>", "mean of an equal superposition of p = 0 and hbar q")
check.near(split:norm(), 1, 1e-12, "orders state normalised", "definition")

-- Flat top with order 1 is a Gaussian: momentum width hbar kappa / sqrt 2.
local gf = pf.grid{points = 1024, span = 200e-6}
local ft = pf.flat_top(gf, {mass = "87Rb", velocity_half_width = 2 * U.mm_per_s, order = 1, velocity = 1 * U.mm_per_s})
check.near(ft:momentum_width(), m * 2e-3 / math.sqrt(2), 1e-9, "flat top, order 1: momentum width", "Gaussian exp(-u^2) density")
check.near(ft:velocity_mean(), 1e-3, 1e-9, "flat top mean velocity", "definition")

-- Thomas-Fermi in 1D: <x^2> = R^2 / 5 (integral of the inverted parabola).
local gt = pf.grid{points = 4096, span = 60e-6}
local tf = pf.thomas_fermi(gt, {mass = "23Na", radius = 20e-6})
check.near(tf:position_width(), 20e-6 / math.sqrt(5), 1e-6, "Thomas-Fermi width R/sqrt 5", "textbook integral")

-- Oscillator eigenstate n: <x^2> = (n + 1/2) hbar / (m omega) (textbook).
local osc = pf.oscillator(g1, {mass = "87Rb", omega = 2 * math.pi * 300, n = 7})
check.near(osc:position_variance(), 7.5 * hbar / (m * 2 * math.pi * 300), 1e-10, "oscillator n = 7: <x^2>", "(n + 1/2) hbar / m omega, textbook")
check.near(osc:kinetic_energy(), 0.5 * 7.5 * hbar * 2 * math.pi * 300, 1e-10, "oscillator n = 7: kinetic energy", "virial theorem E_kin = E_n / 2")

-- Samples from a Lua table: a Gaussian of width 2 um sampled every 0.1 um.
local xs, vs = {}, {}
for i = 0, 300 do
  local x = -15e-6 + i * 0.1e-6
  xs[#xs + 1], vs[#vs + 1] = x, math.exp(-x * x / (4 * (2e-6) ^ 2))
end
local sm = pf.sampled(g1, {mass = "87Rb", x = xs, values = vs, interpolation = "cubic"})
check.near(sm:position_width(), 2e-6, 1e-6, "cubic samples of a 2 um Gaussian", "the sampled function's width")
local lin = pf.sampled(g1, {mass = "87Rb", x = xs, values = vs})
check.near(lin:position_width(), 2e-6, 3e-4, "linear samples of a 2 um Gaussian", "the sampled function's width")

-- Arithmetic and inner products (linearity; textbook Gaussian overlap
-- |<0|d>| = exp(-d^2 / 8 sigma^2)).
local a = pf.gaussian(g1, {mass = "87Rb", width = 1.5e-6})
local b = pf.gaussian(g1, {mass = "87Rb", width = 1.5e-6, center = 2e-6})
local ov = a:inner(b)
check.near(ov.re, math.exp(-(2e-6) ^ 2 / (8 * (1.5e-6) ^ 2)), 1e-10, "<a|b> of displaced Gaussians", "Gaussian overlap, textbook")
check.close(ov.im, 0, 1e-15, "<a|b> real for real states", "real functions")
local sum = 0.6 * a + pf.complex(0, 0.8) * b
check.near(sum:norm(), 0.36 + 0.64, 1e-12, "|0.6 a + 0.8i b|^2", "norm = |x|^2 + |y|^2 + 2 Re(conj(x) y <a|b>) with Re(...) = 0")
local diff = a - b
check.near(diff:norm(), 2 - 2 * ov.re, 1e-12, "|a - b|^2", "linearity")
check.near((-a):inner(a).re, -1, 1e-12, "<-a|a>", "linearity")
check.near((a / 2):norm(), 0.25, 1e-12, "|a/2|^2", "linearity")
check.truthy(a:copy():add(b, -1):inner(diff).re > 0, "in-place add equals the operator")
check.near(a:copy():add(b, -1):inner(diff).re, diff:norm(), 1e-12, "a:add(b, -1) = a - b", "linearity")
-- One spelling per concept: <a|b> is w:inner; the old w:overlap names it, at
-- the script line, also when reached through an ensemble's forwarder.
check.fails(function() return a:overlap(b) end, "w:overlap is refused", "test_states.lua:",
  "wave:overlap is now wave:inner")
local pair = pf.mixture({a:copy(), b:copy()}, {0.5, 0.5})
check.fails(function() return pair:overlap(b) end, "ensemble:overlap is refused", "test_states.lua:",
  "wave:overlap is now wave:inner")
check.truthy(a.no_such_method == nil, "other missing method names stay nil")
-- w:fidelity takes <a|b> from the same inner product, so it refuses what
-- w:inner refuses: states of different masses.
check.fails(function() return a:fidelity(pf.gaussian(g1, {mass = 2 * m, width = 1.5e-6})) end,
  "fidelity of states with different masses is refused", "fidelity:", "equal masses")
pair:close()

-- Bad arguments: clear errors naming the argument.
check.fails(function() return pf.gaussian(g1, {mass = "87Rb", width = -1e-6}) end, "negative width", "gaussian: field 'width' must be a positive number, got -9.99")
check.fails(function() return pf.gaussian(g1, {mass = "87Rb", width = 0 / 0}) end, "NaN width", "field 'width' must be a positive number")
check.fails(function() return pf.gaussian(g1, {mass = "87Rb"}) end, "missing width", "give one of 'width', 'momentum_width', 'velocity_width' or 'covariance'")
check.fails(function() return pf.gaussian(g1, {mass = "87Rb", width = 1e-6, momentum_width = 1e-28}) end, "two widths", "give only one of 'width' and 'momentum_width'")
check.fails(function() return pf.gaussian(g1, {mass = "87Rb", widht = 1e-6}) end, "misspelt field", "unknown option 'widht' (did you mean 'width'?)")
check.fails(function() return pf.gaussian(g1, {mass = "Rb-88", width = 1e-6}) end, "unknown species", "unknown species 'Rb-88'", "87Rb")
check.fails(function() return pf.oscillator(g1, {mass = "87Rb", omega = 100, n = 5001}) end, "n above range", "field 'n' entry 1 must be an integer 0..5000, got 5001")
check.fails(function() return pf.oscillator(g1, {mass = "87Rb", omega = 100, n = 2.5}) end, "n not integer", "field 'n' entry 1 must be an integer")
check.fails(function() return pf.ground_state(g1, {mass = "87Rb", omega = -3}) end, "negative trap frequency", "field 'omega' must be a positive number")
check.fails(function() return pf.gaussian(g2, {mass = "6Li", covariance = {{1e-12, 2e-12}, {2e-12, 1e-12}}}) end, "covariance not positive definite", "covariance must be positive definite")
check.fails(function() return pf.thomas_fermi(g1, {mass = "23Na", radius = 0}) end, "zero radius", "field 'radius' must be a positive number")
check.fails(function() return pf.flat_top(g1, {mass = "87Rb", half_width = 1e-28, order = 0.5}) end, "flat-top order below 1", "field 'order' must be a number from 1")
check.fails(function() return pf.momentum_orders(g2, {mass = "6Li", width = 1e-6, step_momentum = 1e-27, orders = {{n = 0}}}) end, "scalar step on a 2D grid", "must be a vector of 2 numbers")
check.fails(function() return pf.momentum_orders(g1, {mass = "87Rb", width = 1e-6, step_momentum = q, orders = {{n = 0, amplitude = 0}}}) end, "all amplitudes zero", "all amplitudes are zero")
check.fails(function() return pf.sampled(g1, {mass = "87Rb", x = {0, 1e-6, 0.5e-6}, values = {1, 1, 1}}) end, "unsorted samples", "must increase strictly")
check.fails(function() return pf.sampled(g1, {mass = "87Rb", x = {0, 1e-6}, values = {1}}) end, "sample count mismatch", "field 'values' must hold 2 values")
check.fails(function() return a + pf.gaussian(g1, {mass = "39K", width = 1e-6}) end, "adding different masses", "needs equal masses")
check.fails(function() return a * b end, "wave times wave", "can be multiplied by a number")

-- Resolution checks: strict mode turns the warning into an error that
-- carries the numbers and the remedy.
pf.setup{strict = true}
check.fails(function() return pf.gaussian(g1, {mass = "87Rb", width = 0.05e-6}) end, "strict: under-resolved Gaussian",
  "strict mode", "spans only", "grid spacings", "use at least")
check.fails(function() return pf.gaussian(g1, {mass = "87Rb", width = 5e-6}) end, "strict: Gaussian wider than the grid",
  "strict mode", "use a span of at least")
check.fails(function() return pf.gaussian(g1, {mass = "87Rb", width = 1e-6, velocity = 0.2}) end, "strict: momentum beyond Nyquist",
  "strict mode", "beyond the grid's Nyquist limit", "use a spacing of at most")
local fine = pf.gaussian(g1, {mass = "87Rb", width = 1e-6})
check.near(fine:norm(), 1, 1e-12, "strict: a resolved state builds", "definition")
pf.setup{strict = false}
check.done()
