-- test_long_flight.lua - the long-flight API: w:fly_long, w:fly_scaled,
-- w:far_field, w:guard, the grid advisor, against outside references:
--  * the free Gaussian's width law sigma(t) = s sqrt(1 + (hbar t / 2 m s^2)^2)
--    (textbook);
--  * double-slit far field: fringe period h t / (m D) and the single-slit
--    envelope (standard Fraunhofer results); for slits with tanh edges of
--    width e the slit's Fourier transform is sin(k a / 2) / (k / 2) times
--    (pi k e / 2) / sinh(pi k e / 2), the transform of sech^2 (standard
--    Fourier pair, e.g. any table of Fourier transforms).
-- Constants: CODATA 2018 (h exact in the 2019 SI, u); 4He atomic mass
-- 4.00260325413 u (AME2020, value from memory).
local pf = require "psiflight"
local check = require "check"
pf.setup{planning = "estimate"}

local h = 6.62607015e-34
local hbar = h / (2 * math.pi)
local u = 1.66053906660e-27
local m_he = 4.00260325413 * u

-- 1. The choosing flight on a Gaussian: same-grid first, scaled later.
local s = 1e-6
local g = pf.grid{points = 256, span = 64e-6}
local w = pf.wave(g, {mass = m_he, position = function(x) return math.exp(-x * x / (4 * s * s)) end})
local function width_law(t) return s * math.sqrt(1 + (hbar * t / (2 * m_he * s * s)) ^ 2) end
local t_short = 2 * m_he * s * s / hbar          -- width grows by sqrt 2
local w2, rep = w:fly_long(t_short)
check.equal(w2, w, "fly_long returns the wave itself")
check.equal(rep.method, "same-grid", "short flight: same-grid chosen")
check.truthy(rep.same_grid_ok and type(rep.reason) == "string", "report carries the criteria and a reason")
check.near(w:position_width(), width_law(t_short), 1e-10, "same-grid width after short flight", "textbook width law")
local t_long = 2 * m_he * s * s / hbar * 400     -- width grows ~400x
local _, rep2 = w:fly_long(t_long)
check.equal(rep2.method, "scaled", "long flight: scaled chosen")
check.truthy(not rep2.same_grid_ok and rep2.scaled_ok, "long flight: criteria say same-grid fails, scaled holds")
check.near(w:grid():spacing(), 2 * math.pi * hbar * t_long / (m_he * 64e-6), 1e-12,
  "scaled grid spacing 2 pi hbar t / (m N dx)", "single-FFT Fresnel form")
check.near(w:position_width(), width_law(t_short + t_long), 1e-9, "scaled width after long flight", "textbook width law")
check.near(w:clock(), t_short + t_long, 1e-14, "clock counts both flights", "definition")
local log = w:log()
check.equal(log[#log].method, "scaled-fresnel", "step log names the method")
check.truthy(log[#log].edge_x ~= nil and log[#log].edge_x < 1e-6, "step log holds the position guard figure")
check.near(w:norm(), 1, 1e-12, "norm after scaled flight", "unitarity of free flight")
-- The report's per-axis tables (docs/long-flights.md) each reach the script
-- under their own name: the scaled grid they describe is the one the wave
-- now has, and every lo/hi pair is ordered.
local gout = w:grid()
check.equal(rep2.scaled_points[1], gout:points(), "report scaled_points is the new grid's point count")
check.near(rep2.scaled_spacing[1], gout:spacing(), 1e-15, "report scaled_spacing is the new grid's spacing", "definition")
check.near(rep2.scaled_origin[1], gout:origin(), 1e-15, "report scaled_origin is the new grid's origin", "definition", 1e-18)
for _, name in ipairs{"extent", "wavenumber", "image"} do
  check.truthy(rep2[name .. "_lo"][1] < rep2[name .. "_hi"][1], "report " .. name .. "_lo < " .. name .. "_hi")
end
check.truthy(rep2.image_hi[1] - rep2.image_lo[1] > rep2.extent_hi[1] - rep2.extent_lo[1],
  "report: the predicted image is wider than the extent before the long flight")
check.truthy(rep2.box[1] > 0 and rep2.window[1] > 0 and rep2.chirp_time[1] > 0 and rep2.scaled_time[1] >= 0,
  "report: box, window and times are present and positive")

-- Forcing and errors.
check.fails(function() w:fly_long(1e-3, {method = "sideways"}) end, "bad method is refused",
  "fly_long", "method", "sideways")
check.fails(function() w:fly_long(1e-3, {method = "same-grid", spacing = 1e-6}) end,
  "same-grid cannot change the grid", "same-grid")
check.fails(function() w:fly_long(1e-3, {spacing = -1}) end, "negative spacing is refused", "spacing")
check.fails(function() w:fly_scaled(0) end, "zero-time scaled flight is refused", "non-zero")
local wf = pf.wave(g, {mass = m_he, position = function(x) return math.exp(-x * x / (4 * s * s)) end})
local _, rf = wf:fly_long(t_short, {method = "scaled", spacing = 0.9 * g:spacing()})
check.equal(rf.stages, 2, "a chosen spacing takes two stages")
check.near(wf:grid():spacing(), 0.9 * g:spacing(), 1e-13, "two-stage lands on the chosen spacing", "definition")
check.near(wf:position_width(), width_law(t_short), 1e-9, "two-stage width", "textbook width law")

-- 2. Double slit (4He, slits a = 0.2 um wide, D = 1 um apart, edges 20 nm).
local a, D, e = 0.2e-6, 1.0e-6, 20e-9
local function tanh(x) local q = math.exp(-2 * math.abs(x)); local v = (1 - q) / (1 + q); return x < 0 and -v or v end
local function slit(x, c) return 0.5 * (tanh((x - c + a / 2) / e) - tanh((x - c - a / 2) / e)) end
local gs = pf.grid{points = 4096, span = 16e-6}
local ds = pf.wave(gs, {mass = m_he, position = function(x) return slit(x, -D / 2) + slit(x, D / 2) end})
local t_ff = 0.05
local ff, info = ds:far_field(t_ff)
check.truthy(info.fraunhofer[1] < 1e-3, "far-field number of the double slit is small")
-- Analytic far field: |F(k)|^2 cos^2(k D / 2), normalised at k = 0 (F(0) = a).
local function F(k)
  if k == 0 then return a end
  local y = math.pi * k * e / 2
  return math.sin(k * a / 2) / (k / 2) * (y / math.sinh(y))
end
local gimg = info.grid
local centre = gs:points() // 2 + 1
local worst = 0
local lobe = h * t_ff / (m_he * a)        -- first zero of the single-slit envelope
for i = 1, gimg:points() do
  local x = gimg:x(1, i)
  if math.abs(x) < 2.5 * lobe then
    local k = m_he * x / (hbar * t_ff)
    local want = (F(k) / a) ^ 2 * math.cos(k * D / 2) ^ 2
    worst = math.max(worst, math.abs(ff[i] / ff[centre] - want))
  end
end
check.close(worst, 0, 1e-6, "far-field image = sinc^2 envelope x cos^2 fringes", "Fraunhofer double slit, tanh-edged slit transform")

-- Flying onto a given grid object: the far-field image's own grid.
local dcopy = ds:copy()
local _, rg = dcopy:fly_long(t_ff, {grid = gimg})
check.truthy(rg.method == "scaled" and dcopy:grid():spacing() == gimg:spacing(), "fly_long onto a given grid")
local dd = dcopy:density()
check.near(dd[centre], ff[centre], 2 * info.fraunhofer[1] ^ 2 + 1e-9, "exact and far-field peak density agree to O(N_F^2)",
  "Fraunhofer limit")
dcopy:close()

-- The flight itself (scaled), then the fringe period from the density.
local _, rs = ds:fly_long(t_ff)
check.equal(rs.method, "scaled", "double slit far field: scaled flight")
local dens = ds:density()
local go = ds:grid()
local period = h * t_ff / (m_he * D)
-- The density is envelope x cos^2(pi x / period): its zeros sit at
-- (n + 1/2) period whatever the envelope, so fit the minima.
local zeros = {}
for i = 2, go:points() - 1 do
  local x = go:x(1, i)
  if math.abs(x) < 0.8 * lobe and dens[i] < dens[i - 1] and dens[i] <= dens[i + 1] then
    local y0, y1, y2 = dens[i - 1], dens[i], dens[i + 1]
    local off = 0.5 * (y0 - y2) / (y0 - 2 * y1 + y2)
    zeros[#zeros + 1] = x + off * go:spacing()
  end
end
check.truthy(#zeros >= 7, "at least 7 fringe minima inside the central envelope lobe (got " .. #zeros .. ")")
local measured = (zeros[#zeros] - zeros[1]) / (#zeros - 1)
check.near(measured, period, 2e-3, "double-slit fringe period", "h t / (m D), standard result")
-- Envelope at the fringe maxima (x = n h t / (m D)): (F(k)/a)^2.
for n = 1, 2 do
  local x = n * period
  local i = math.floor((x - go:x(1, 1)) / go:spacing() + 0.5) + 1
  local best = i
  for j = i - 3, i + 3 do if dens[j] > dens[best] then best = j end end
  local k = m_he * n * period / (hbar * t_ff)
  check.near(dens[best] / dens[go:points() // 2 + 1], (F(k) / a) ^ 2, 2e-2,
    "envelope at fringe " .. n, "single-slit sinc^2 envelope")
end

-- 3. Guard figures for scripts and the threshold setting.
local gd = w:guard()
check.near(gd.threshold, 1e-6, 0, "default guard threshold 1e-6", "psiflight default (docs/long-flights.md)")
check.truthy(gd.position[1] < 1e-6 and gd.ok, "guard figures of a well-placed state")
pf.setup{guard_threshold = 1e-4}
check.near(pf.run_info().guard_threshold, 1e-4, 0, "run_info reports the threshold", "definition")
check.fails(function() pf.setup{guard_threshold = -1} end, "negative threshold refused", "guard_threshold", "-1")
pf.setup{guard_threshold = 1e-6}
local small = pf.grid{points = 64, span = 12e-6}
local ws = pf.wave(small, {mass = m_he, position = function(x) return math.exp(-x * x / (4 * s * s)) end})
ws:fly(20 * 2 * m_he * s * s / hbar)
ws:position_width()                        -- brings it to position: the band is measured now
local gw = ws:guard()
check.truthy(gw.position[1] > 1e-3 and gw.warned_position[1] and not gw.ok, "too-small grid: guard figures show it")
local wl = ws:log()
check.truthy(wl[#wl].edge_x > 1e-3, "the wrap-around figure is in the step log")

-- 4. The grid advisor: proposals that work, with their memory.
local adv = pf.grid_advice{mass = m_he, time = 0.02, width = 2e-6}
check.truthy(adv.same_grid.points[1] > adv.scaled.input.points[1], "scaled needs fewer points than same-grid")
check.near(adv.same_grid.memory, 32 * adv.same_grid.points[1], 0, "same-grid memory = wave + planning scratch", "16 B per complex sample")
pf.setup{strict = true}
local gi = pf.grid{points = adv.scaled.input.points[1], span = adv.scaled.input.span[1]}
local wa = pf.wave(gi, {mass = m_he, position = function(x) return math.exp(-x * x / (4 * 4e-12)) end})
local _, ra = wa:fly_long(0.02)
check.equal(ra.method, "scaled", "advised scaled input grid: scaled flight, no guard tripped in strict mode")
check.near(wa:position_width(), 2e-6 * math.sqrt(1 + (hbar * 0.02 / (2 * m_he * 4e-12)) ^ 2), 5e-9,
  "width after the advised 20 ms flight", "textbook width law")
local gsame = pf.grid{points = adv.same_grid.points[1], span = adv.same_grid.span[1]}
local wsame = pf.wave(gsame, {mass = m_he, position = function(x) return math.exp(-x * x / (4 * 4e-12)) end})
wsame:fly(0.02)
-- The advised box keeps the tails beyond it below the guard threshold (1e-6),
-- which bounds the error of the second moment at about that order.
check.near(wsame:position_width(), 2e-6 * math.sqrt(1 + (hbar * 0.02 / (2 * m_he * 4e-12)) ^ 2), 1e-6,
  "advised same-grid grid: 20 ms flight, no guard tripped in strict mode", "textbook width law")
wsame:close()
local wb = pf.wave(gi, {mass = m_he, position = function(x) return math.exp(-x * x / (4 * 4e-12)) end})
local adv2 = wb:grid_advice{time = 0.02, kicks = {{time = 1e-3, wavenumber = 2e6}}}
check.truthy(adv2.scaled.time == 0.019 and adv2.scaled.start == 1e-3, "advice from a wave: scaled flight after the kick")
check.truthy(adv2.same_grid.span[1] > adv.same_grid.span[1], "a kick widens the same-grid proposal")
-- Flying again after a scaled flight returns to its source first (exact).
local _, again = wa:fly_long(0.01)
check.truthy(again.method == "scaled" and again.reason:find("flew back", 1, true) ~= nil, "second long flight returns to the source")
check.near(wa:position_width(), 2e-6 * math.sqrt(1 + (hbar * 0.03 / (2 * m_he * 4e-12)) ^ 2), 5e-9,
  "width after 20 + 10 ms in two long flights", "textbook width law")
local wp = pf.wave(gi, {mass = m_he, position = function(x) return math.exp(-x * x / (4 * 4e-12)) end})
wp:fly_scaled(0.01, {points = 2 * gi:points()})
local _, rp = wp:fly_long(0.01)
check.truthy(rp.reason:find("flew back", 1, true) ~= nil and wp:grid():points() == 2 * gi:points(),
  "a padded scaled flight is continued from its padded source")
check.near(wp:position_width(), 2e-6 * math.sqrt(1 + (hbar * 0.02 / (2 * m_he * 4e-12)) ^ 2), 5e-9,
  "width after a padded 10 ms flight continued by 10 ms", "textbook width law")
pf.setup{strict = false}
check.done()
