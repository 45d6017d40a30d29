-- test_fringe_envelope.lua - fringes{envelope = ...}: fringe period,
-- visibility and envelope under an envelope model, against profiles whose
-- exact form is known:
--  * Fraunhofer double slit: the momentum density of a plane wave through
--    two slits (width a, pitch D) is sinc^2(k a / 2) cos^2(k D / 2) (Born &
--    Wolf, Principles of Optics, ch. 8, diffraction by two slits): fringe
--    period 2 pi / D in k, visibility 1, envelope first zero at 2 pi / a;
--  * two equal packets at +-D/2: |phi|^2 = |G(k)|^2 4 cos^2(k D / 2) (Fourier
--    shift theorem, textbook): Gaussian envelope of rms 1 / (2 sigma_x);
--  * one packet with two wave numbers: |psi|^2 = |G(x)|^2 (2 + 2 cos((k1 -
--    k2) x)) (two-beam interference, textbook): Gaussian envelope of rms sigma_x.
local pf = require "psiflight"
local check = require "check"
pf.setup{planning = "estimate"}
local m = pf.mass("87Rb")

-- 1. Double slit (exact edges put the slits where they are).
local a, D = 1.0e-6, 3.7e-6
local g = pf.grid{points = 4096, span = 409.6e-6}
local w = pf.wave(g, {mass = m, position = function() return 1 end})
w:slits{count = 2, width = a, pitch = D, center = 0.13e-6}
local k, rho = g:k_axis(1), w:momentum_density()
local kmax = 0.9 * 2 * math.pi / a
local guess = 1.1 * 2 * math.pi / D
local plain = pf.fringes(k, rho, {from = -kmax, to = kmax, period = guess})
local f = pf.fringes(k, rho, {from = -kmax, to = kmax, period = guess, envelope = "sinc2"})
print(string.format("note double slit: period bias without envelope %.3e, with sinc2 %.3e",
  plain.period / (2 * math.pi / D) - 1, f.period / (2 * math.pi / D) - 1))
check.near(f.period, 2 * math.pi / D, 1e-10, "double slit: fringe period 2 pi / D with the sinc2 envelope",
  "Born & Wolf ch. 8, Fraunhofer double slit")
check.near(f.envelope_width, 2 * math.pi / a, 1e-10, "double slit: envelope first zero at 2 pi / a",
  "Born & Wolf ch. 8, single-slit envelope")
check.close(f.visibility, 1, 1e-10, "double slit: visibility 1", "cos^2 fringes, Born & Wolf ch. 8")
check.truthy(math.abs(plain.period / (2 * math.pi / D) - 1) > 1e-3,
  "without the envelope model the period is biased by more than 1e-3 (why the model exists)")

-- 2. Two packets at +-D2 / 2: Gaussian envelope in k.
local s, D2 = 2e-6, 9e-6
local g2 = pf.grid{points = 2048, span = 200e-6}
local two = pf.wave(g2, {mass = m, position = function(x)
  return math.exp(-(x - D2 / 2) ^ 2 / (4 * s * s)) + math.exp(-(x + D2 / 2) ^ 2 / (4 * s * s))
end})
local k2, r2 = g2:k_axis(1), two:momentum_density()
local fg = pf.fringes(k2, r2, {from = -4 / (2 * s), to = 4 / (2 * s), envelope = "gaussian"})
check.near(fg.period, 2 * math.pi / D2, 1e-9, "two packets: fringe period 2 pi / D in k", "Fourier shift theorem")
check.near(fg.envelope_width, 1 / (2 * s), 1e-9, "two packets: envelope rms 1 / (2 sigma_x)",
  "Gaussian transform, textbook")
check.close(fg.envelope_center, 0, 1e-3, "two packets: envelope centred at k = 0", "symmetry")

-- 3. The wave method, in position: two wave numbers under one Gaussian.
local k1, kk2 = 3.1e6, 2.2e6
local beams = pf.wave(g2, {mass = m, position = function(x)
  local e = math.exp(-(x - 1e-6) ^ 2 / (4 * (20e-6) ^ 2))
  return e * (math.cos(k1 * x) + math.cos(kk2 * x)), e * (math.sin(k1 * x) + math.sin(kk2 * x))
end})
local fw = beams:fringes{from = -70e-6, to = 70e-6, envelope = "gaussian"}
check.near(fw.period, 2 * math.pi / (k1 - kk2), 1e-9, "two beams: period 2 pi / (k1 - k2)", "two-beam interference")
check.near(fw.envelope_width, 20e-6, 1e-9, "two beams: envelope rms sigma_x", "Gaussian density, textbook")
check.near(fw.envelope_center, 1e-6, 1e-9, "two beams: envelope centre", "definition of the packet")
local fn = beams:fringes{from = -70e-6, to = 70e-6}
check.truthy(fn.envelope_width == nil, "no envelope fields without an envelope model")

check.fails(function() pf.fringes(k, rho, {envelope = "lorentz"}) end, "unknown envelope refused", "envelope",
  "lorentz")
check.done()
