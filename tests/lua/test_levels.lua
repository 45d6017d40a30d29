-- test_levels.lua - pf.levels through the runner: pulses between levels
-- against the Rabi formula (with level energies and the laser frequency),
-- the two-photon light shift, a light-pulse Mach-Zehnder interferometer
-- against k_eff a T^2, Stern-Gerlach separation against the classical
-- trajectories, Bragg orders, and the errors on bad input.
local pf = require "psiflight"
local check = require "check"
pf.setup{planning = "estimate", guard_threshold = math.huge}
local C = pf.constants
local hbar, pi = C.hbar, math.pi

local g = pf.grid{points = 1024, span = 200e-6}
local dk = g:kspacing()
local psi0 = pf.gaussian(g, {mass = "87Rb", width = 5e-6})

-- Rabi formula P = (Omega/W)^2 sin^2(W t/2), W^2 = Omega^2 + delta^2 (I. I. Rabi,
-- Phys. Rev. 51, 652 (1937)), delta = omega - (E2 - E1)/hbar from the level
-- energies and the (microwave) frequency.
local function rabi(omega, delta, t)
  local W = math.sqrt(omega^2 + delta^2)
  return (omega / W)^2 * math.sin(W * t / 2)^2
end
local w0 = 2 * pi * 6.834682610904e9 -- an invented hyperfine-like splitting (rad/s)
for _, case in ipairs{{0, 30e-6}, {2 * pi * 7e3, 45e-6}, {-2 * pi * 21e3, 80e-6}} do
  local lv = pf.levels{labels = {"lower", "upper"}, energies = {0, hbar * w0}, waves = {lower = psi0}}
  local om = 2 * pi * 10e3
  lv:pulse{from = "lower", to = "upper", rabi = om, duration = case[2], omega = w0 + case[1]}
  local pop = lv:populations()
  -- delta is a difference of two numbers near 4e10 rad/s: rounding leaves it
  -- uncertain by about 1e-5 rad/s, hence 1e-9 rather than 1e-12 here.
  check.near(pop.upper, rabi(om, case[1], case[2]), 1e-9, "microwave pulse, delta " .. case[1],
             "Rabi formula, Phys. Rev. 51, 652 (1937)", 1e-15)
  check.near(pop.lower + pop.upper, 1, 1e-12, "populations add up to 1", "unitarity (common practice)")
  check.near(lv:clock(), case[2], 1e-15, "clock advanced by the pulse", "definition")
end

-- Two-photon Raman from the beams: Omega_eff = O1 O2 / (2 Delta), light
-- shifts O1^2/(4 Delta) (first level), O2^2/(4 Delta) (second), so the
-- resonance moves by (O2^2 - O1^2) / (4 Delta) (adiabatic elimination;
-- K. Moler, D. S. Weiss, M. Kasevich, S. Chu, Phys. Rev. A 45, 342 (1992);
-- the expressions written from memory).
do
  local O1, O2, D = 2 * pi * 40e6, 2 * pi * 25e6, -2 * pi * 1.5e9
  local eff = O1 * O2 / (2 * math.abs(D))
  local shift = (O2^2 - O1^2) / (4 * D)
  local t = 0.6 * pi / eff
  local lv = pf.levels{labels = {"F1", "F2"}, waves = {F1 = psi0}}
  lv:pulse{from = "F1", to = "F2", beam_rabi = {O1, O2}, one_photon_detuning = D, duration = t, detuning = 0}
  check.near(lv:populations().F2, rabi(eff, -shift, t), 1e-12, "Raman pulse with its own light shift",
             "adiabatic elimination, Moler et al. PRA 45, 342 (1992), from memory")
end

-- Light-pulse Mach-Zehnder pi/2 - T - pi - T - pi/2 under a uniform
-- acceleration a, with a scanned last laser phase phi3: the exit port
-- population is (1 - cos(K a T^2 + phi3)) / 2 (M. Kasevich and S. Chu, Phys.
-- Rev. Lett. 67, 181 (1991)).  The pulses are short (finite-pulse corrections
-- of order K a T tau, below the tolerance); the phase comes from the flight.
do
  local K = 64 * dk
  local a, T = 0.1, 5e-3
  local tau = 50e-9
  local om = pi / (2 * tau)
  local wr = hbar * K^2 / (2 * pf.mass("87Rb"))
  local Phi = K * a * T^2
  for _, phi3 in ipairs{0, pi / 2, 2.0} do
    local lv = pf.levels{labels = {"a", "b"}, waves = {a = psi0}}
    local function pulse(area, phase)
      lv:pulse{from = "a", to = "b", rabi = om, duration = area / om, wavenumber = K, detuning = wr, phase = phase}
    end
    pulse(pi / 2, 0)
    lv:fly(T, {acceleration = a})
    pulse(pi, 0)
    lv:fly(T, {acceleration = a})
    pulse(pi / 2, phi3)
    local pb = lv:populations().b
    check.close(pb, (1 - math.cos(Phi + phi3)) / 2, 2e-3, string.format("Mach-Zehnder exit port, phi3 = %.2f", phi3),
                "Kasevich & Chu PRL 67, 181 (1991): phase K a T^2")
  end
end

-- Finite pulses with gravity acting during them: Rabi pulses of durations
-- tau, 2 tau, tau separated by free flights T (end of one pulse to the start
-- of the next), the acceleration a acting throughout, the laser difference
-- frequency chirped at rate alpha.  The interferometer phase becomes
-- (K a - alpha)(T + 2 tau)(T + 4 tau / pi) (P. Cheinet et al., IEEE Trans.
-- Instrum. Meas. 57, 1141 (2008), sensitivity-function result; expression
-- quoted from memory).  The residual left by the Doppler drift (K a T = 600
-- rad/s against Omega = 7.9e4 rad/s) is about 1e-4 rad at tau = 20 us; the
-- correction itself is 0.04 rad, so the check tells the two formulas apart.
-- The phase is read from four last-pulse phases.
local function finite_pulse_phase(alpha)
  local K = 64 * dk
  local a, T, tau = 0.3, 2e-3, 20e-6
  local om = pi / (2 * tau)
  local wr = hbar * K^2 / (2 * pf.mass("87Rb"))
  local cloud = pf.gaussian(g, {mass = "87Rb", width = 8e-6})
  local function port(phi3)
    local lv = pf.levels{labels = {"a", "b"}, waves = {a = cloud}}
    local function pulse(d, ph)
      lv:pulse{from = "a", to = "b", rabi = om, duration = d, wavenumber = K, detuning = wr, phase = ph,
               chirp = alpha * K * a, acceleration = a, slices = 64}
    end
    pulse(tau, 0); lv:fly(T, {acceleration = a}); pulse(2 * tau, 0); lv:fly(T, {acceleration = a}); pulse(tau, phi3)
    return lv:populations().b
  end
  local c, s = 0, 0
  for j = 0, 3 do
    local ph = j * pi / 2
    local P = port(ph)
    c, s = c + (1 - 2 * P) * math.cos(ph), s + (1 - 2 * P) * math.sin(ph)
  end
  local function wrap(x) return (x + pi) % (2 * pi) - pi end
  local phase = math.atan(-s, c)
  local scale = (1 - alpha) * K * a
  return wrap(phase - scale * (T + 2 * tau) * (T + 4 * tau / pi)), wrap(phase - scale * T^2)
end
for _, alpha in ipairs{0, 0.5} do
  local finite, short = finite_pulse_phase(alpha)
  check.close(finite, 0, 3e-4, "finite-pulse phase (K a - alpha)(T + 2 tau)(T + 4 tau/pi), alpha/Ka = " .. alpha,
              "Cheinet et al., IEEE TIM 57, 1141 (2008), from memory")
  check.truthy(math.abs(short) > 0.015, "differs from the short-pulse (K a - alpha) T^2")
end

-- A pulse between two of three levels: the third flies along, so the
-- clocks stay together.
do
  local lv = pf.levels{labels = {"p", "q", "r"}, waves = {p = psi0}}
  lv:pulse{from = "p", to = "q", area = pi, duration = 10e-6}
  check.near(lv:level("r"):clock(), 10e-6, 1e-15, "third level flew along with the pulse", "definition")
  lv:pulse{from = "q", to = "r", area = pi, duration = 10e-6}
  check.near(lv:populations().r, 1, 1e-12, "two pi pulses carry p to r", "Rabi formula on resonance")
end

-- A wave in a moving frame (docs/frames.md) is refused clearly.
do
  local w = psi0:copy()
  w:fly(1e-4, {acceleration = -9.8})
  check.fails(function() pf.levels{labels = {"a", "b"}, waves = {a = w}} end, "moving frame refused",
              "does not support a wave in a moving frame")
end

-- Levels in a shared moving frame (frame = true): the common acceleration
-- moves the frame, so the grid holds only the cloud.  The same light-pulse
-- Mach-Zehnder as on the lab grid gives the same exit port (to rounding),
-- and with real gravity (beyond what this grid could hold as momentum) the
-- phase K g T^2 (Kasevich & Chu, PRL 67, 181 (1991)); the lab mean of a
-- level follows g t^2 / 2 (Newton).
do
  local K = 64 * dk
  local wr = hbar * K^2 / (2 * pf.mass("87Rb"))
  local function mz(frame, a, T, phi3)
    local lv = pf.levels{labels = {"a", "b"}, waves = {a = psi0}, frame = frame}
    local function pulse(area, phase)
      lv:pulse{from = "a", to = "b", rabi = pi / 100e-9, duration = area / (pi / 100e-9), wavenumber = K,
               detuning = wr, phase = phase}
    end
    pulse(pi / 2, 0); lv:fly(T, {acceleration = a}); pulse(pi, 0); lv:fly(T, {acceleration = a}); pulse(pi / 2, phi3)
    return lv:populations().b
  end
  local lab = mz(false, 0.1, 5e-3, 1.1)
  local moved = mz(true, 0.1, 5e-3, 1.1)
  check.near(moved, lab, 1e-10, "shared frame = lab grid, Mach-Zehnder exit port", "same evolution (Avron-Herbst, docs/frames.md)", 1e-300)
  local g, T = -9.81, 2e-3
  local pb = mz(true, g, T, 0.3)
  check.close(pb, (1 - math.cos(K * g * T^2 + 0.3)) / 2, 2e-3, "frame = true: exit port with g = 9.81 m/s^2",
              "Kasevich & Chu PRL 67, 181 (1991): phase K g T^2")
  local drop = pf.levels{labels = {"a", "b"}, waves = {a = psi0}, frame = true}
  drop:fly(25e-3, {acceleration = g})
  check.near(drop:level("a"):position_mean(), g * 25e-3^2 / 2, 1e-12, "lab mean of a level in the frame",
             "free fall g t^2 / 2 (Newton)", 1e-15)
end

-- lv:evolve with a potential per level: a harmonic trap on one level only.
-- The trapped level, the trap's ground state displaced by x0 and moving at
-- v, is a coherent state: its mean follows x0 cos(w t) + (v / w) sin(w t) and
-- its width stays sqrt(hbar / 2 m w); the untrapped level flies freely, mean
-- x0 + v t, width sqrt(s0^2 + (hbar t / 2 m s0)^2) (harmonic-oscillator
-- coherent states and Gaussian spreading, common practice).  On the grid
-- (v = 0) and in a shared moving frame (v from a kick into the frame; the
-- trap given in lab coordinates).
do
  local m = pf.mass("87Rb")
  local omega, x0, T = 2 * pi * 200, 3e-6, 1.3e-3
  local fine = pf.grid{points = 512, span = 40e-6}
  local s0 = math.sqrt(hbar / (2 * m * omega))
  local function trap(x) return 0.5 * m * omega^2 * x^2 end
  for _, case in ipairs{{false, 0}, {true, 2e-3}} do
    local frame, v = case[1], case[2]
    local gs = pf.ground_state(fine, {mass = "87Rb", omega = omega, center = x0})
    if frame then gs:kick(m * v / hbar, {frame = true}) end
    local lv = pf.levels{labels = {"trapped", "free"}, waves = {trapped = gs, free = gs}, frame = frame}
    local _, info = lv:evolve(T, {potential = {trapped = trap}, dt = 2e-6, order = 4})
    local tag = frame and " (shared frame)" or " (grid)"
    local tr, fr = lv:level("trapped"), lv:level("free")
    check.near(tr:position_mean(), x0 * math.cos(omega * T) + v / omega * math.sin(omega * T), 1e-8,
               "trapped level: coherent-state mean" .. tag, "harmonic oscillator (common practice)", 1e-18)
    check.near(tr:position_width(), s0, 1e-8, "trapped level keeps the ground-state width" .. tag,
               "coherent state (common practice)")
    check.near(fr:position_mean(), x0 + v * T, 1e-12, "untrapped level flies freely" .. tag, "free flight (Newton)", 1e-18)
    check.near(fr:position_width(), math.sqrt(s0^2 + (hbar * T / (2 * m * s0))^2), 1e-10,
               "untrapped level spreads" .. tag, "Gaussian spreading formula")
    check.near(lv:clock(), T, 1e-15, "one clock after lv:evolve" .. tag, "definition")
    check.truthy(info.trapped and info.trapped.steps == 650 and info.free == nil, "evolve info per evolved level" .. tag)
  end
  local lv = pf.levels{labels = {"p", "q"}, grid = fine, mass = "87Rb"}
  check.fails(function() lv:evolve(1e-3, {potential = {r = trap}}) end, "evolve: unknown level", "no level 'r'")
  check.fails(function() lv:evolve(1e-3, {potential = trap, g = 1e-50}) end, "evolve: no mean field", "'g'")
end

-- A cloud moving at v: in a shared frame (the momentum in the frame) and on
-- the grid (the momentum on the grid) a Bragg pulse and a Raman pulse act
-- alike (the Doppler shift K v enters either way), the momentum orders
-- around the lab centre m v / hbar agree, and Born events report lab
-- positions: their mean is the lab mean within 5 standard errors (Born rule,
-- common practice).
do
  local K = 16 * dk
  local kv = 5 * K + 3 * dk -- m v / hbar
  local wr = hbar * K^2 / (2 * pf.mass("87Rb"))
  local on_grid = psi0:copy():kick(kv)
  local in_frame = psi0:copy():kick(kv, {frame = true})
  local res = {}
  for i, w in ipairs{on_grid, in_frame} do
    local lv = pf.levels{labels = {"g", "e"}, waves = {g = w}, frame = i == 2}
    local doppler = K * hbar * kv / pf.mass("87Rb") -- K v
    lv:bragg{level = "g", rabi = 0.5 * wr, duration = pi / (0.5 * wr), wavenumber = K, detuning = wr + doppler, phase = 0.3}
    lv:pulse{from = "g", to = "e", rabi = 3 * wr, duration = 0.7 / wr, wavenumber = K, detuning = wr + doppler}
    -- centre half a spacing off kv: no grid point on a bin edge, where rounding would pick the order
    res[i] = {orders = lv:order_populations{wavenumber = K, orders = 3, center = kv + 0.5 * dk}}
    lv:fly(2e-3, {acceleration = -3})
    res[i].ev = lv:sample(4000, {seed = 3})
    res[i].mean, res[i].width = lv:level("g"):position_mean(), lv:level("g"):position_width()
  end
  local worst = 0
  for _, lab in ipairs{"g", "e"} do
    for n = -3, 3 do worst = math.max(worst, math.abs(res[1].orders[lab][n] - res[2].orders[lab][n])) end
  end
  check.close(worst, 0, 1e-12, "Bragg + Raman on a moving cloud: frame orders = grid orders", "same evolution (Galilean boost)")
  check.truthy(res[2].orders.g[1] + res[2].orders.e[2] > 0.5 and res[2].orders.e[1] > 0.05,
               "the Doppler-matched pulses transferred")
  local sum, n = 0, 0
  for e = 1, 4000 do if res[2].ev.level[e] == "g" then sum, n = sum + res[2].ev[1][e], n + 1 end end
  check.close(sum / n, res[2].mean, 5 * res[2].width / math.sqrt(n), "frame events at lab positions",
              "Born rule, standard error of the mean")
end

-- The bundled mach_zehnder recipe with frame = true: the same fringe phase
-- as on the lab grid for a short interferometer (different grids, so k_eff
-- on each grid's lattice: agreement to 1e-5 rad), and a 20 ms interferometer
-- under standard gravity, chirped at alpha = k_eff g - 3 rad/s^2, on a grid
-- that holds the cloud only: phase (K g - alpha)(T + 2 tau)(T + 4 tau / pi)
-- (Cheinet et al., IEEE TIM 57, 1141 (2008), quoted from memory; the
-- scipy check of the same model is tests/ref/test_levels_mz_scipy.sh).
do
  local mz = require "psiflight.recipes.mach_zehnder"
  local set = {mass = pf.mass("87Rb"), wavelength = 780.24e-9, T = 0.3e-3, pulse_time = 1e-6, accel = 9.80665,
               sigma = 4e-6, phase_steps = 4, area_scale = 1, max_points = 16384, slices = 16, chirp = 0, frame = false}
  local lab = mz.run(set)
  set.frame = true
  local moved = mz.run(set)
  check.close(moved.results.fringe_phase[1], lab.results.fringe_phase[1], 1e-5, "recipe mach_zehnder: frame = lab grid",
              "same model (docs/internal-states.md)")
  set.T = 20e-3
  set.chirp = moved.keff * 9.80665 - 3
  local long = mz.run(set)
  local tau = set.pulse_time
  check.close(long.results.fringe_phase[1], 3 * (set.T + 2 * tau) * (set.T + 4 * tau / pi), 1e-5,
              "recipe, frame = true, T = 20 ms: fringe phase on " .. long.points .. " points",
              "Cheinet et al. 2008 (from memory); Kasevich & Chu 1991")
end

-- Stern-Gerlach: levels with opposite accelerations +-a separate along the
-- classical trajectories x0 + v0 t +- a t^2 / 2 (Newton; the exact
-- uniform-force propagator moves the mean so, Ehrenfest), and each keeps the
-- free-flight width sqrt(s^2 + (hbar t / 2 m s)^2) (Gaussian packet spreading,
-- any quantum mechanics text).
do
  local v0 = 2e-4
  local start = pf.gaussian(g, {mass = "87Rb", width = 4e-6, center = -10e-6, velocity = v0})
  local lv = pf.levels{labels = {"up", "down"}, waves = {up = start, down = start}}
  local a, t = 0.4, 8e-3
  lv:fly(t, {acceleration = {up = a, down = -a}})
  local m = pf.mass("87Rb")
  local s = 4e-6
  local width = math.sqrt(s^2 + (hbar * t / (2 * m * s))^2)
  for lab, sign in pairs{up = 1, down = -1} do
    local w = lv:level(lab)
    check.near(w:position_mean(), -10e-6 + v0 * t + sign * a * t^2 / 2, 1e-9, "Stern-Gerlach mean, level " .. lab,
               "classical trajectory (Newton)", 1e-15)
    check.near(w:position_width(), width, 1e-9, "Stern-Gerlach width, level " .. lab, "Gaussian spreading formula")
  end
end

-- The script's default acceleration (pf.setup) holds for lv:fly as for w:fly,
-- and acceleration = false flies freely whatever the default: the means follow
-- x0 + v0 t + a t^2 / 2 and x0 + v0 t (Newton, common practice).
do
  local v0, a, t = 2e-4, -0.7, 6e-3
  local start = pf.gaussian(g, {mass = "87Rb", width = 4e-6, center = -10e-6, velocity = v0})
  pf.setup{acceleration = a}
  local lv = pf.levels{labels = {"up", "down"}, waves = {up = start, down = start}}
  lv:fly(t)
  local free = pf.levels{labels = {"up", "down"}, waves = {up = start, down = start}}
  free:fly(t, {acceleration = false})
  pf.setup{acceleration = false}
  for _, lab in ipairs{"up", "down"} do
    check.near(lv:level(lab):position_mean(), -10e-6 + v0 * t + a * t^2 / 2, 1e-9,
               "pf.setup acceleration reaches lv:fly, level " .. lab, "classical trajectory (Newton)", 1e-15)
    check.near(free:level(lab):position_mean(), -10e-6 + v0 * t, 1e-9,
               "acceleration = false overrides the default, level " .. lab, "free flight (Newton)", 1e-15)
  end
end

-- Bragg: a short, strong pulse on a plane wave puts J_n(Omega t)^2 in order n
-- (Raman-Nath regime), read back with order_populations; the Bessel values
-- are from scipy.special.jv in tests/ref/test_levels_scipy.sh; here the sum
-- rule sum_n J_n^2 = 1 (Abramowitz & Stegun 9.1.76) and symmetry J_-n^2 = J_n^2.
do
  local K = 32 * dk
  local heavy = pf.wave(g, {mass = 1e-20, position = function(x) return 1 end}) -- a plane wave, k = 0
  local lv = pf.levels{labels = {"g", "e"}, waves = {g = heavy}}
  lv:bragg{level = "g", rabi = 1.3e5, duration = 10e-6, wavenumber = K}
  local orders = lv:order_populations{wavenumber = K, orders = 10}.g
  local sum = 0
  for n = -10, 10 do sum = sum + orders[n] end
  check.near(sum, 1, 1e-12, "Bragg orders hold all the probability", "A&S 9.1.76: sum J_n^2 = 1")
  check.near(orders[-2], orders[2], 1e-12, "order +-2 symmetric", "J_-n = (-1)^n J_n (A&S 9.1.5)")
  check.near(lv:clock(), 10e-6, 1e-15, "uncoupled level flew along", "definition")
end

-- Born events with their level: after a pulse leaving 1/4 and 3/4 and a
-- Stern-Gerlach flight that separates the levels, the share of events per
-- label and their mean positions agree with the populations and the level
-- means within 5 standard errors (Born rule; binomial and normal standard
-- errors, common practice); the same seed gives the same events.
do
  local lv = pf.levels{labels = {"down", "up"}, waves = {down = psi0}}
  lv:pulse{from = "down", to = "up", area = 2 * math.pi / 3, duration = 20e-6} -- sin^2(pi/3) = 3/4
  lv:fly(4e-3, {acceleration = {up = 1.5, down = -1.5}})
  local n = 20000
  local ev = lv:sample(n, {seed = 11})
  local count, sum = {down = 0, up = 0}, {down = 0, up = 0}
  for e = 1, n do
    local lab = ev.level[e]
    count[lab] = count[lab] + 1
    sum[lab] = sum[lab] + ev[1][e]
  end
  local pop = lv:populations()
  local se = math.sqrt(pop.up * (1 - pop.up) / n)
  check.close(count.up / n, pop.up, 5 * se, "share of 'up' events = population", "Born rule, binomial error")
  for _, lab in ipairs{"down", "up"} do
    local w = lv:level(lab)
    local sem = w:position_width() / math.sqrt(count[lab])
    check.close(sum[lab] / count[lab], w:position_mean(), 5 * sem, "mean position of '" .. lab .. "' events",
                "Born rule, standard error of the mean")
  end
  local again = lv:sample(50, {seed = 11})
  check.truthy(again[1][50] == ev[1][50] and again.level[50] == ev.level[50], "same seed, same events")
end

-- Errors name the bad value.
local lv = pf.levels{labels = {"F1", "F2"}, grid = g, mass = "87Rb"}
check.fails(function() lv:pulse{from = "F1", to = "F3", rabi = 1, duration = 1} end, "unknown label",
            "no level 'F3'", "F1, F2")
check.fails(function() lv:pulse{from = "F1", to = "F1", rabi = 1, duration = 1} end, "same level", "same level")
check.fails(function() lv:pulse{from = "F1", to = "F2", rabi = 1} end, "square pulse needs two of",
            "needs two of")
check.fails(function() lv:pulse{from = "F1", to = "F2", rabi = 1, duration = 1, wavenumber = 2.5 * dk} end,
            "kick off the momentum grid", "whole number of momentum spacings")
check.fails(function() lv:pulse{from = "F1", to = "F2", rabi = 1, duration = 1, detunin = 0} end,
            "misspelt option", "detunin", "detuning")
check.fails(function() pf.levels{labels = {"x"}, grid = g, mass = "87Rb"} end, "one level is not enough", "2 to 8")
check.fails(function() pf.levels{labels = {"x", "x"}, grid = g, mass = "87Rb"} end, "duplicate label", "twice")
lv:level("F1"):fly(1e-3)
check.fails(function() lv:pulse{from = "F1", to = "F2", rabi = 1, duration = 1} end, "levels at different times",
            "one time")
do
  local lv2 = pf.levels{labels = {"u", "v"}, grid = g, mass = "87Rb"}
  lv2:level("v"):close()
  check.fails(function() lv2:populations() end, "a level wave closed on its own", "the wave of level 'v' was closed")
end
check.equal(tostring(lv), "levels {F1, F2}", "tostring")
lv:close()
check.fails(function() lv:populations() end, "closed object", "closed")

-- A level emptied by two pi/2 pulses around a flight holds only rounding
-- noise spread over the grid (the two paths cancel); the grid guards treat
-- it as empty instead of warning (strict mode would turn a warning into an
-- error).  The project's own rule, no outside source.
pf.setup{guard_threshold = 1e-6, strict = true}
local r_lv = pf.levels{labels = {"F1", "F2"}, waves = {F1 = psi0}}
r_lv:pulse{from = "F1", to = "F2", area = pi / 2, duration = 20e-6}
r_lv:fly(1e-3)
r_lv:pulse{from = "F1", to = "F2", area = pi / 2, duration = 20e-6}
check.truthy(r_lv:populations().F1 < 1e-25, "Ramsey pair at resonance empties F1")
local ok, err = pcall(function() return r_lv:level("F1"):position_width() end)
check.truthy(ok, "no guard alarm on an emptied level" .. (ok and "" or (": " .. tostring(err))))
-- The readers of pf.levels and lv:pulse, each with its bad input (no physics:
-- the messages name the field and the value).
do
  local heavy = pf.gaussian(g, {mass = "133Cs", width = 5e-6})
  local later = psi0:copy()
  later:fly(1e-6)
  local F = check.fails
  F(function() pf.levels{labels = {"a"}, waves = {a = psi0}} end, "levels: one label", "2 to", "got 1")
  F(function() pf.levels{labels = {"a", "a"}, waves = {a = psi0}} end, "levels: a label twice", "'a' appears twice")
  F(function() pf.levels{labels = {"a", ""}, waves = {a = psi0}} end, "levels: empty label", "label 2 must be a string")
  F(function() pf.levels{labels = {"a", "b"}, energies = {0}, waves = {a = psi0}} end, "levels: energies per label",
    "must list 2 energies")
  F(function() pf.levels{labels = {"a", "b"}, energies = {0, 0 / 0}, waves = {a = psi0}} end, "levels: NaN energy",
    "energy 2 must be a finite number")
  F(function() pf.levels{labels = {"a", "b"}, waves = {c = psi0}} end, "levels: wave of an unknown level",
    "'c', which is not among the labels")
  F(function() pf.levels{labels = {"a", "b"}, waves = {a = psi0, b = heavy}} end, "levels: waves of two masses",
    "share one grid, mass and clock (level '")
  F(function() pf.levels{labels = {"a", "b"}, waves = {a = psi0, b = later}} end, "levels: waves at two times",
    "share one grid, mass and clock")
  F(function() pf.levels{labels = {"a", "b"}, waves = {a = psi0}, grid = g} end, "levels: waves and grid",
    "not both")
  F(function() pf.levels{labels = {"a", "b"}} end, "levels: neither waves nor grid", "give 'waves' or 'grid' and 'mass'")
  local lv = pf.levels{labels = {"a", "b", "c"}, grid = g, mass = "87Rb"}
  check.equal(lv:clock(), 0, "levels from grid and mass start at clock 0")
  F(function() lv:pulse{from = "a", to = "b", beam_rabi = {1e6, 1e6}, duration = 1e-6} end,
    "pulse: beam_rabi alone", "'beam_rabi' and 'one_photon_detuning' go together")
  F(function() lv:pulse{from = "a", to = "b", beam_rabi = {1e6, 1e6}, one_photon_detuning = 1e9, rabi = 1e3,
    duration = 1e-6} end, "pulse: beam_rabi and rabi", "drop 'rabi' and 'area'")
  F(function() lv:pulse{from = "a", to = "b", beam_rabi = {1e6}, one_photon_detuning = 1e9, duration = 1e-6} end,
    "pulse: one beam", "two Rabi frequencies")
  F(function() lv:pulse{from = "a", to = "b", beam_rabi = {1e6, 1e6}, one_photon_detuning = 0, duration = 1e-6} end,
    "pulse: zero one-photon detuning", "must be non-zero")
  F(function() lv:pulse{from = "a", to = "b", beam_rabi = {1e6, 1e6}, one_photon_detuning = 1e9, duration = 1e-6,
    envelope = "gaussian", width = 1e-7} end, "pulse: beam_rabi with a Gaussian envelope", "square pulses only")
  F(function() lv:pulse{from = "a", to = "b", beam_rabi = {1e6, 1e6}, one_photon_detuning = 1e9, duration = 1e-6,
    light_shift = {a = 1}} end, "pulse: beam_rabi and light_shift", "drop 'light_shift'")
  F(function() lv:pulse{from = "a", to = "b", area = pi, duration = 1e-6, light_shift = {c = 1}} end,
    "pulse: light shift of an uncoupled level", "names 'c', which the pulse does not couple")
  F(function() lv:pulse{from = "a", to = "b", area = pi, duration = 1e-6, light_shift = {a = 1 / 0}} end,
    "pulse: infinite light shift", "light shift of 'a' must be a finite number")
  F(function() lv:pulse{from = "a", to = "b", area = pi, duration = 1e-6, slices = 0} end, "pulse: zero slices",
    "'slices' must be an integer 1 .. 1000000")
  check.equal(lv:clock(), 0, "refused pulses leave the clock alone")
end
check.done()
