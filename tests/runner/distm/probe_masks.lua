-- probe_masks.lua - amplitude masks and the exact shift on a 2D wave split
-- over MPI ranks, for tests/runner/test_distributed_measure.sh (run as one
-- process and under mpirun with pf.setup{distribute = true}).  Tags:
-- "exact" lines must be the same bits everywhere (no transform touched the
-- data), "flown" lines the same bits at every rank count and within 1e-14
-- of one process (FFTW's serial and MPI plans round differently), "law"
-- lines hold a figure and its closed form for the test to judge.
-- Invented scene: a 6Li cloud (a Gaussian packet) cut by the masks of a
-- bench atom-optics kit; 18 x 16 points, so 4 ranks hold 5, 5, 5, 3 planes.
local pf = require "psiflight"
pf.setup{distribute = true, planning = "estimate", guard_threshold = math.huge}
local mass = pf.mass("6Li")
local g = pf.grid{points = {18, 16}, span = {24e-6, 20e-6}}
local s1, s2, c1, c2 = 1.7e-6, 1.5e-6, 0.4e-6, -0.3e-6
local function line(tag, ...)
  local parts = {}
  for i, v in ipairs({...}) do parts[i] = string.format("%.17g", v) end
  print(tag .. " " .. table.concat(parts, " "))
end
-- |psi|^2 a Gaussian of standard deviations s1, s2 about (c1, c2).
local function fresh()
  return pf.wave(g, {mass = mass, normalize = true, position = function(x, y)
    return math.exp(-(x - c1) ^ 2 / (4 * s1 ^ 2) - (y - c2) ^ 2 / (4 * s2 ^ 2))
  end})
end
local info = pf.mpi_info()
print(string.format("ranks %d distribute %s", info.ranks, tostring(info.distribute)))

-- Each mask on a fresh packet: the removed probability and the norm left.
local masks = {
  {"slits_cells", "slits", {count = 3, width = 2.1e-6, pitch = 5e-6, edges = "cells"}},
  {"slits_exact", "slits", {count = 2, width = 2.3e-6, pitch = 4.7e-6, center = 0.35e-6, edge_width = 0.5e-6}},
  {"slits_axis2", "slits", {count = 2, width = 1.9e-6, pitch = 4.1e-6, axis = 2}},
  {"grating_cells", "mask_grating", {period = 3.1e-6, open_fraction = 0.4, edges = "cells"}},
  {"grating_exact", "mask_grating", {period = 2.9e-6, open_fraction = 0.55, offset = 0.3e-6}},
  {"grating_axis2", "mask_grating", {period = 3.3e-6, axis = 2, edge_width = 0.4e-6}},
  {"rect_cells", "aperture", {shape = "rectangle", size = {7.3e-6, false}, center = {0.2e-6, 0}, edges = "cells"}},
  {"rect_exact", "aperture", {shape = "rectangle", size = {6.7e-6, 5.1e-6}, center = {-0.45e-6, 0.3e-6}}},
  {"circle_cells", "aperture", {shape = "circle", radius = 4.3e-6, center = {0.6e-6, -0.2e-6}, edges = "cells"}},
  {"circle_exact", "aperture", {shape = "circle", radius = 3.7e-6, center = {0.35e-6, 0.15e-6}}},
  {"circle_soft", "aperture", {shape = "circle", radius = 4.1e-6, axes = {2, 1}, edge_width = 0.6e-6}},
}
for _, m in ipairs(masks) do
  local w = fresh()
  local _, removed = w[m[2]](w, m[3])
  line("exact " .. m[1], removed, w:norm(), w:position_mean())
  w:close()
end

-- The exact shift (a momentum-space phase): the centre moves by d, the
-- norm and widths stay (translation, common practice).
do
  local w = fresh()
  local m1, m2 = w:position_mean()
  local d1, d2 = 1.3e-6, -0.7e-6
  w:shift(d1, d2)
  local n1, n2 = w:position_mean()
  line("flown shift", w:norm(), n1, n2, w:position_width())
  line("flown shiftk", w:wavenumber_width())
  line("law shift1", n1 - m1, d1)
  line("law shift2", n2 - m2, d2)
  -- shifted back from momentum representation (the wave is there now)
  w:shift(-d1, 0)
  line("flown shiftback", w:norm(), w:position_mean())
  w:close()
end

-- Velocity selection: a momentum-space mask on the transposed slab, box
-- and Gaussian, along the split axis and across it; the packet is first
-- kicked so the cut is asymmetric.  A Gaussian filter exp(-dv^2 / 4 w^2) on
-- a Gaussian velocity distribution of rms u centred at v0 passes
-- w / sqrt(w^2 + u^2) exp(-(v0 - c)^2 / (4 (w^2 + u^2)))... in amplitude
-- squared: the product of two Gaussians (textbook), judged by the test.
do
  local hbar = pf.constants.hbar
  local w = fresh()
  w:kick(3e5, -2e5)
  local _, rb = w:select_velocity{width = 0.02, center = 0.01}
  line("flown vbox", rb, w:norm(), w:wavenumber_mean())
  local _, rg = w:select_velocity{width = 0.015, axis = 2, shape = "gaussian"}
  line("flown vgauss", rg, w:norm(), w:wavenumber_mean())
  w:close()
  -- |phi|^2 along axis 2 is a Gaussian of rms k: 1 / (2 s2), velocity rms
  -- u = hbar / (2 m s2); the filter |T|^2 = exp(-dv^2 / 2 w^2) passes
  -- w / sqrt(w^2 + u^2) exp(-v0^2 / (2 (w^2 + u^2))).
  local u = hbar / (2 * mass * s2)
  local v0 = -hbar * 2e5 / mass
  local gw = 0.015
  local x = fresh()
  x:kick(0, -2e5)
  local _, rx = x:select_velocity{width = gw, axis = 2, shape = "gaussian"}
  line("law vgauss", 1 - rx, gw / math.sqrt(gw ^ 2 + u ^ 2) * math.exp(-v0 ^ 2 / (2 * (gw ^ 2 + u ^ 2))))
  x:close()
end

-- A function without a distributed path still refuses by name.
do
  local w = fresh()
  local ok, err = pcall(function() return w:psi_at(0, 0) end)
  print("refusal " .. (ok and "none" or (info.distribute and tostring(err):match("does not handle a wave function distributed") and "named" or "other")))
  w:close()
end
