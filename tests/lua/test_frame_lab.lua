-- test_frame_lab.lua - potentials, forces, masks and phases given in lab
-- coordinates act on a wave whose frame is moved (docs/frames.md, "Potentials
-- and forces in the lab"): evolve, relax, energy, fall, pf.potential(w, f),
-- imprint, mask, momentum_mask and shift.
--
-- References (outside the project):
--  * a quadratic Hamiltonian moves the means and second moments of any state
--    along the classical phase-space flow (Ehrenfest's theorem, exact for
--    H = p^2/2m + m w^2 (x - c)^2 / 2 - m a x; common practice): the centre
--    oscillates about c + a / w^2 (the sag), and
--    Var x(t) = Vx cos^2 + Vp/(m w)^2 sin^2 + 2 Cxp/(m w) sin cos;
--  * the free Gaussian packet of width sigma0: Var x(t) = sigma0^2 + (hbar t /
--    2 m sigma0)^2, Var p = hbar^2 / (4 sigma0^2), symmetrised covariance
--    Vp t / m (textbook free spreading; from memory);
--  * the oscillator ground state: width sqrt(hbar / 2 m w), energy hbar w / 2
--    above the minimum of the tilted trap, m a c... (see the relax block);
--  * the uniform-force propagator (J. E. Avron and I. W. Herbst, Commun. Math.
--    Phys. 52, 239 (1977)) for w:fall, as in test_frame.lua (from memory);
--  * Gaussian integrals for the masks (common practice);
--  * <k> gains the mean phase gradient <phi'(x)> under psi -> exp(i phi) psi
--    (common practice).
-- The comparison with the same protocol on one big lab-frame grid is an
-- internal cross-check and named as such.
local pf = require "psiflight"
local check = require "check"
pf.setup{planning = "estimate"}
local C = pf.constants
local hbar = C.hbar
local m = pf.mass("87Rb")
local gn = C.g_n
local here = "test_frame_lab.lua:"

local sigma0 = 1e-6

-- Closed-form packet (as in test_frame.lua): a Gaussian of width sigma at 0
-- with wave number k0, flown t under acceleration a, at lab position x
-- (Avron-Herbst form with the free Gaussian; from memory).
local function reference(x, t, k0, sigma, a)
  local v0 = hbar * k0 / m
  local xs = x - 0.5 * a * t * t
  local ar, ai = sigma * sigma, hbar * t / (2 * m)
  local d = xs - v0 * t
  local den = 4 * (ar * ar + ai * ai)
  local er, ei = -d * d * ar / den, d * d * ai / den
  local mod = (sigma * sigma / math.sqrt(ar * ar + ai * ai)) ^ 0.5
  local arg = -0.5 * math.atan(ai, ar)
  local phase = ei + k0 * xs - hbar * k0 * k0 * t / (2 * m) + m * a * x * t / hbar - m * a * a * t ^ 3 / (6 * hbar)
  local amp = (2 * math.pi * sigma * sigma) ^ -0.25 * mod * math.exp(er)
  return pf.complex(amp * math.cos(phase + arg), amp * math.sin(phase + arg))
end
local function cloud(g)
  return pf.wave(g, {mass = m, position = function(x) return math.exp(-x * x / (4 * sigma0 * sigma0)) end})
end

-- A Hollowmere-style recapture: a cloud released from a point trap falls for
-- t1 (in its frame), then a harmonic trap of 200 Hz centred 5 um below the
-- release point holds it for t2 under gravity.
local omega = 2 * math.pi * 200
local centre = -5e-6
local t1, t2 = 1e-3, 2e-3
local trap = function(x) return 0.5 * m * omega * omega * (x - centre) ^ 2 end
local dt = 2e-6

-- 1. Recapture after a drop: frame wave vs closed-form moments and energy,
-- and vs one big lab grid.
do
  local small = pf.grid{points = 512, span = 48e-6}
  local w = cloud(small)
  w:fly(t1, {acceleration = -gn})
  check.truthy(w:frame().moved, "the dropped cloud is in a moved frame")
  -- Closed-form state at recapture (free spreading and Newton).
  local Vx = sigma0 ^ 2 + (hbar * t1 / (2 * m * sigma0)) ^ 2
  local Vp = hbar * hbar / (4 * sigma0 * sigma0)
  local Cxp = Vp * t1 / m
  local x1, v1 = -0.5 * gn * t1 * t1, -gn * t1
  -- Lab energy: <p^2>/2m + <V> - m a <x> with a = -g.
  local E1 = (Vp + (m * v1) ^ 2) / (2 * m) + 0.5 * m * omega ^ 2 * (Vx + (x1 - centre) ^ 2) + m * gn * x1
  local e = w:energy{potential = trap, acceleration = -gn}
  check.near(e, E1, 1e-10, "lab energy of the falling cloud in the trap", "Gaussian moments, Newton (common practice)")
  -- The pf.setup default is the same force.
  pf.setup{acceleration = -gn}
  check.near(w:energy{potential = trap}, E1, 1e-10, "energy takes the pf.setup acceleration",
    "Gaussian moments, Newton (common practice)")
  pf.setup{acceleration = false}
  local kbefore = w:frame().wavenumber[1]
  w:evolve(t2, {potential = trap, acceleration = -gn, dt = dt, order = 4})
  local f = w:frame()
  check.equal(f.wavenumber[1], 0, "evolve folded the frame's momentum onto the grid")
  check.near(f.position[1], x1, 1e-15, "the frame's position stays a constant lab offset", "kinematics (common practice)")
  -- Classical phase-space flow in the tilted trap.
  local xe = centre - gn / omega ^ 2
  local c, s = math.cos(omega * t2), math.sin(omega * t2)
  local xm = xe + (x1 - xe) * c + v1 / omega * s
  local vm = -(x1 - xe) * omega * s + v1 * c
  local var = Vx * c * c + Vp / (m * omega) ^ 2 * s * s + 2 * Cxp / (m * omega) * s * c
  local mean = w:position_mean()
  local vel = w:velocity_mean()
  local varx = w:position_variance()
  print(string.format("note recapture: mean %.6e (want %.6e), v %.6e (want %.6e), var %.6e (want %.6e), K before %.4e",
    mean, xm, vel, vm, varx, var, kbefore))
  check.close(mean, xm, 1e-12, "centre after the recapture (m) vs the classical orbit with sag", "Ehrenfest, exact for quadratic H (common practice)")
  check.near(vel, vm, 1e-7, "velocity after the recapture vs the classical orbit", "Ehrenfest, exact for quadratic H (common practice)")
  check.near(varx, var, 1e-7, "position variance after the recapture vs the phase-space flow", "Ehrenfest, exact for quadratic H (common practice)")
  local e2 = w:energy{potential = trap, acceleration = -gn}
  check.near(e2, E1, 1e-8, "lab energy conserved in the trap under gravity", "energy conservation (common practice)")
  -- Internal cross-check: the same protocol on one big lab-frame grid, with
  -- the drop on the grid (w:fall) and gravity written into the potential.
  pf.setup{guard_threshold = math.huge}
  local big = pf.grid{points = 1024, span = 96e-6}
  local b = cloud(big)
  b:fall(t1, -gn)
  local eb = b:energy{potential = function(x) return trap(x) + m * gn * x end}
  check.near(e, eb, 1e-12, "lab energy equals the big lab grid's", "internal: same Hamiltonian on a lab grid")
  b:evolve(t2, {potential = function(x) return trap(x) + m * gn * x end, dt = dt, order = 4})
  pf.setup{guard_threshold = 1e-6}
  local xs = w:x_axis(1)
  local worst, peak = 0, 0
  local ref = b:psi_at(xs)
  for i = 1, #xs do
    local d = w:psi(i) - ref[i]
    worst = math.max(worst, d:abs())
    peak = math.max(peak, ref[i]:abs())
  end
  print(string.format("note recapture frame vs big lab grid: %.3e of peak", worst / peak))
  check.close(worst / peak, 0, 1e-10, "recaptured wave equals the big lab grid's (max |diff| / peak)",
    "internal: same protocol on a lab grid")
  local e2b = b:energy{potential = function(x) return trap(x) + m * gn * x end}
  check.near(e2, e2b, 1e-10, "energy after the recapture equals the big lab grid's", "internal: same protocol on a lab grid")
end

-- 2. A sampled pf.potential keeps its exponentials across calls on a moved
-- wave when made for that wave; one made on the bare grid is refused.
do
  local g = pf.grid{points = 512, span = 48e-6}
  local w1, w2 = cloud(g), cloud(g)
  w1:fly(t1, {acceleration = -gn})
  w2:fly(t1, {acceleration = -gn})
  check.fails(function() w1:evolve(1e-5, {potential = pf.potential(g, trap)}) end,
    "a potential sampled on the bare grid is refused for a moved wave", here, "pf.potential(w, f)")
  local P = pf.potential(w1, trap)
  for _ = 1, 10 do w1:evolve(t2 / 10, {potential = P, dt = dt}) end
  w2:evolve(t2, {potential = trap, dt = dt})
  local worst = 0
  for i = 1, 512, 7 do worst = math.max(worst, (w1:psi(i) - w2:psi(i)):abs()) end
  check.close(worst, 0, 1e-9, "ten evolve calls with pf.potential(w, f) equal one with the function",
    "internal: the same split-step operator")
  w1:fly(1e-4, {acceleration = -gn})
  check.fails(function() w1:evolve(1e-5, {potential = P}) end, "a potential made before the frame moved is refused",
    here, "its frame moved")
end

-- 3. Relax on a moved wave: the ground state of the tilted trap in the lab.
do
  local g = pf.grid{points = 256, span = 24e-6}
  local w = cloud(g)
  w:fly(t1, {acceleration = -gn})
  local X = w:frame().position[1]
  local _, info = w:relax{potential = trap, acceleration = -gn, tolerance = 1e-13}
  local xe = centre - gn / omega ^ 2
  -- E0 = hbar w / 2 + min V, V = m w^2 (x - c)^2 / 2 + m g x: min V = m g c - m g^2 / (2 w^2).
  local E0 = 0.5 * hbar * omega + m * gn * centre - m * gn * gn / (2 * omega ^ 2)
  check.close(w:position_mean(), xe, 1e-10, "relaxed centre (m) at the sag c - g/w^2",
    "oscillator ground state (textbook; from memory)")
  check.near(w:position_width(), math.sqrt(hbar / (2 * m * omega)), 1e-4, "relaxed width sqrt(hbar / 2 m w)",
    "oscillator ground state (textbook; from memory)")
  check.near(info.energy, E0, 1e-4, "relax reports the lab energy", "oscillator ground state (textbook; from memory)")
  check.near(w:energy{potential = trap, acceleration = -gn}, info.energy, 1e-12, "energy agrees with relax's report",
    "internal: the same functional")
  check.near(w:frame().position[1], X, 1e-15, "relax keeps the frame offset", "common practice")
end

-- 4. fall on a moved wave: the uniform-force closed form, the drop on the grid.
do
  local g = pf.grid{points = 1024, span = 80e-6}
  local w = cloud(g)
  w:kick(2e6, {frame = true})
  w:fly(t1, {acceleration = -gn})
  pf.setup{guard_threshold = math.huge}
  w:fall(t1, -gn)
  pf.setup{guard_threshold = 1e-6}
  local t = 2 * t1
  local v0 = hbar * 2e6 / m
  check.close(w:position_mean(), v0 * t - 0.5 * gn * t * t, 1e-13, "centre after frame flight then fall",
    "kinematics x0 + v0 t + a t^2/2 (Newton; common practice)")
  check.close(w:position_width(), math.sqrt(sigma0 ^ 2 + (hbar * t / (2 * m * sigma0)) ^ 2), 1e-13,
    "width after frame flight then fall", "free width law (textbook; from memory)")
  -- The lab phase: exp(i m a x t / hbar - i m a^2 t^3 / 6 hbar) times the
  -- free packet at x - a t^2/2 (Avron-Herbst), compared through the local
  -- wave number at the centre: k = m (v0 + a t) / hbar.
  check.near(w:wavenumber_mean(), m * (v0 - gn * t) / hbar, 1e-9, "lab wave number after fall",
    "Avron-Herbst: p0 + m a t (common practice)")
  check.equal(w:frame().wavenumber[1], 0, "fall put the momentum on the grid")
  -- The lab wave function itself, phase included (the constant -m a.X of
  -- the force goes into the frame's phase).
  local xs, worst, peak = w:x_axis(1), 0, 0
  for i = 1, #xs, 3 do
    local r = reference(xs[i], t, 2e6, sigma0, -gn)
    worst = math.max(worst, (w:psi(i) - r):abs())
    peak = math.max(peak, r:abs())
  end
  print(string.format("note fall on a moved wave vs closed form: %.3e of peak", worst / peak))
  check.close(worst / peak, 0, 1e-10, "lab psi after frame flight then fall (max |diff| / peak)",
    "uniform-force propagator, Avron-Herbst form (from memory)")
end

-- 5. Refusal when the frame's momentum does not fit on the grid: clear, and
-- nothing changes.
do
  local g = pf.grid{points = 64, span = 48e-6}
  local w = cloud(g)
  w:fly(20e-3, {acceleration = -gn})
  local before = w:frame()
  check.fails(function() w:evolve(1e-5, {potential = trap}) end, "evolve refuses a momentum beyond the grid", here,
    "does not fit", "rad/m", "use a grid with spacing below")
  check.equal(w:frame().wavenumber[1], before.wavenumber[1], "the refused evolve left the frame alone")
  check.fails(function() w:fall(1e-3, -gn) end, "fall refuses it too", "does not fit")
end

-- 6. Phases and masks given as Lua functions see lab coordinates.
do
  local g = pf.grid{points = 512, span = 48e-6}
  local w = cloud(g)
  w:kick(3e6, {frame = true})
  w:fly(t1, {acceleration = -gn})
  local xbar = w:position_mean()
  local kbar = w:wavenumber_mean()
  local sx = w:position_width()
  -- A quadratic phase about a lab point: <k> gains 2 beta (<x> - c).
  local beta, c = 3e10, -2e-6
  w:imprint(function(x) return beta * (x - c) ^ 2 end)
  check.near(w:wavenumber_mean(), kbar + 2 * beta * (xbar - c), 1e-9, "imprint at lab positions: <k> gains <phi'>",
    "phase gradient (common practice)")
  -- A Gaussian transmission at a lab point keeps
  -- s / sqrt(sx^2 + s^2) exp(-(xbar - c)^2 / (2 (sx^2 + s^2))) of the probability.
  local s = 1.5e-6
  local _, removed = w:copy():mask(function(x) return math.exp(-(x - c) ^ 2 / (4 * s * s)) end)
  local kept = s / math.sqrt(sx * sx + s * s) * math.exp(-(xbar - c) ^ 2 / (2 * (sx * sx + s * s)))
  check.near(1 - removed, kept, 1e-9, "mask function at lab positions", "Gaussian integral (common practice)")
  -- Momentum mask about a lab wave number; the momentum distribution stays
  -- Gaussian (a quadratic phase keeps a Gaussian a Gaussian).
  local kc, sk = kbar + 2 * beta * (xbar - c) + 4e5, 3e5
  local mom = w:copy()
  local kmean = mom:wavenumber_mean()
  local kw = mom:wavenumber_width()
  local _, rk = mom:momentum_mask(function(k) return math.exp(-(k - kc) ^ 2 / (4 * sk * sk)) end)
  local keptk = sk / math.sqrt(kw * kw + sk * sk) * math.exp(-(kmean - kc) ^ 2 / (2 * (kw * kw + sk * sk)))
  check.near(1 - rk, keptk, 1e-9, "momentum mask at lab wave numbers", "Gaussian integral (common practice)")
  -- An exact lab displacement moves the lab centre by d and keeps <k>.
  local k0 = w:wavenumber_mean()
  local before = w:copy()
  w:shift(2.5e-6)
  local probe = {-6e-6, -5e-6, -4e-6, -3e-6}
  local moved = w:psi_at({probe[1] + 2.5e-6, probe[2] + 2.5e-6, probe[3] + 2.5e-6, probe[4] + 2.5e-6})
  local orig = before:psi_at(probe)
  local worst, peak = 0, 0
  for i = 1, #probe do
    worst = math.max(worst, (moved[i] - orig[i]):abs())
    peak = math.max(peak, orig[i]:abs())
  end
  check.close(worst / peak, 0, 1e-10, "shift: psi_lab(x + d) afterwards is psi_lab(x) before, phase included",
    "displacement operator (common practice)")
  check.close(w:position_mean(), xbar + 2.5e-6, 1e-13, "shift moves the lab centre", "displacement (common practice)")
  check.near(w:wavenumber_mean(), k0, 1e-12, "shift keeps the lab wave number", "displacement (common practice)")
end

-- 7. Wigner function of a falling cloud on lab axes: a pure Gaussian state's
-- W(x, p) = exp(-z' S^-1 z / 2) / (pi hbar), S its covariance matrix
-- (Gaussian Wigner function, common practice), with the free-flight moments
-- and the lab centre -g t^2/2, -m g t (Newton).
do
  local g = pf.grid{points = 256, span = 24e-6}
  local w = cloud(g)
  w:fly(t1, {acceleration = -gn})
  local W = w:wigner()
  local n = #W.x
  local Vx = sigma0 ^ 2 + (hbar * t1 / (2 * m * sigma0)) ^ 2
  local Vp = hbar * hbar / (4 * sigma0 * sigma0)
  local Cxp = Vp * t1 / m
  local det = Vx * Vp - Cxp * Cxp
  local xc, pc = -0.5 * gn * t1 * t1, -m * gn * t1
  local worst, peak, best, bi, bj = 0, 1 / (math.pi * hbar), -1, 0, 0
  for i = 1, n do
    for j = 1, n do
      local v = W.values[(i - 1) * n + j]
      if v > best then best, bi, bj = v, i, j end
      local dx, dp = W.x[i] - xc, W.p[j] - pc
      if math.abs(dx) < 3e-6 and math.abs(dp) < 3 * math.sqrt(Vp) then
        local q = (Vp * dx * dx - 2 * Cxp * dx * dp + Vx * dp * dp) / det
        worst = math.max(worst, math.abs(v - math.exp(-0.5 * q) / (math.pi * hbar)))
      end
    end
  end
  print(string.format("note wigner of the falling cloud vs closed form: %.3e of peak", worst / peak))
  check.close(worst / peak, 0, 1e-9, "Wigner function on lab axes (max |diff| / peak)", "Gaussian Wigner function (common practice)")
  check.close(W.x[bi], xc, 2 * g:spacing(1), "Wigner peak at the lab position -g t^2/2", "Newton (common practice)")
  check.close(W.p[bj], pc, 2 * hbar * 2 * math.pi / 24e-6, "Wigner peak at the lab momentum -m g t", "Newton (common practice)")
  -- Covariances are central moments: a moving frame leaves them the free packet's.
  check.near(w:position_covariance()[1][1], Vx, 1e-10, "position covariance of the falling cloud", "free width law (textbook; from memory)")
  check.near(w:momentum_covariance()[1][1], Vp, 1e-10, "momentum covariance of the falling cloud", "Gaussian momentum spread hbar/2 sigma0 (common practice)")
  check.equal(w:guard().ok, true, "guard figures of a moved wave: the cloud sits inside its co-moving grid")
end

-- 8. An ensemble whose members share a frame: lab moments and energy; members
-- in different frames are refused.
do
  local g = pf.grid{points = 512, span = 48e-6}
  local a, b = cloud(g), cloud(g):shift(3e-6)
  local e = pf.mixture({a, b}, {0.25, 0.75})
  e:fly(t1, {acceleration = -gn})
  local drop = -0.5 * gn * t1 * t1
  check.close(e:position_mean(), 0.75 * 3e-6 + drop, 1e-13, "ensemble lab centre", "Newton, weighted mean (common practice)")
  check.near(e:velocity_mean(), -gn * t1, 1e-12, "ensemble lab velocity", "Newton (common practice)")
  -- <p^2>/2m = hbar^2 / (8 m sigma0^2) + m v^2 / 2 for either member.
  check.near(e:kinetic_energy(), hbar * hbar / (8 * m * sigma0 ^ 2) + 0.5 * m * (gn * t1) ^ 2, 1e-10,
    "ensemble lab kinetic energy", "Gaussian moments, Newton (common practice)")
  local mixed = pf.mixture({cloud(g):fly(t1, {acceleration = -gn}), cloud(g)})
  check.fails(function() return mixed:position_mean() end, "mixed frames are refused", here, "sits in another frame")
end

-- 9. h5file:put_wave of a falling cloud writes the lab wave function on lab
-- axes; read back, psi and phi give the closed-form packet (from memory, as
-- above) and the lab spectrum's centre -m g t / hbar (Newton).
do
  local g = pf.grid{points = 256, span = 24e-6}
  local w = cloud(g)
  w:kick(2e6, {frame = true})
  w:fly(t1, {acceleration = -gn})
  local f = pf.h5file("frame-lab-wave.h5", {overwrite = true})
  f:put_wave("falling", w, {parts = "both"})
  f:close()
  local path = pf.output_path("frame-lab-wave.h5")
  local fromx = pf.load_wave(path, {item = "falling", space = "position"})
  local fromk = pf.load_wave(path, {item = "falling", space = "momentum"})
  check.equal(fromx:frame().moved, false, "the file holds a lab state (no frame)")
  local worst, worstk, peak = 0, 0, 0
  local xs, lx = w:x_axis(1), fromx:x_axis(1)
  for i = 1, #xs, 5 do
    local r = reference(xs[i], t1, 2e6, sigma0, -gn)
    worst = math.max(worst, (fromx:psi(i) - r):abs())
    worstk = math.max(worstk, (fromk:psi(i) - r):abs())
    peak = math.max(peak, r:abs())
  end
  check.close(lx[1], xs[1], 1e-18, "the file's grid sits at the lab positions (m)", "kinematics (common practice)")
  print(string.format("note put_wave of a falling cloud vs closed form: psi %.3e, phi %.3e of peak", worst / peak, worstk / peak))
  check.close(worst / peak, 0, 1e-10, "put_wave psi is the lab wave function", "uniform-force propagator, Avron-Herbst form (from memory)")
  check.close(worstk / peak, 0, 1e-10, "put_wave phi is the lab spectrum", "uniform-force propagator, Avron-Herbst form (from memory)")
  check.near(fromk:wavenumber_mean(), 2e6 - m * gn * t1 / hbar, 1e-10, "lab spectrum centred at k0 - m g t / hbar",
    "Newton (common practice)")
end

-- 10. w:expand follows the cloud: a condensate moving on its grid, off the
-- grid's origin, expands about its own centre of mass while the frame
-- carries the drift.  The centre moves freely, x0 + v t (the total momentum
-- of a translation-invariant Hamiltonian is conserved; common practice), and
-- the shape is that of the same cloud released at rest (Galilean covariance
-- of the Gross-Pitaevskii equation, whose mean field depends on |psi|^2
-- only; common practice).  The drift (0.4 mm) is larger than the expanded
-- grid's half span, so a grid scaled about its own origin would wrap it.
do
  local na = pf.mass("23Na")
  local om = 2 * math.pi * 100
  local mu = 10 * hbar * om
  -- 1D Thomas-Fermi: mu = (3 g m^(1/2) omega / (4 sqrt 2))^(2/3) (textbook).
  local gN = mu ^ 1.5 * 4 * math.sqrt(2) / (3 * math.sqrt(na) * om)
  local R = math.sqrt(2 * mu / (na * om * om))
  local g = pf.grid{points = 1024, span = 4 * R}
  local rest = pf.thomas_fermi(g, {mass = na, radius = R})
  rest:relax{potential = function(x) return 0.5 * na * om * om * x * x end, g = gN, tolerance = 1e-12, acceleration = false}
  local x0, v = 3e-6, 0.02
  local moving = rest:copy():shift(x0):kick(na * v / hbar)
  local t = 20e-3
  local _, ir = rest:expand(t, {g = gN, omega = {om}, acceleration = false})
  local _, im = moving:expand(t, {g = gN, omega = {om}, acceleration = false})
  print(string.format("note expand with drift: centre %.9e m (want %.9e), lambda %.9f (at rest %.9f), grid half span %.3e m",
    moving:position_mean(), x0 + v * t, im.lambda[1], ir.lambda[1], 0.5 * ir.lambda[1] * 4 * R))
  check.truthy(v * t > 0.5 * ir.lambda[1] * 4 * R, "the drift exceeds the expanded grid's half span")
  check.close(moving:position_mean(), x0 + v * t, 1e-12, "expanded cloud's centre moves freely (m)", "conserved momentum (common practice)")
  check.near(moving:velocity_mean(), v, 1e-9, "expanded cloud keeps its velocity", "conserved momentum (common practice)")
  check.near(im.lambda[1], ir.lambda[1], 1e-12, "scaling factor as for the cloud at rest", "Galilean covariance of GP (common practice)")
  check.near(moving:position_width(), rest:position_width(), 1e-8, "width as for the cloud at rest",
    "Galilean covariance of GP (common practice)")
  check.near(im.energy, ir.energy, 1e-9, "expand's energy is the cloud's own (no centre-of-mass part)",
    "Galilean covariance of GP (common practice)")
end

-- 11. Two lab states in one frame: a falling cloud and the same cloud with a
-- lab kick exp(i q x) (which changes the frame's phase by q X).  Their
-- overlap is the characteristic function of the Gaussian density,
-- <a|b> = exp(i q <x> - q^2 Var x / 2) with the lab <x> (common practice);
-- the fidelity its square modulus; a - b has norm 2 - 2 Re <a|b>.
do
  local g = pf.grid{points = 256, span = 24e-6}
  local a = cloud(g):fly(t1, {acceleration = -gn})
  local q = 4e5
  local b = a:copy():kick(q)
  local Vx = sigma0 ^ 2 + (hbar * t1 / (2 * m * sigma0)) ^ 2
  local xbar = -0.5 * gn * t1 * t1
  local mod = math.exp(-q * q * Vx / 2)
  local want = pf.complex(mod * math.cos(q * xbar), mod * math.sin(q * xbar))
  check.close((a:inner(b) - want):abs(), 0, 1e-12, "inner product of two lab states in one frame",
    "Gaussian characteristic function (common practice)")
  check.near(a:fidelity(b), mod * mod, 1e-12, "fidelity of two lab states", "Gaussian characteristic function (common practice)")
  local d = a:copy():add(b, -1)
  check.near(d:norm(), 2 - 2 * mod * math.cos(q * xbar), 1e-10, "norm of a - b", "Gaussian characteristic function (common practice)")
  local other = cloud(g):fly(2 * t1, {acceleration = -gn})
  check.fails(function() return a:inner(other) end, "waves in different frames are refused", here, "different frames")
end

-- 12. The probability current of a falling cloud on lab positions: the free
-- Gaussian's current rho(x) (v(t) + (x - <x>) t / (tau^2 + t^2)), tau =
-- 2 m sigma0^2 / hbar, with the centre and velocity of the uniform force
-- (textbook free current; Avron-Herbst form, from memory).
do
  local g = pf.grid{points = 256, span = 24e-6}
  local w = cloud(g)
  w:kick(2e6, {frame = true})
  w:fly(t1, {acceleration = -gn})
  local cur = w:current(1)
  local v0 = hbar * 2e6 / m
  local vt, xbar = v0 - gn * t1, v0 * t1 - 0.5 * gn * t1 * t1
  local tau = 2 * m * sigma0 ^ 2 / hbar
  local st2 = sigma0 ^ 2 * (1 + (t1 / tau) ^ 2)
  local worst, peak = 0, 0
  for i, x in ipairs(cur.axes[1]) do
    local rho = math.exp(-(x - xbar) ^ 2 / (2 * st2)) / math.sqrt(2 * math.pi * st2)
    local j = rho * (vt + (x - xbar) * t1 / (tau * tau + t1 * t1))
    worst = math.max(worst, math.abs(cur.values[i] - j))
    peak = math.max(peak, math.abs(j))
  end
  print(string.format("note current of the falling cloud vs closed form: %.3e of peak", worst / peak))
  check.close(worst / peak, 0, 1e-10, "current on lab positions (max |diff| / peak)", "free Gaussian current under a uniform force (from memory)")
end

-- 13. Regions in lab coordinates on a falling cloud.  A region weighs whole
-- grid cells, so the planes and box edges below sit on cell edges of the
-- co-moving grid (the lab centre -g t^2/2 is a grid point there); the cell
-- sums then approximate the Gaussian's integrals erf(z) by the midpoint rule,
-- whose end error (dx^2/24) |rho'| at the edges is about 2e-4 here.
-- erf from its Maclaurin series (common practice); centre by Newton and width
-- by the free law (from memory).
do
  local g = pf.grid{points = 256, span = 24e-6}
  local w = cloud(g):fly(t1, {acceleration = -gn})
  local xbar = -0.5 * gn * t1 * t1
  local s = math.sqrt(sigma0 ^ 2 + (hbar * t1 / (2 * m * sigma0)) ^ 2)
  local dx = g:spacing(1)
  local function erf(z)
    local sum, term, n = 0, z, 0
    while math.abs(term) > 1e-17 do
      sum = sum + term / (2 * n + 1)
      n = n + 1
      term = -term * z * z / n
    end
    return 2 / math.sqrt(math.pi) * sum
  end
  local h = 10.5 * dx
  local inside = w:probability_in(pf.box{min = {xbar - h}, max = {xbar + h}})
  check.near(inside, erf(h / (s * math.sqrt(2))), 1e-3, "probability in a lab box about the lab centre",
    "Gaussian integral, erf series (common practice)")
  local below = w:probability_in(pf.half_space{point = {xbar - 0.5 * dx}, normal = {-1}})
  check.near(below, 0.5 * (1 - erf(0.5 * dx / (s * math.sqrt(2)))), 1e-3, "probability below a lab plane",
    "Gaussian integral, erf series (common practice)")
  local hit, p = w:copy():measure_region(pf.half_space{point = {xbar + h}, normal = {1}}, {outcome = true})
  check.near(p, 0.5 * (1 - erf(h / (s * math.sqrt(2)))), 1e-3, "measure_region beyond a lab plane",
    "Gaussian integral, erf series (common practice)")
  check.equal(hit, true, "forced outcome")
  local indicator = pf.mask(function(x) return (x >= xbar - h and x <= xbar + h) and 1 or 0 end)
  check.near(w:probability_in(indicator), erf(h / (s * math.sqrt(2))), 1e-3,
    "a mask function of lab positions (the box's indicator)", "Gaussian integral, erf series (common practice)")
end

-- 14. A position measurement of a falling cloud with a Gaussian resolution
-- r, forced to the lab outcome <x> + s/2: the outcome density is the normal
-- density of variance s^2 + r^2 at s/2, and the collapsed centre moves to
-- <x> + (s^2 / (s^2 + r^2)) s/2 (product of Gaussians; common practice).
do
  local g = pf.grid{points = 256, span = 24e-6}
  local w = cloud(g):fly(t1, {acceleration = -gn})
  local xbar = -0.5 * gn * t1 * t1
  local s = math.sqrt(sigma0 ^ 2 + (hbar * t1 / (2 * m * sigma0)) ^ 2)
  local r = 0.8e-6
  local at = xbar + 0.5 * s
  local out, density = w:measure_position{resolution = {r}, outcome = {at}}
  local v = s * s + r * r
  check.close(out[1], at, 1e-18, "the outcome is reported as the lab position", "definition")
  check.near(density, math.exp(-(0.5 * s) ^ 2 / (2 * v)) / math.sqrt(2 * math.pi * v), 1e-9,
    "outcome density at a lab position", "Gaussian convolution (common practice)")
  check.close(w:position_mean(), xbar + s * s / v * 0.5 * s, 1e-13, "collapsed centre (m)", "product of Gaussians (common practice)")
end

-- 16. pf.potential with an acceleration keeps the tilted table V - m a.xi and
-- its split-step exponentials in the object (p:cache_status counts builds and
-- reuses): a second evolve under the same acceleration reuses them and gives
-- the same bits as sampling the function anew on every call; another
-- acceleration rebuilds.  The centre follows the classical orbit in the
-- tilted trap (Ehrenfest, exact for quadratic H; common practice).
do
  local g = pf.grid{points = 512, span = 48e-6}
  local w = cloud(g)
  w:fly(t1, {acceleration = -gn})
  local P = pf.potential(w, trap)
  local a, b = w:copy(), w:copy()
  local th = 1e-4
  local st0 = P:cache_status()
  check.equal(st0.tilted_builds, 0, "no tilted table before the first evolve")
  a:evolve(th, {potential = P, acceleration = -gn, dt = dt, order = 4})
  local st1 = P:cache_status()
  check.equal(st1.tilted_builds, 1, "first evolve under gravity builds the tilted table")
  check.equal(st1.tilted_reuses, 0, "nothing reused yet")
  check.equal(st1.acceleration[1], -gn, "the kept table's acceleration")
  a:evolve(th, {potential = P, acceleration = -gn, dt = dt, order = 4})
  local st2 = P:cache_status()
  check.equal(st2.tilted_builds, 1, "second evolve under the same acceleration builds nothing")
  check.equal(st2.tilted_reuses, 1, "second evolve reuses the tilted table")
  b:evolve(th, {potential = trap, acceleration = -gn, dt = dt, order = 4})
  b:evolve(th, {potential = trap, acceleration = -gn, dt = dt, order = 4})
  local same = true
  for i = 1, 512 do
    local za, zb = a:psi(i), b:psi(i)
    same = same and za.re == zb.re and za.im == zb.im
  end
  check.truthy(same, "the kept table gives the same bits as sampling the potential on every call")
  local x1, v1 = -0.5 * gn * t1 * t1, -gn * t1
  local xe = centre - gn / omega ^ 2
  local c, s = math.cos(omega * 2 * th), math.sin(omega * 2 * th)
  check.close(a:position_mean(), xe + (x1 - xe) * c + v1 / omega * s, 1e-12,
    "centre after two cached evolves vs the classical orbit in the tilted trap", "Ehrenfest, exact for quadratic H (common practice)")
  a:evolve(th, {potential = P, acceleration = -0.5 * gn, dt = dt, order = 4})
  check.equal(P:cache_status().tilted_builds, 2, "another acceleration rebuilds the table")
  local r = a:copy():relax{potential = P, acceleration = -0.5 * gn, max_steps = 20, tolerance = 1}
  check.equal(P:cache_status().tilted_reuses, 2, "relax under the kept acceleration reuses it too")
  P:close()
end

check.done()
