-- test_frame.lua - the moving frame a wave carries: flight
-- under a uniform acceleration with the cloud kept on the grid, lab values and
-- moments, kicks into the frame, the pf.setup default, and the FRAME_AWARE
-- refusal of every other method.
--
-- References (outside the project):
--  * uniform-force propagator in the Avron-Herbst form: psi(x, t) =
--    exp(i m a x t / hbar - i m a^2 t^3 / (6 hbar)) [U_free(t) psi0](x - a t^2/2)
--    (J. E. Avron and I. W. Herbst, Commun. Math. Phys. 52, 239 (1977); the
--    same form is the textbook solution for a linear potential; from memory);
--  * the free Gaussian packet with complex width alpha_t = sigma^2 + i hbar t / 2m
--    and Galilean boost (C. Cohen-Tannoudji, B. Diu, F. Laloe, Quantum
--    Mechanics, complement G_I; from memory);
--  * kinematics x0 + v0 t + a t^2 / 2, p0 + m a t (Newton; common practice)
--    and the free width law sigma sqrt(1 + (hbar t / 2 m sigma^2)^2) (same
--    complement).
-- The internal cross-check against w:fall on one big grid is named as such.
local pf = require "psiflight"
local check = require "check"
pf.setup{planning = "estimate"}
local C = pf.constants
local hbar = C.hbar
local m = pf.mass("87Rb")
local here = "test_frame.lua:"

-- Closed-form packet: Gaussian of width sigma at x0 with wave number k0
-- (psi0 = (2 pi sigma^2)^(-1/4) exp(-(x-x0)^2/(4 sigma^2) + i k0 (x - x0))),
-- flown t under acceleration a, at lab position x.
local function reference(x, t, x0, k0, sigma, a)
  local v0 = hbar * k0 / m
  local xs = x - 0.5 * a * t * t -- Avron-Herbst: free packet at x - a t^2/2
  local ar, ai = sigma * sigma, hbar * t / (2 * m) -- alpha_t
  local d = xs - x0 - v0 * t
  -- -d^2 / (4 alpha) = -d^2 conj(alpha) / (4 |alpha|^2)
  local den = 4 * (ar * ar + ai * ai)
  local er, ei = -d * d * ar / den, d * d * ai / den
  -- (sigma^2 / alpha)^(1/2)
  local mod = (sigma * sigma / math.sqrt(ar * ar + ai * ai)) ^ 0.5
  local arg = -0.5 * math.atan(ai, ar)
  local phase = ei + k0 * (xs - x0) - hbar * k0 * k0 * t / (2 * m)
    + m * a * x * t / hbar - m * a * a * t ^ 3 / (6 * hbar)
  local amp = (2 * math.pi * sigma * sigma) ^ -0.25 * mod * math.exp(er)
  return amp * math.cos(phase + arg), amp * math.sin(phase + arg)
end

local function packet(g, x0, k0, sigma)
  return pf.wave(g, {mass = m, normalize = false, position = function(x)
    local amp = (2 * math.pi * sigma * sigma) ^ -0.25 * math.exp(-(x - x0) ^ 2 / (4 * sigma * sigma))
    return amp * math.cos(k0 * (x - x0)), amp * math.sin(k0 * (x - x0))
  end})
end

local function max_diff(w, fn)
  local xs = w:x_axis(1)
  local worst, peak = 0, 0
  for i, x in ipairs(xs) do
    local z = w:psi(i)
    local rr, ri = fn(x)
    local dr, di = z.re - rr, z.im - ri
    worst = math.max(worst, math.sqrt(dr * dr + di * di))
    peak = math.max(peak, math.sqrt(rr * rr + ri * ri))
  end
  return worst / peak
end

-- 1. Flight under gravity in the frame against the closed form, value by value.
do
  local g = pf.grid{points = 1024, span = 120e-6}
  local x0, k0, sigma, a, t = 3e-6, 2e6, 2e-6, -9.80665, 2e-3
  local w = packet(g, x0, k0, sigma)
  w:fly(t, {acceleration = a})
  local f = w:frame()
  check.truthy(f.moved, "flight with acceleration moves the frame")
  check.near(f.position[1], 0.5 * a * t * t, 1e-14, "frame offset a t^2/2", "kinematics (common practice)")
  check.near(f.momentum[1], m * a * t, 1e-14, "frame momentum m a t", "Newton (common practice)")
  local err = max_diff(w, function(x) return reference(x, t, x0, k0, sigma, a) end)
  check.close(err, 0, 1e-10, "lab psi vs Avron-Herbst closed form (max |diff| / peak)",
    "Avron & Herbst 1977 + free Gaussian, Cohen-Tannoudji G_I (from memory)")
  print(string.format("note closed-form difference %.3e", err))
  local xm = w:position_mean()
  check.near(xm, x0 + hbar * k0 / m * t + 0.5 * a * t * t, 1e-10, "<x> = x0 + v0 t + a t^2/2", "kinematics (common practice)")
  local width = sigma * math.sqrt(1 + (hbar * t / (2 * m * sigma * sigma)) ^ 2)
  check.near(w:position_width(), width, 1e-10, "width follows the free law", "Cohen-Tannoudji G_I (from memory)")
  check.near(w:momentum_mean(), hbar * k0 + m * a * t, 1e-10, "<p> = hbar k0 + m a t", "Newton (common practice)")
  check.near(w:momentum_width(), hbar / (2 * sigma), 1e-10, "momentum width unchanged hbar/(2 sigma)",
    "minimum-uncertainty Gaussian (common practice)")
  check.near(w:velocity_mean(), hbar * k0 / m + a * t, 1e-10, "<v> = v0 + a t", "Newton (common practice)")
  local ke = 0.5 * ((hbar * k0 + m * a * t) ^ 2 + (hbar / (2 * sigma)) ^ 2) / m
  check.near(w:kinetic_energy(), ke, 1e-10, "kinetic energy <p^2>/2m in the lab", "<p^2> = <p>^2 + var p (common practice)")
  -- The lab wave-number axis carries the frame's offset: <k> from it and the
  -- momentum density is the lab mean (hbar k0 + m a t) / hbar.
  local ks, rho = w:k_axis(1), w:momentum_density()
  local kmean, dk = 0, ks[2] - ks[1]
  for i = 1, #ks do kmean = kmean + ks[i] * rho[i] * dk end
  check.near(kmean, k0 + m * a * t / hbar, 1e-9, "<k> over w:k_axis = k0 + m a t / hbar", "Newton (common practice)")
  -- The grid itself holds only the cloud: its own momentum stays near k0.
  local log = w:log()
  check.equal(log[#log].method, "moving-frame", "the flight is logged as a moving-frame flight")
  -- Flying back without acceleration... then with -a for t returns? Reverse time instead:
  w:fly(-t, {acceleration = a})
  local back = max_diff(w, function(x)
    local amp = (2 * math.pi * sigma * sigma) ^ -0.25 * math.exp(-(x - x0) ^ 2 / (4 * sigma * sigma))
    return amp * math.cos(k0 * (x - x0)), amp * math.sin(k0 * (x - x0))
  end)
  check.close(back, 0, 1e-10, "flight of -t under the same acceleration restores the start",
    "unitarity and time reversal of the propagator (common practice)")
end

-- 2. The frame on a small grid equals w:fall on a big grid (internal cross-check:
-- the same Avron-Herbst form applied on the grid), point by point in the lab.
do
  local n, span, t = 4096, 400e-6, 1e-3
  local g = pf.grid{points = n, span = span}
  local dx = g:spacing(1)
  local steps = 50
  local a = -2 * steps * dx / (t * t) -- a t^2/2 = -50 dx: lab points coincide
  local x0, k0, sigma = 0, 1e6, 3e-6
  local wf = packet(g, x0, k0, sigma)
  local wb = packet(g, x0, k0, sigma)
  wf:fly(t, {acceleration = a})
  pf.setup{guard_threshold = math.huge}
  wb:fall(t, a)
  local worst, peak = 0, 0
  for i = steps + 1, n do
    local zf, zb = wf:psi(i), wb:psi(i - steps)
    local d = zf - zb
    worst = math.max(worst, d:abs())
    peak = math.max(peak, zb:abs())
  end
  check.close(worst / peak, 0, 1e-12, "frame flight equals fall on the same grid (max |diff| / peak)",
    "internal: w:fall closed form")
  print(string.format("note fall vs frame %.3e", worst / peak))
  pf.setup{guard_threshold = 1e-6}
end

-- 3. A launched cloud: the kick goes into the frame, the grid keeps k = 0.
do
  local g = pf.grid{points = 512, span = 60e-6}
  local x0, sigma, t, k = -5e-6, 2e-6, 1e-3, 5e8 -- 5e8 rad/m: far beyond this grid's Nyquist limit
  check.truthy(k > g:knyquist(1), "the launch wave number exceeds the grid's Nyquist limit")
  local w = packet(g, x0, 0, sigma)
  w:kick(k, {frame = true})
  w:fly(t)
  local v = hbar * k / m
  check.near(w:position_mean(), x0 + v * t, 1e-10, "launched cloud <x> = x0 + v t", "kinematics (common practice)")
  -- The kick is exp(i k x) = exp(i k x0) exp(i k (x - x0)): the reference's
  -- phase convention times the constant exp(i k x0).
  local c, s = math.cos(k * x0), math.sin(k * x0)
  local err = max_diff(w, function(x)
    local rr, ri = reference(x, t, x0, k, sigma, 0)
    return rr * c - ri * s, rr * s + ri * c
  end)
  check.close(err, 0, 1e-10, "launched cloud vs boosted free Gaussian", "Cohen-Tannoudji G_I (from memory)")
  -- A lab kick on a moved wave: exp(i q x) on the lab state.
  local q = 3e5
  local z1 = w:psi(200)
  local x = w:x_axis(1)[200]
  w:kick(q)
  local z2 = w:psi(200)
  local want = z1 * pf.cexp(pf.complex(0, q * x))
  check.close((z2 - want):abs() / z1:abs(), 0, 1e-12, "lab kick multiplies the lab psi by exp(i q x)",
    "definition of a momentum kick (common practice)")
  check.near(w:wavenumber_mean(), k + q, 1e-10, "lab kick adds q to <k>", "definition of a kick (common practice)")
end

-- 4. The per-script default, and its dimension check.
do
  local g2 = pf.grid{points = {32, 32}, span = {40e-6, 40e-6}}
  pf.setup{acceleration = {0, -9.80665}}
  local w = pf.gaussian(g2, {mass = m, width = 3e-6})
  w:fly(1e-3)
  local x, y = w:position_mean()
  -- (the packet on this coarse grid has its own mean of order 1e-15 m)
  check.near(y, -0.5 * 9.80665 * 1e-6, 0, "pf.setup acceleration applies to fly", "kinematics (common practice)", 1e-14)
  check.close(x, 0, 1e-14, "no drift across gravity", "kinematics (common practice)")
  local w1 = pf.gaussian(pf.grid{points = 64, span = 40e-6}, {mass = m, width = 3e-6})
  check.fails(function() w1:fly(1e-3) end, "default of the wrong dimension", here,
    "the acceleration set with pf.setup has 2 values but the wave is 1D")
  w1:fly(1e-3, {acceleration = false})
  check.equal(w1:frame().moved, false, "acceleration = false flies without the default")
  pf.setup{acceleration = false}
  w1:fly(1e-3)
  check.equal(w1:frame().moved, false, "pf.setup{acceleration = false} clears the default")
  check.fails(function() pf.setup{acceleration = {0, "down"}} end, "setup acceleration entry checked",
    "field 'acceleration' entry 2 must be a finite number")
  check.fails(function() pf.setup{acceleration = {0, 0, -9.8, 0}} end, "setup acceleration: at most 3 axes",
    "pf.setup: field 'acceleration' must have 1 to 3 entries (one per axis), got 4")
  check.fails(function() pf.setup{acceleration = {}} end, "setup acceleration: at least 1 axis",
    "must have 1 to 3 entries (one per axis), got 0")
  check.fails(function() w1:fly(1e-3, {acceleration = {1, 2}}) end, "fly acceleration per axis", "need 1 values")
end

-- 4b. The operators + - * / and unary minus on waves in one moved frame give
-- the lab superposition: 2 psi1 - (0.5 - 0.5i) psi2 + (-psi1) / 4 against the
-- same combination of the closed-form falling packets above (linearity of the
-- Schroedinger equation; common practice).
do
  local g = pf.grid{points = 1024, span = 120e-6}
  local a, t, sigma = -9.80665, 2e-3, 2e-6
  local w1, w2 = packet(g, -5e-6, 2e6, sigma), packet(g, 6e-6, -1e6, sigma)
  w1:fly(t, {acceleration = a})
  w2:fly(t, {acceleration = a})
  local z = pf.complex(0.5, -0.5)
  local s = 2 * w1 - z * w2 + (-w1) / 4
  check.truthy(s:frame().moved, "the combination keeps the moved frame")
  local err = max_diff(s, function(x)
    local r1, i1 = reference(x, t, -5e-6, 2e6, sigma, a)
    local r2, i2 = reference(x, t, 6e-6, -1e6, sigma, a)
    -- 1.75 psi1 - (0.5 - 0.5 i) psi2
    return 1.75 * r1 - (0.5 * r2 + 0.5 * i2), 1.75 * i1 - (0.5 * i2 - 0.5 * r2)
  end)
  check.close(err, 0, 1e-10, "operators on moved waves: lab superposition vs closed form",
    "Avron-Herbst packets above; linearity (common practice)")
end

-- 5. Every other method refuses a moved wave, by name; the list names real methods.
do
  local g = pf.grid{points = 256, span = 40e-6}
  local w = pf.gaussian(g, {mass = m, width = 2e-6})
  w:fly(1e-4, {acceleration = -9.80665})
  check.fails(function() pf._frame_guard_probe(w) end,
    "an unlisted function refuses a moved wave", here, "does not support a wave in a moving frame")
  check.truthy(pf._frame_guard_probe(pf.gaussian(g, {mass = m, width = 2e-6})), "the probe takes an unmoved wave")
  local meta = setmetatable({}, {__index = function(_, k)
    return getmetatable(w).__index[k] or (k:match("^__") and getmetatable(w)[k]) end})
  local h5 = pf.h5file("frame-aware-walk.h5", {overwrite = true})
  local h5meta = getmetatable(h5).__index
  local cammeta = getmetatable(pf.camera{pixels = 4, pitch = 1e-6}).__index
  local ens1 = pf.mixture({pf.gaussian(g, {mass = m, width = 2e-6})})
  local ensmeta = setmetatable({}, {__index = function(_, k) return ens1[k] end})
  local aware = pf._frame_aware()
  check.truthy(#aware >= 20, "FRAME_AWARE lists the lab-aware methods (" .. #aware .. ")")
  for i, name in ipairs(aware) do
    local kind, fn = name:match("^(%w+)[.:]([%w_]+)$")
    local exists = (kind == "wave" and meta[fn]) or (kind == "pf" and pf[fn]) or (kind == "h5file" and h5meta[fn])
      or (kind == "camera" and cammeta[fn]) or (kind == "ensemble" and ensmeta[fn])
    if not exists then error("FRAME_AWARE names '" .. name .. "', which does not exist", 0) end
    if i > 1 and aware[i - 1] >= name then error("FRAME_AWARE is not sorted at " .. name, 0) end
  end
  check.truthy(true, "every FRAME_AWARE entry names an existing function, sorted")
  local g2 = pf.grid{points = {32, 32}, span = {40e-6, 40e-6}}
  local w2 = pf.gaussian(g2, {mass = m, width = 3e-6})
  w2:fly(1e-3, {acceleration = {0, -9.80665}})
  check.truthy(pf.picture_map("falling.png", w2) ~= nil, "picture_map draws a falling wave (lab axes)")
  h5:discard()
  -- An unmoved wave is accepted everywhere, as before.
  local u = pf.gaussian(g, {mass = m, width = 2e-6})
  u:fall(1e-4, -9.8)
  check.equal(u:frame().moved, false, "fall keeps the grid frame")
  -- A copy carries the frame.
  check.equal(w:copy():frame().position[1], w:frame().position[1], "copy carries the frame")
end

-- 6. Arrival at a lab plane below a dropped cloud: the flux against the exact
-- flux of a free Gaussian under gravity, J = rho v with rho the Gaussian of
-- centre x0 + v0 t + a t^2/2 and width s(t), and the velocity field
-- v = v0 + a t + (x - centre) t / (t^2 + tau^2), tau = 2 m sigma^2 / hbar
-- (the spreading Gaussian's current; P. R. Holland, The Quantum Theory of
-- Motion, ch. 4, from memory; tests/ref/test_frame_arrival.sh checks this
-- formula and the mean and spread with numpy/scipy).
local function exact_flux(L, t, x0, v0, sigma, a)
  local tau = 2 * m * sigma * sigma / hbar
  local s = sigma * math.sqrt(1 + (t / tau) ^ 2)
  local c = x0 + v0 * t + 0.5 * a * t * t
  local rho = math.exp(-(L - c) ^ 2 / (2 * s * s)) / math.sqrt(2 * math.pi * s * s)
  return rho * (v0 + a * t + (L - c) * t / (t * t + tau * tau))
end
do
  local g = pf.grid{points = 512, span = 60e-6}
  local sigma, a, L = 1e-6, -9.80665, -0.5e-3
  local w = packet(g, 0, 0, sigma)
  local t_hit = math.sqrt(2 * L / a)
  local r = w:arrival_times{at = L, from = t_hit - 250e-6, to = t_hit + 250e-6, steps = 501, acceleration = a}
  local worst, peak = 0, 0
  for k, t in ipairs(r.time) do
    local want = exact_flux(L, t, 0, 0, sigma, a)
    worst = math.max(worst, math.abs(r.flux[k] - want))
    peak = math.max(peak, math.abs(want))
  end
  check.close(worst / peak, 0, 1e-9, "arrival flux at a lab plane 0.5 mm below vs exact J(L, t)",
    "spreading Gaussian current, Holland ch. 4 (from memory), Avron-Herbst")
  print(string.format("note flux difference %.3e of the peak", worst / peak))
  check.near(r.arrived, -1, 1e-8, "all probability crosses the plane (downwards: flux < 0)", "norm conservation (common practice)")
  check.near(r.mean, t_hit, 1e-4, "mean arrival time near sqrt(2 h / g)", "kinematics (common practice)")
  check.truthy(w:frame().moved == false, "arrival_times leaves the wave as it was")
  -- The same drop in 2D with the plane across axis 2: the transverse
  -- integral of a separable Gaussian is 1, so the flux is the 1D one.
  local g2 = pf.grid{points = {32, 256}, span = {30e-6, 60e-6}}
  local w2 = pf.wave(g2, {mass = m, position = function(x, y)
    return math.exp(-x * x / (4 * 2e-6 * 2e-6) - y * y / (4 * sigma * sigma))
  end})
  local r2 = w2:arrival_times{axis = 2, at = L, from = t_hit - 60e-6, to = t_hit + 60e-6, steps = 13,
    acceleration = {0, a}}
  local worst2 = 0
  for k, t in ipairs(r2.time) do
    worst2 = math.max(worst2, math.abs(r2.flux[k] - exact_flux(L, t, 0, 0, sigma, a)) / peak)
  end
  check.close(worst2, 0, 1e-9, "2D arrival flux equals the 1D exact flux", "separable Gaussian (common practice)")
  -- A wave already in a moving frame: its arrival needs no option.
  local wf = packet(g, 0, 0, sigma)
  wf:fly(t_hit - 200e-6, {acceleration = a})
  local r3 = wf:arrival_times{at = L, from = -50e-6, to = 450e-6, steps = 501, acceleration = a}
  check.near(r3.mean + t_hit - 200e-6, r.mean, 1e-9, "arrival after a flight in the frame agrees", "same physics, two routes")
end

-- 7. Long flights in the frame: scaled, same-grid and two-stage flights of the
-- cloud while the frame falls; centre, widths and momentum against the
-- kinematics and the free width law, and the far-field image placed in the lab.
do
  pf.setup{guard_threshold = math.huge} -- scaled grids carry the chirp's momentum near their edge
  local sigma, t, a = 1.5e-6, 25e-3, -9.80665
  local width = sigma * math.sqrt(1 + (hbar * t / (2 * m * sigma * sigma)) ^ 2)
  local function checks(w, label)
    local x, y = w:position_mean()
    check.close(x, 0, 1e-12, label .. ": no drift across gravity", "kinematics (common practice)")
    check.near(y, 0.5 * a * t * t, 1e-9, label .. ": centre falls a t^2/2", "kinematics (common practice)")
    local wx, wy = w:position_width()
    check.near(wx, width, 1e-6, label .. ": width x follows the free law", "Cohen-Tannoudji G_I (from memory)")
    check.near(wy, width, 1e-6, label .. ": width y follows the free law", "Cohen-Tannoudji G_I (from memory)")
    check.near(w:frame().momentum[2], m * a * t, 1e-12, label .. ": frame momentum m a t", "Newton (common practice)")
    -- The lab mean adds the grid's own mean, which a scaled grid biases
    -- slightly (its chirp's momentum reaches the grid's Nyquist limit).
    local _, py = w:momentum_mean()
    check.near(py, m * a * t, 1e-4, label .. ": <p_y> = m a t", "Newton (common practice)")
  end
  local g = pf.grid{points = {64, 64}, span = {24e-6, 24e-6}}
  local w = pf.gaussian(g, {mass = m, width = sigma})
  local _, rep = w:fly_long(t, {acceleration = {0, a}})
  check.equal(rep.method, "scaled", "a 25 ms drop flies scaled on a small co-moving grid")
  checks(w, "fly_long scaled")
  local target = pf.grid{points = {128, 128}, span = {100e-6, 100e-6}}
  local w2 = pf.gaussian(g, {mass = m, width = sigma})
  w2:fly_long(t, {grid = target, acceleration = {0, a}})
  checks(w2, "fly_long two-stage")
  local w3 = pf.gaussian(g, {mass = m, width = sigma})
  w3:fly_scaled(t, {acceleration = {0, a}})
  checks(w3, "fly_scaled")
  -- same grid: the cloud expands on a grid that holds it, never the drop
  local big = pf.grid{points = {256, 256}, span = {80e-6, 80e-6}}
  local w4 = pf.gaussian(big, {mass = m, width = 4e-6})
  local _, rep4 = w4:fly_long(5e-3, {method = "same-grid", acceleration = {0, a}})
  check.equal(rep4.method, "same-grid", "same-grid method chosen")
  local _, y4 = w4:position_mean()
  check.near(y4, 0.5 * a * 25e-6, 1e-9, "fly_long same-grid: centre falls a t^2/2", "kinematics (common practice)")
  -- far field: the image sits at the frame's lab position after the drop
  local w5 = pf.gaussian(g, {mass = m, width = sigma})
  local image, info = w5:far_field(t, {acceleration = {0, a}})
  check.near(info.grid:origin(2), 0.5 * a * t * t, 1e-12, "far-field image centred where the frame fell",
    "kinematics (common practice)")
  check.equal(info.grid:origin(1), 0, "far-field image not moved across gravity")
  check.truthy(#image == 64 * 64, "far-field image has the grid's points")
  pf.setup{guard_threshold = 1e-6}
end

-- 8. Masks, apertures and pulses placed at lab coordinates act on the falling
-- cloud where it is: a moved wave and an unmoved copy of the same cloud
-- centred at the lab origin lose the same probability (translation
-- invariance, common practice), and the lens and grating act as their
-- definitions say at lab positions.
do
  local g = pf.grid{points = 512, span = 60e-6}
  local sigma, t, a = 2e-6, 3e-3, -9.80665
  local function fallen() local w = packet(g, 0, 0, sigma); w:fly(t, {acceleration = a}); return w end
  local function still() local w = packet(g, 0, 0, sigma); w:fly(t); return w end
  local X = fallen():frame().position[1]
  local V = fallen():frame().velocity[1]
  local _, r1 = fallen():slit{width = 3e-6, center = X + 1e-6}
  local _, r0 = still():slit{width = 3e-6, center = 1e-6}
  check.near(r1, r0, 1e-9, "slit at a lab position on the falling cloud", "translation invariance (common practice)")
  local _, r2 = fallen():slits{count = 2, width = 1e-6, pitch = 4e-6, center = X}
  local _, r3 = still():slits{count = 2, width = 1e-6, pitch = 4e-6, center = 0}
  check.near(r2, r3, 1e-9, "double slit at a lab position", "translation invariance (common practice)")
  local _, r4 = fallen():select_velocity{width = 1e-3, center = V + 2e-4}
  local _, r5 = still():select_velocity{width = 1e-3, center = 2e-4}
  check.near(r4, r5, 1e-9, "velocity selection at a lab velocity", "Galilean invariance (common practice)")
  local _, r6 = fallen():mask_grating{period = 1.3e-6, open_fraction = 0.4, offset = X + 0.2e-6}
  local _, r7 = still():mask_grating{period = 1.3e-6, open_fraction = 0.4, offset = 0.2e-6}
  check.near(r6, r7, 1e-6, "mask grating at a lab offset", "translation invariance (common practice)")
  -- 2D aperture
  local g2 = pf.grid{points = {64, 64}, span = {40e-6, 40e-6}}
  local function fallen2()
    local w = pf.gaussian(g2, {mass = m, width = 3e-6}); w:fly(t, {acceleration = {0, a}}); return w
  end
  local w2 = fallen2()
  local Y = w2:frame().position[2]
  local _, r8 = w2:aperture{shape = "circle", radius = 4e-6, center = {1e-6, Y}}
  local s2 = pf.gaussian(g2, {mass = m, width = 3e-6}); s2:fly(t)
  local _, r9 = s2:aperture{shape = "circle", radius = 4e-6, center = {1e-6, 0}}
  check.near(r8, r9, 1e-9, "circular aperture at a lab position", "translation invariance (common practice)")
  -- lens at lab position c: a classical particle at x leaves with velocity
  -- -(x - c)/f (thin lens; common practice), so <v> changes by -(<x> - c)/f
  local wl = fallen()
  local v0, x0 = wl:velocity_mean(), wl:position_mean()
  local c, f = X + 5e-6, 2e-3
  wl:lens(f, {center = c})
  check.near(wl:velocity_mean() - v0, -(x0 - c) / f, 1e-9, "lens at a lab centre kicks by -(<x> - c)/f",
    "thin lens (common practice)")
  check.near(wl:position_mean(), x0, 1e-12, "the lens leaves positions", "thin lens (common practice)")
  -- grating: psi_lab gains exp(i depth cos(2 pi x / period + phase)) at lab x
  local wg = fallen()
  local i = 260
  local z0, x = wg:psi(i), wg:x_axis(1)[i]
  local depth, period, ph = 0.7, 1.7e-6, 0.3
  wg:grating{depth = depth, period = period, phase = ph}
  local want = z0 * pf.cexp(pf.complex(0, depth * math.cos(2 * math.pi * x / period + ph)))
  check.close((wg:psi(i) - want):abs() / z0:abs(), 0, 1e-9, "grating phase at the lab position",
    "definition of a thin phase grating (common practice)")
end

-- 9. The grid advisor under gravity: the proposals are co-moving grids (the
-- same as without gravity), and the frame table tells the drop and what one
-- fixed lab grid would need (the 25 ms, 3D 87Rb drop the frame was made for).
do
  local sx = 2e-6
  local req = {mass = m, time = 25e-3, width = {sx, sx, sx}}
  local plain = pf.grid_advice(req)
  req.acceleration = {0, 0, -pf.constants.g_n}
  local adv = pf.grid_advice(req)
  for a = 1, 3 do
    check.equal(adv.scaled.input.points[a], plain.scaled.input.points[a], "co-moving proposal unchanged on axis " .. a)
  end
  local t = 25e-3
  check.near(adv.frame.drop[3], -0.5 * pf.constants.g_n * t * t, 1e-14, "advice: drop g t^2/2", "kinematics (common practice)")
  check.near(adv.frame.velocity[3], -pf.constants.g_n * t, 1e-14, "advice: velocity g t", "kinematics (common practice)")
  local dx = adv.same_grid.spacing[3]
  check.equal(adv.frame.lab_grid_points[3], math.ceil((adv.same_grid.span[3] + 0.5 * pf.constants.g_n * t * t) / dx),
    "advice: lab grid holds cloud and drop at the same spacing")
  check.equal(adv.frame.lab_grid_wraps[3], true, "advice: m g t / hbar passes that grid's Nyquist limit")
  check.equal(adv.frame.lab_grid_wraps[1], false, "advice: no wrap across gravity")
  print(string.format("note a fixed lab grid for this drop: %d x %d x %d points, %.3g GB",
    adv.frame.lab_grid_points[1], adv.frame.lab_grid_points[2], adv.frame.lab_grid_points[3], adv.frame.lab_grid_memory / 1e9))
end

-- Cameras image the lab: a uniform force translates the density by a t^2 / 2
-- and changes nothing else (Newton / Ehrenfest, exact for a uniform force;
-- common practice), so the falling cloud seen by a camera moved down by
-- a t^2 / 2 equals the freely flown cloud seen by the camera left in place.
do
  local gc = pf.grid{points = {64, 64}, span = {64e-6, 64e-6}}
  local a, t = -9.80665, 3e-3
  local drop = 0.5 * a * t * t
  local falling = pf.gaussian(gc, {mass = m, width = {3e-6, 2e-6}})
  local free = falling:copy()
  falling:fly(t, {acceleration = {0, a}})
  free:fly(t)
  check.truthy(falling:frame().moved, "the falling cloud's frame moved")
  local corner = {-30.25e-6, -30.25e-6}
  local spec = {pixels = {24, 24}, pitch = 2.5e-6, psf = 1e-6}
  spec.corner = corner
  local still = pf.camera(spec)
  spec.corner = {corner[1], corner[2] + drop}
  local lowered = pf.camera(spec)
  local seen, want = lowered:expose(falling, {noise = false}), still:expose(free, {noise = false})
  local worst, peak = 0, 0
  for i = 1, #want.expected do
    worst = math.max(worst, math.abs(seen.expected[i] - want.expected[i]))
    peak = math.max(peak, want.expected[i])
  end
  check.close(worst / peak, 0, 1e-10, "camera image of the falling cloud = free image moved by a t^2/2",
    "uniform force translates the density (Newton; common practice)")
  check.near(seen.axes[2][1], corner[2] + drop + 1.25e-6, 1e-12, "camera axes are lab positions", "definition")
  local od = lowered:absorb(falling, {atoms = 1e4, cross_section = 1e-13})
  check.near(od.atoms_recovered, 1e4, 1e-6, "absorption image of the falling cloud recovers the atoms",
    "Beer-Lambert sum rule")
end

-- Distributions, profiles, slices, radial profiles and Born events of a
-- falling cloud are those of the free cloud moved by a t^2 / 2 (uniform force
-- translates the density; Newton, common practice).  The same seed draws the
-- same events, each moved by the drop.
do
  local gd = pf.grid{points = {64, 48}, span = {64e-6, 48e-6}}
  local a, t = -9.80665, 2e-3
  local drop = 0.5 * a * t * t
  local falling = pf.gaussian(gd, {mass = m, width = {3e-6, 2e-6}})
  local free = falling:copy()
  falling:fly(t, {acceleration = {0, a}})
  free:fly(t)
  local pf_, pr = falling:profile(2), free:profile(2)
  local worst = 0
  for i = 1, #pr.values do worst = math.max(worst, math.abs(pf_.values[i] - pr.values[i]) / pr.values[(#pr.values + 1) // 2]) end
  check.close(worst, 0, 1e-10, "profile of the falling cloud = free profile", "uniform force translates the density (common practice)")
  check.near(pf_.axes[1][1], pr.axes[1][1] + drop, 1e-12, "profile axis is lab height (free axis + a t^2/2)", "kinematics (common practice)")
  local d1, d0 = falling:distribution(), free:distribution()
  check.near(d1.axes[2][1], d0.axes[2][1] + drop, 1e-12, "distribution axes are lab positions", "kinematics (common practice)")
  local k1, k0 = falling:distribution{space = "momentum"}, free:distribution{space = "momentum"}
  check.near(k1.axes[2][1], k0.axes[2][1] + m * a * t / hbar, 1e-12, "momentum axes are lab wave numbers (+ m a t / hbar)",
    "Newton (common practice)")
  local e1, e0 = falling:sample(500, {seed = 11}), free:sample(500, {seed = 11})
  local dev = 0
  for i = 1, 500 do dev = math.max(dev, math.abs(e1[2][i] - e0[2][i] - drop), math.abs(e1[1][i] - e0[1][i])) end
  check.close(dev, 0, 1e-15, "Born events of the falling cloud = free events moved by the drop (m)", "kinematics (common practice)")
  local r1 = falling:radial_profile{center = {0, drop}, bin = 2e-6, bins = 8}
  local r0 = free:radial_profile{center = {0, 0}, bin = 2e-6, bins = 8}
  check.near(r1.values[2], r0.values[2], 1e-10, "radial profile about the lab centre", "uniform force translates the density (common practice)")
  local s1 = falling:slice{axes = {1}, through = {0, drop}}
  local s0 = free:slice{axes = {1}, through = {0, 0}}
  check.near(s1.values[33], s0.values[33], 1e-10, "slice through the lab centre", "uniform force translates the density (common practice)")
  local f1, f0 = falling:fringes{axis = 2, period = 5e-6}, free:fringes{axis = 2, period = 5e-6}
  check.equal(f1.points, f0.points, "fringes fit the whole lab profile by default (points)")
  check.near(f1.period, f0.period, 1e-9, "fringe fit of the falling cloud = free fit (period)", "uniform force translates the density (common practice)")
  local ens = pf.mixture({free:copy(), free:copy()}, {0.5, 0.5})
  check.truthy(ens:profile(2).values[1] ~= nil, "ensembles of grid-frame waves still give profiles")
  ens:fly(1e-4, {acceleration = {0, a}})
  local single = free:copy():fly(1e-4, {acceleration = {0, a}})
  check.near(ens:profile(2).axes[1][1], single:profile(2).axes[1][1], 1e-15,
    "an ensemble flown together shares one frame: lab axes", "uniform force translates the density (common practice)")
  local mixed = pf.mixture({single, free:copy()}, {0.5, 0.5})
  check.fails(function() return mixed:profile(2) end, "an ensemble with members in different frames is refused",
    "member 2 of the ensemble sits in another frame than member 1")
end

-- w:flux and w:beyond at lab planes on a falling cloud: the flux against the
-- exact J(L, t) above (exact_flux), and the probability below a plane against
-- the Gaussian's normal tail (erfc; Gaussian CDF, common practice).
do
  local g = pf.grid{points = 512, span = 60e-6}
  local sigma, a, t = 1e-6, -9.80665, 8e-3
  local w = packet(g, 0, 0, sigma)
  w:fly(t, {acceleration = a})
  local c = 0.5 * a * t * t
  local tau = 2 * m * sigma * sigma / hbar
  local s = sigma * math.sqrt(1 + (t / tau) ^ 2)
  for _, L in ipairs{c - s, c, c + 0.5 * s} do
    local want = exact_flux(L, t, 0, 0, sigma, a)
    check.near(w:flux{at = L}, want, 1e-9, string.format("w:flux at the lab plane c%+.1fs", (L - c) / s),
      "spreading Gaussian's current (Holland ch. 4, from memory) + uniform force")
  end
  local L = c + 0.5 * s
  -- beyond = probability between the plane and the grid's far (upper) edge
  -- erfc(x) = 2/sqrt(pi) * integral_x^inf exp(-u^2) du (definition), by the
  -- trapezoid rule over [x, x + 12] (the rest is below 1e-60).
  local function erfc(x)
    local n = 20000
    local h, sum = 12 / n, 0
    for i = 0, n do
      local u = x + i * h
      local wgt = (i == 0 or i == n) and 0.5 or 1
      sum = sum + wgt * math.exp(-u * u)
    end
    return 2 / math.sqrt(math.pi) * sum * h
  end
  check.near(w:beyond{at = L}, 0.5 * erfc(0.5 / math.sqrt(2)), 1e-7, "w:beyond at a lab plane = Gaussian upper tail",
    "Gaussian CDF via erfc (definition; trapezoid rule)")
  check.fails(function() return w:flux{at = 0} end, "a lab plane outside the co-moving grid is refused in lab numbers",
    "outside the cloud's co-moving grid")
end

-- 10. w:grid_advice on a moved wave advises the co-moving grid: the extents
-- are those of the grid's function chi (centred where the frame is, 0 in grid
-- coordinates; its lab centre is origin + frame position), the proposals equal
-- those for the same chi flown without gravity (internal: Avron-Herbst, chi
-- flies freely), and the frame table places the grid in the lab now and after
-- the planned flight.  References: the free width law (from memory) and the
-- two-sided Gaussian tail P(|Z| > z) = eps (erf series, common practice) for
-- the extents; Newton for the frame's travel (common practice).
do
  local sigma, t, T = 1e-6, 1e-3, 4e-3
  pf.setup{guard_threshold = 1e-2}
  local g = pf.grid{points = 512, span = 80e-6}
  local w = packet(g, 0, 0, sigma):fly(t, {acceleration = -9.80665})
  local u = packet(g, 0, 0, sigma):fly(t)
  local adv = w:grid_advice{time = T, acceleration = -9.80665}
  local plain = u:grid_advice{time = T}
  pf.setup{guard_threshold = 1e-6}
  check.equal(adv.same_grid.points[1], plain.same_grid.points[1], "moved wave: same-grid points as for chi at rest")
  check.equal(adv.same_grid.origin[1], plain.same_grid.origin[1], "moved wave: same-grid origin is co-moving")
  check.equal(adv.scaled.output.spacing[1], plain.scaled.output.spacing[1], "moved wave: scaled proposal as for chi at rest")
  local function erf(z)
    local sum, term, n = 0, z, 0
    while math.abs(term) > 1e-17 do
      sum = sum + term / (2 * n + 1)
      n = n + 1
      term = -term * z * z / n
    end
    return 2 / math.sqrt(math.pi) * sum
  end
  local lo, hi = 0, 10
  for _ = 1, 100 do
    local mid = 0.5 * (lo + hi)
    if 1 - erf(mid / math.sqrt(2)) > 1e-2 then lo = mid else hi = mid end
  end
  local s = sigma * math.sqrt(1 + (hbar * t / (2 * m * sigma * sigma)) ^ 2)
  local dx = g:spacing(1)
  check.close(adv.extent_hi[1], hi * s, 1.01 * dx, "moved wave: extent of chi (grid coordinates) vs the Gaussian tail",
    "free width law, P(|Z| > z) = 1e-2 (common practice)")
  check.close(adv.extent_lo[1], -hi * s, 1.01 * dx, "moved wave: lower extent of chi", "same")
  local gn = 9.80665
  check.near(adv.frame.position[1], -0.5 * gn * t * t, 1e-14, "advice: frame position now = -g t^2/2",
    "Newton (common practice)")
  check.near(adv.frame.final_position[1], -0.5 * gn * (t + T) ^ 2, 1e-15, "advice: frame position after the flight",
    "Newton (common practice)")
  check.near(adv.frame.final_wavenumber[1], -m * gn * (t + T) / hbar, 1e-6, "advice: final wave-number offset m a t / hbar",
    "Newton (common practice)")
  check.near(adv.frame.lab_grid_span[1], adv.same_grid.span[1] + 0.5 * gn * ((t + T) ^ 2 - t * t), 1e-15,
    "advice: a fixed lab grid spans the cloud and its lab travel", "Newton (common practice)")
  local still = w:grid_advice{time = T, acceleration = false}
  check.near(still.frame.final_position[1], -0.5 * gn * t * t - gn * t * T, 1e-15,
    "advice without acceleration: the frame keeps its velocity", "Newton (common practice)")
end

-- 11. A mask region given as a function is sampled at lab positions for a
-- moved wave.  The probability weighted by a Gaussian mask exp(-(x-c)^2 /
-- 2 r^2) of a Gaussian density N(mu, s^2) is r / sqrt(r^2 + s^2)
-- exp(-(mu - c)^2 / 2 (r^2 + s^2)) (Gaussian integral, common practice); the
-- same masked protocol (measure, then fall on) on one big lab grid (internal).
do
  local sigma, t, t2 = 1e-6, 1e-3, 0.5e-3
  local gn = 9.80665
  local g = pf.grid{points = 512, span = 32e-6}
  local w = packet(g, 0, 0, sigma):fly(t, {acceleration = -gn})
  local mu = -0.5 * gn * t * t
  local s2 = sigma ^ 2 + (hbar * t / (2 * m * sigma)) ^ 2
  local c, r = mu + 1.5e-6, 2e-6
  local calls = 0
  local mask = pf.mask(function(x) calls = calls + 1; return math.exp(-(x - c) ^ 2 / (2 * r * r)) end)
  local want = r / math.sqrt(r * r + s2) * math.exp(-(mu - c) ^ 2 / (2 * (r * r + s2)))
  check.near(w:probability_in(mask), want, 1e-12, "mask function at lab positions: Gaussian-weighted probability",
    "Gaussian integral (common practice)")
  check.equal(calls, 512, "the mask function is sampled once per grid point")
  check.near(w:probability_in(mask), want, 1e-12, "the sampled mask is reused for the same frame position", "same")
  check.equal(calls, 512, "no new samples while the frame stays put")
  -- Internal: the same protocol on one big lab grid that holds the drop.
  pf.setup{guard_threshold = math.huge}
  local big = pf.grid{points = 1024, span = 64e-6}
  local b = packet(big, 0, 0, sigma)
  b:fall(t, -gn)
  local hit_w, p_w = w:measure_region(mask, {outcome = true})
  local hit_b, p_b = b:measure_region(mask, {outcome = true})
  check.near(p_w, p_b, 1e-12, "masked outcome probability equals the big lab grid's", "internal: same protocol on a lab grid")
  check.equal(hit_w and hit_b, true, "forced outcomes")
  w:fly(t2, {acceleration = -gn})
  b:fall(t2, -gn)
  pf.setup{guard_threshold = 1e-6}
  local xs = w:x_axis(1)
  local ref = b:psi_at(xs)
  local worst, peak = 0, 0
  for i = 1, #xs do
    worst = math.max(worst, (w:psi(i) - ref[i]):abs())
    peak = math.max(peak, ref[i]:abs())
  end
  print(string.format("note masked protocol frame vs big lab grid: %.3e of peak", worst / peak))
  check.close(worst / peak, 0, 1e-11, "masked and fallen wave equals the big lab grid's (max |diff| / peak)",
    "internal: same protocol on a lab grid")
end

-- 12. Pictures of a moved wave are drawn on lab axes.  picture_lines takes
-- arrays: a falling cloud's w:x_axis(1) and w:density() are lab positions and
-- the values there, so the plotted curve's centre is the lab centre -g t^2/2
-- (Newton; common practice).  picture_carpet draws one lab window holding
-- every time's co-moving grid (tests/ref/test_picture_pixels.sh reads the
-- parabola from the pixels; tests/unit/flight/test_frame.c checks the placed values
-- against the closed-form falling Gaussian); a drop far longer than the grid
-- asks for an x_range (lab coordinates), which then draws.
do
  local gn, t = 9.80665, 1e-3
  local g = pf.grid{points = 256, span = 24e-6}
  local w = packet(g, 0, 0, 1e-6):fly(t, {acceleration = -gn})
  local xs, rho = w:x_axis(1), w:density()
  local num, den = 0, 0
  for i = 1, #xs do num, den = num + xs[i] * rho[i], den + rho[i] end
  check.close(num / den, -0.5 * gn * t * t, 1e-12, "picture_lines data of a moved wave: lab centre", "Newton (common practice)")
  check.truthy(pf.picture_lines("falling-lines.png", {x_name = "x", x_quantity = "length",
    series = {{x = xs, y = rho, label = "falling cloud"}}}) ~= nil, "picture_lines draws the lab profile")
  check.truthy(pf.picture_carpet("falling-carpet.png", w, {duration = 1e-3, frames = 8, acceleration = -gn}) ~= nil,
    "picture_carpet draws a moved wave falling on")
  -- A cloud launched at 100 m/s (the velocity in the frame) crosses 0.2 m in
  -- 2 ms: two million columns at this spacing.
  local v = 100
  local fast = packet(g, 0, 0, 1e-6):kick(m * v / hbar, {frame = true})
  check.fails(function() pf.picture_carpet("too-far.png", fast, {duration = 2e-3, frames = 4}) end,
    "a launch across 0.2 m on a 24 um grid asks for x_range", here, "give x_range")
  check.truthy(pf.picture_carpet("far-window.png", fast, {duration = 2e-3, frames = 4,
    x_range = {v * 2e-3 - 20e-6, v * 2e-3 + 20e-6}}) ~= nil, "x_range (lab) draws the end of a long launch")
end

check.done()
