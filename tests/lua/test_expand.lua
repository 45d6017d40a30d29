-- test_expand.lua - w:expand through the runner: the free Gaussian width law
-- in the ballistic frame, a Thomas-Fermi release against the Castin-Dum
-- scaling law, the grid growing with the cloud, continuation, handover, the
-- release frequency from the state, and refused input.
local pf = require "psiflight"
local check = require "check"
pf.setup{planning = "estimate"}
local C = pf.constants
local hbar, pi = C.hbar, math.pi
local m = pf.species("87Rb").mass

-- 1D harmonic ground state released with g = 0: the exact width law
-- sigma(t) = sigma0 sqrt(1 + omega^2 t^2) of a freely spreading
-- minimum-uncertainty Gaussian (textbook).
do
  local omega = 2 * pi * 200
  local aho = math.sqrt(hbar / (m * omega))
  local g = pf.grid{points = 128, span = 20 * aho}
  local w = pf.ground_state(g, {mass = "87Rb", omega = omega})
  local s0 = w:position_width()
  local t = 20e-3
  local _, info = w:expand(t, {omega = omega, scaling = "ballistic", order = 4})
  check.near(w:position_width(), s0 * math.sqrt(1 + (omega * t) ^ 2), 1e-6,
             "ballistic: width = sigma0 sqrt(1 + omega^2 t^2)", "free Gaussian spreading; textbook")
  -- After the handover the frame grows linearly, within 0.5 % of the law.
  check.near(info.lambda[1], math.sqrt(1 + (omega * t) ^ 2), 0.005, "ballistic lambda(t), linear after the handover",
             "free Gaussian spreading; textbook")
  check.near(w:grid():spacing(1), g:spacing(1) * info.lambda[1], 1e-12, "the grid spacing grows by lambda",
             "pf_expand.h contract")
  check.near(w:clock(), t, 1e-15, "the clock advanced by t", "pf_expand.h contract")
  check.near(w:norm(), 1, 1e-12, "norm kept", "unitary evolution; common practice")
  local log = w:log()
  check.equal(log[#log].kind, "expand", "the step log records the expansion")
  check.equal(log[#log].method, "ballistic+free", "g = 0: the free step took over")
end

-- 2D Thomas-Fermi cloud (mu = 12 hbar omega_x), 87Rb released from
-- (150, 60) Hz: the rms widths follow lambda_j(t) of the Castin-Dum law
-- lambda_j'' = omega_j^2 / (lambda_j lambda_1 lambda_2) (Castin and Dum,
-- PRL 77, 5315 (1996)), integrated here with a plain Runge-Kutta of our own
-- in Lua.  In the Thomas-Fermi limit the shape only rescales, so
-- sigma_j(t) / sigma_j(0) = lambda_j(t); the quantum pressure left at 12 hbar
-- omega_x makes this good to a few 1e-3 only (measured 3.5e-3 on x at 12 ms;
-- tests/ref/test_expand_scipy.sh shows the gap closing as mu grows).
local function castin_dum(omega, t, n)
  local d = #omega
  local lam, v = {}, {}
  for a = 1, d do lam[a], v[a] = 1, 0 end
  local function acc(l)
    local big = 1
    for a = 1, d do big = big * l[a] end
    local r = {}
    for a = 1, d do r[a] = omega[a] ^ 2 / (l[a] * big) end
    return r
  end
  local h = t / n
  for _ = 1, n do
    local k1l, k1v = v, acc(lam)
    local l2, v2 = {}, {}
    for a = 1, d do l2[a], v2[a] = lam[a] + h / 2 * k1l[a], v[a] + h / 2 * k1v[a] end
    local k2l, k2v = v2, acc(l2)
    local l3, v3 = {}, {}
    for a = 1, d do l3[a], v3[a] = lam[a] + h / 2 * k2l[a], v[a] + h / 2 * k2v[a] end
    local k3l, k3v = v3, acc(l3)
    local l4, v4 = {}, {}
    for a = 1, d do l4[a], v4[a] = lam[a] + h * k3l[a], v[a] + h * k3v[a] end
    local k4l, k4v = v4, acc(l4)
    for a = 1, d do
      lam[a] = lam[a] + h / 6 * (k1l[a] + 2 * k2l[a] + 2 * k3l[a] + k4l[a])
      v[a] = v[a] + h / 6 * (k1v[a] + 2 * k2v[a] + 2 * k3v[a] + k4v[a])
    end
  end
  return lam
end

local omega = {2 * pi * 150, 2 * pi * 60}
-- 2D Thomas-Fermi: mu = sqrt(g m omega_x omega_y / pi) (inverted paraboloid; textbook).
local mu = 12 * hbar * omega[1]
local gN = pi * mu ^ 2 / (m * omega[1] * omega[2])
local R = {math.sqrt(2 * mu / (m * omega[1] ^ 2)), math.sqrt(2 * mu / (m * omega[2] ^ 2))}
local g = pf.grid{points = {64, 64}, span = {2.8 * R[1], 2.8 * R[2]}}
local cloud = pf.thomas_fermi(g, {mass = "87Rb", radius = R})
local V = pf.potential(g, function(x, y) return 0.5 * m * (omega[1] ^ 2 * x * x + omega[2] ^ 2 * y * y) end)
cloud:relax{potential = V, g = gN, tolerance = 1e-10}
local sx0, sy0 = cloud:position_width()
local t = 12e-3
local w = cloud:copy()
local _, info = w:expand(t, {g = gN, omega = omega, handover = 0})
local lam = castin_dum(omega, t, 4000)
check.near(info.lambda[1], lam[1], 1e-7, "engine lambda_x = Castin-Dum law", "Castin & Dum, PRL 77, 5315 (1996)")
check.near(info.lambda[2], lam[2], 1e-7, "engine lambda_y = Castin-Dum law", "Castin & Dum, PRL 77, 5315 (1996)")
local sx, sy = w:position_width()
check.near(sx / sx0, lam[1], 6e-3, "TF release: sigma_x(t)/sigma_x(0) = lambda_x", "Castin & Dum, PRL 77, 5315 (1996)")
check.near(sy / sy0, lam[2], 6e-3, "TF release: sigma_y(t)/sigma_y(0) = lambda_y", "Castin & Dum, PRL 77, 5315 (1996)")
check.near((sx / sy) / (sx0 / sy0), lam[1] / lam[2], 6e-3, "aspect ratio follows lambda_x / lambda_y",
           "Castin & Dum, PRL 77, 5315 (1996)")
check.truthy(sx / sy > 1 and sx0 / sy0 < 1, "the aspect ratio inverts (the tight axis expands faster)")
check.equal(info.scaling, "castin-dum", "castin-dum is the default scaling")
check.equal(info.handed_over, false, "handover = 0 keeps the mean field to the end")

-- The same release given as frequency (Hz) is the same run.
local wf = cloud:copy()
local _, infof = wf:expand(t, {g = gN, frequency = {150, 60}, handover = 0})
check.near(infof.lambda[1], info.lambda[1], 1e-14, "frequency = omega / 2 pi gives the same frame", "pf_expand contract")
check.near(wf:position_width(), sx, 1e-14, "... and the same cloud", "determinism; common practice")

-- Two calls continue one frame (no second chirp on the coarse grid).
local w2 = cloud:copy()
w2:expand(t / 2, {g = gN, omega = omega, handover = 0, steps = 150})
local _, info2 = w2:expand(t / 2, {g = gN, omega = omega, handover = 0, steps = 150})
local w3 = cloud:copy()
w3:expand(t, {g = gN, omega = omega, handover = 0, steps = 300})
check.truthy(info2.continued, "the second expand continued the first one's frame")
check.near(w2:position_width(), w3:position_width(), 1e-9, "t/2 + t/2 = t", "exactness of the frame map; pf_expand.h")

-- Release frequency from the state (virial relation, pf_expand.h): for a
-- Thomas-Fermi cloud it is the trap frequency up to the kinetic share.
local _, info0 = cloud:copy():expand(0, {g = gN})
check.near(info0.omega[1], omega[1], 0.02, "virial release omega_x of the relaxed cloud", "TF virial theorem; common practice")
check.near(info0.omega[2], omega[2], 0.02, "virial release omega_y of the relaxed cloud", "TF virial theorem; common practice")

-- Default handover (1e-3 of the energy) after a long expansion: the widths
-- move by less than the bound handover / 2.
local wl, wh = cloud:copy(), cloud:copy()
wl:expand(40e-3, {g = gN, omega = omega, handover = 0})
local _, infoh = wh:expand(40e-3, {g = gN, omega = omega, handover = 0.01})
check.truthy(infoh.handed_over and infoh.handover_time < 40e-3, "handover = 0.01 hands over before 40 ms")
check.near(wh:position_width(), wl:position_width(), 0.005, "handover changes the width by < handover / 2",
           "energy bound, pf_expand.h")

-- Gravity through the wave's frame: the mean field depends on |psi|^2 only,
-- so the Avron-Herbst factorisation (J. E. Avron and I. W. Herbst, Commun.
-- Math. Phys. 52, 239 (1977)) carries over: the cloud falls by g t^2 / 2 and
-- gains -g t in velocity, and its shape is the free expansion's.
do
  local gravity = {0, -9.80665}
  local wg = cloud:copy()
  wg:expand(t / 2, {g = gN, omega = omega, handover = 0, steps = 150, acceleration = gravity})
  wg:expand(t / 2, {g = gN, omega = omega, handover = 0, steps = 150, acceleration = gravity})
  local _, my = wg:position_mean()
  check.near(my, -0.5 * 9.80665 * t * t, 1e-9, "falling cloud: centre at -g t^2 / 2", "uniform acceleration; textbook")
  -- The velocity from the frame: a transform of the expanded lab state would
  -- alias its chirp (docs/expansion.md), so velocity_mean is not the probe.
  check.near(wg:frame().velocity[2], -9.80665 * t, 1e-12, "falling cloud: frame velocity -g t",
             "uniform acceleration; textbook")
  check.near(wg:position_width(), w3:position_width(), 1e-12, "falling cloud: the same shape as without gravity",
             "Avron & Herbst, CMP 52, 239 (1977)")
  -- The per-script default from pf.setup applies unless the call says otherwise.
  pf.setup{acceleration = gravity}
  local wd = cloud:copy()
  wd:expand(t, {g = gN, omega = omega, handover = 0, steps = 300})
  local _, md = wd:position_mean()
  check.near(md, -0.5 * 9.80665 * t * t, 1e-9, "pf.setup acceleration default applies to expand", "uniform acceleration; textbook")
  local wn = cloud:copy()
  wn:expand(t, {g = gN, omega = omega, handover = 0, steps = 300, acceleration = false})
  local _, mn = wn:position_mean()
  check.close(mn, 0, 1e-12, "acceleration = false overrides the default", "pfl_frame contract")
  pf.setup{acceleration = false}
end

-- Refused input, with the script line and the bad value.
check.fails(function() cloud:copy():expand(1e-3, {g = gN, omega = omega, scaling = "linear"}) end,
            "unknown scaling refused", "scaling", "linear")
check.fails(function() cloud:copy():expand(1e-3, {g = gN, omega = omega, frequency = {1, 1}}) end,
            "omega and frequency together refused", "not both")
check.fails(function() cloud:copy():expand(-1e-3, {g = gN}) end, "negative time refused", "negative")
check.fails(function() cloud:copy():expand(1e-3, {g = gN, handover = 1}) end, "handover 1 refused", "handover")
check.fails(function() cloud:copy():expand(1e-3, {g = gN, omegas = omega}) end, "unknown key refused with a suggestion",
            "omegas", "omega")
check.fails(function() cloud:copy():expand(1e-3, {g = gN, steps = 0}) end, "steps = 0 refused", "steps")
check.fails(function() cloud:copy():expand(1e-3, {g = gN, order = 3}) end, "order 3 refused", "order")
