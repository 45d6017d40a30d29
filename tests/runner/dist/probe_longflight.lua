-- probe_longflight.lua - long flights on a grid split over MPI ranks, for
-- tests/runner/test_distributed.sh, which runs it as one process and under
-- mpirun at several rank counts with pf.setup{distribute = true} and
-- compares the lines.  "exact" lines must be the same bits everywhere (the
-- new grids' spacings and origins: scalars every rank computes alike),
-- "flown" lines the same bits at every rank count and within 1e-14 of one
-- process (FFTW's serial and MPI plans may round differently), "law" lines
-- hold a figure and the free Gaussian's textbook value, "text" lines must be
-- the same text everywhere (the chosen methods and the step logs).
local pf = require "psiflight"
pf.setup{distribute = true, planning = "estimate", guard_threshold = math.huge}
local hbar = pf.constants.hbar
local mass = pf.mass("87Rb")
local info = pf.mpi_info()
print(string.format("ranks %d distribute %s", info.ranks, tostring(info.distribute)))

local function line(tag, ...)
  local parts = {}
  for i, v in ipairs({...}) do parts[i] = string.format("%.17g", v) end
  print(tag .. " " .. table.concat(parts, " "))
end

-- Invented scene: a rubidium-87 packet of rms widths s drifting at
-- hbar k0 / m along axis 1, on 18 x 16 x 20 points (18 planes: 5, 5, 5, 3
-- on 4 ranks, 6, 6, 6 on 3).
local span = {30e-6, 24e-6, 28e-6}
local s = {2.0e-6, 1.6e-6, 1.8e-6}
local c = {1.5e-6, -1e-6, 0.5e-6}
local k0 = 2.0e5
local g = pf.grid{points = {18, 16, 20}, span = span}
local function packet(grid)
  return pf.wave(grid, {mass = mass, normalize = true, position = function(x, y, z)
    local a = math.exp(-(x - c[1]) ^ 2 / (4 * s[1] ^ 2) - (y - c[2]) ^ 2 / (4 * s[2] ^ 2) - (z - c[3]) ^ 2 / (4 * s[3] ^ 2))
    return a * math.cos(k0 * x), a * math.sin(k0 * x)
  end})
end

-- Free Gaussian (textbook): the centre moves by hbar k0 t / m on axis 1 and
-- sigma(t) = s sqrt(1 + (hbar t / (2 m s^2))^2) on every axis.
local function laws(w, name, t)
  local mx = w:position_mean()
  line("law " .. name .. "_mean1", mx, c[1] + hbar * k0 * t / mass)
  local got = {w:position_width()}
  for a = 1, #got do
    line("law " .. name .. "_width" .. a, got[a], s[a] * math.sqrt(1 + (hbar * t / (2 * mass * s[a] ^ 2)) ^ 2))
  end
end

local function figures(w, name)
  local gr = w:grid()
  local dx, o = {}, {}
  for a = 1, gr:dim() do dx[a], o[a] = gr:spacing(a), gr:origin(a) end
  line("exact " .. name .. "_spacing", table.unpack(dx))
  line("exact " .. name .. "_origin", table.unpack(o))
  line("flown " .. name .. "_norm", w:norm())
  line("flown " .. name .. "_mean", w:position_mean())
  line("flown " .. name .. "_width", w:position_width())
end

local function last_step(w, name)
  local log = w:log()
  local st = log[#log]
  print(string.format("text %s_step %s %s %.17g %.17g", name, st.kind, st.method, st.duration, st.clock))
end

-- 1. The single-FFT form, forced: 25 ms, past the chirp time of every axis,
-- onto a grid centred where the packet drifts.
local t1 = 25e-3
local w = packet(g)
w:fly_scaled(t1, {origin = {c[1] + hbar * k0 * t1 / mass, 0, 0}})
figures(w, "scaled")
laws(w, "scaled", t1)
last_step(w, "scaled")

-- 2. The choosing flight on a fresh packet: 25 ms leaves the box, so it
-- takes the scaled form; the extents it measured (reduced over the ranks)
-- and its choice.
local w2 = packet(g)
local _, r = w2:fly_long(t1)
print(string.format("text choice %s stages %d same_ok %s scaled_ok %s", r.method, r.stages,
  tostring(r.same_grid_ok), tostring(r.scaled_ok)))
line("flown extent_lo", table.unpack(r.extent_lo))
line("flown extent_hi", table.unpack(r.extent_hi))
line("flown wavenumber_lo", table.unpack(r.wavenumber_lo))
line("flown wavenumber_hi", table.unpack(r.wavenumber_hi))
figures(w2, "long")
laws(w2, "long", t1)
-- A second long flight right after flies back to where the first started
-- (the chirps cancel) and then the whole 40 ms in one go.
local t2 = 15e-3
local _, r2 = w2:fly_long(t2)
print(string.format("text again %s stages %d", r2.method, r2.stages))
figures(w2, "again")
laws(w2, "again", t1 + t2)
for i, st in ipairs(w2:log()) do
  print(string.format("text log%d %s %s %.17g", i, st.kind, st.method, st.duration))
end

-- 3. Two stages onto a chosen spacing with the wave's point counts.
local w3 = packet(g)
local D = {4.5e-6, 5.5e-6, 5e-6}
local _, r3 = w3:fly_long(t1, {spacing = D, origin = {c[1] + hbar * k0 * t1 / mass, c[2], 0}})
print(string.format("text twostage %s stages %d scaled_ok %s", r3.method, r3.stages, tostring(r3.scaled_ok)))
figures(w3, "twostage")
laws(w3, "twostage", t1)
last_step(w3, "twostage")

-- 3b. Onto a target grid object of the wave's counts (its own spacing and
-- origin): two stages land on that grid's spacing and origin.
local target = pf.grid{points = {18, 16, 20}, span = {81e-6, 88e-6, 100e-6},
  origin = {c[1] + hbar * k0 * t1 / mass, c[2], 0}}
local w11 = packet(g)
local _, r11 = w11:fly_long(t1, {grid = target})
local on = true
for a = 1, 3 do
  on = on and w11:grid():spacing(a) == target:spacing(a) and w11:grid():origin(a) == target:origin(a)
end
print(string.format("text target %s stages %d on_target %s", r11.method, r11.stages, tostring(on)))
figures(w11, "target")
laws(w11, "target", t1)

-- 4. A short flight stays on its grid: the choice is the same-grid flight.
local w4 = packet(g)
local _, r4 = w4:fly_long(0.4e-3)
print(string.format("text short %s stages %d", r4.method, r4.stages))
figures(w4, "short")
laws(w4, "short", 0.4e-3)

-- 4b. Under gravity the frame falls (closed form, docs/frames.md) while the
-- cloud expands on the scaled grid: the centre also drops by a t^2 / 2
-- (textbook).
local w7 = packet(g)
local acc = -9.81
local _, r7 = w7:fly_long(t1, {acceleration = {0, 0, acc}})
print(string.format("text fall %s stages %d", r7.method, r7.stages))
line("flown fall_mean", w7:position_mean())
line("flown fall_width", w7:position_width())
local fz = select(3, w7:position_mean())
line("law fall_z", fz, c[3] + 0.5 * acc * t1 * t1)
local fw = {w7:position_width()}
for a = 1, 3 do
  line("law fall_width" .. a, fw[a], s[a] * math.sqrt(1 + (hbar * t1 / (2 * mass * s[a] ^ 2)) ^ 2))
end

-- 5. A 2D sheet with an odd first axis: 21 planes (6, 6, 6, 3 on 4 ranks),
-- a backward flight (negative time: the backward transform) and forward
-- again onto the starting grid.
local g2 = pf.grid{points = {21, 24}, span = {30e-6, 30e-6}}
local w5 = pf.wave(g2, {mass = mass, normalize = true, position = function(x, y)
  local a = math.exp(-(x - c[1]) ^ 2 / (4 * s[1] ^ 2) - (y - c[2]) ^ 2 / (4 * s[2] ^ 2))
  return a * math.cos(k0 * x), a * math.sin(k0 * x)
end})
w5:fly_scaled(t1)
figures(w5, "sheet")
laws(w5, "sheet", t1)
w5:fly_scaled(-t1, {origin = {0, 0}})
figures(w5, "sheet_back")
line("flown sheet_back_kmean", w5:wavenumber_mean())

-- 5b. Other point counts on the axes that are not split: padded (finer
-- output spacing) and cropped (the probability cut away is logged as
-- removed), each rank inside its own planes.
local w8 = packet(g)
w8:fly_scaled(t1, {points = {18, 24, 30}, origin = {c[1] + hbar * k0 * t1 / mass, 0, 0}})
figures(w8, "padded")
laws(w8, "padded", t1)
local w9 = packet(g)
w9:fly_scaled(t1, {points = {18, 12, 20}})
figures(w9, "cropped")
local l9 = w9:log()
line("flown cropped_removed", l9[#l9].removed, l9[#l9].norm)

-- 5c. The grid advisor reads the state's extents (combined over the ranks)
-- and the far-field image the momentum density (gathered in global order).
local w10 = packet(g)
local adv = w10:grid_advice{time = t1}
print("text advice same " .. table.concat(adv.same_grid.points, " ") .. " scaled " ..
  table.concat(adv.scaled.output.points, " "))
line("flown advice_same_span", table.unpack(adv.same_grid.span))
line("flown advice_scaled_span", table.unpack(adv.scaled.output.span))
local img, fi = w10:far_field(t1)
local peak, sum = 0, 0
for i = 1, #img do
  peak = math.max(peak, img[i])
  sum = sum + img[i]
end
line("flown farfield", peak, sum * fi.spacing[1] * fi.spacing[2] * fi.spacing[3])
line("flown farfield_fraunhofer", table.unpack(fi.fraunhofer))

-- 6. Another count on the split axis is refused by name at the script line,
-- nothing lost.
if info.distribute then
  local w6 = packet(g)
  local ok, err = pcall(function() w6:fly_scaled(t1, {points = {24, 16, 20}}) end)
  local named = not ok and tostring(err):match("probe_longflight%.lua:%d+:") and
    tostring(err):match("keeps the point count of axis 1") and tostring(err):match("24 points on axis 1")
  print("refusal points " .. (named and "named" or tostring(err)))
  local ok2, err2 = pcall(function() w6:fly_long(t1, {points = {20, 16, 32}}) end)
  named = not ok2 and tostring(err2):match("keeps the point count of axis 1")
  print("refusal long_points " .. (named and "named" or tostring(err2)))
  -- pf.setup{distribute = false} after the wave was made: new grids would
  -- be whole while the wave is split; scaled flights and expansions refuse.
  pf.setup{distribute = false}
  local toggled = 0
  for _, f in ipairs({function() w6:fly_scaled(t1) end, function() w6:fly_long(t1, {method = "scaled"}) end,
      function() w6:expand(1e-3, {omega = {100, 100, 100}}) end}) do
    local okt, errt = pcall(f)
    if not okt and tostring(errt):match("probe_longflight%.lua:%d+:") and tostring(errt):match("distribute} changed") then
      toggled = toggled + 1
    end
  end
  pf.setup{distribute = true}
  print("refusal toggled " .. toggled .. " of 3 named")
  line("refused norm", w6:norm())
end
