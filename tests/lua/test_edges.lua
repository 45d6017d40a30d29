-- test_edges.lua - amplitude masks with edges between grid points through
-- the Lua API: the default (edges = "exact"), the cell-switched fallback,
-- soft edges (edge_width) quieting the momentum guard, and refused values.
-- The physics checks against the Fresnel integrals and the circular
-- aperture's on-axis law: tests/ref/test_edges_fresnel_scipy.sh; the tables
-- themselves: tests/unit/protocols/test_edges.c.
local pf = require "psiflight"
local check = require "check"
pf.setup{planning = "estimate"}
local m = pf.mass("87Rb")

-- A uniform state through a slit of 10.3 grid spacings: by Parseval's theorem
-- (common practice) the kept probability of the band-limited slit is its
-- width over the span minus the tail beyond Nyquist, about 2 / (pi^2 N)
-- (sum of |c_m|^2 ~ 2 / (k L)^2 over |m| > N/2), so N * kept = 10.3 - 0.2;
-- cell-switched edges keep a whole number of points.
local n = 256
local g = pf.grid{points = n, span = 256e-6}
local dx = g:spacing(1)
local function uniform() return pf.wave(g, {mass = m, position = function() return 1 end}) end
local _, removed = uniform():slit{width = 10.3 * dx, center = 0.21 * dx}
local kept = (1 - removed) * n
check.close(kept, 10.3 - 2 / math.pi ^ 2, 0.05, "exact edges keep width/span minus the band tail (x N)",
  "Parseval's theorem, common practice")
local _, rc = uniform():slit{width = 10.3 * dx, center = 0.21 * dx, edges = "cells"}
check.close((1 - rc) * n, math.floor((1 - rc) * n + 0.5), 1e-9, "cell-switched edges keep whole points",
  "definition")
local _, rs = uniform():slits{count = 3, width = 4.3 * dx, pitch = 9.1 * dx, center = 0.4 * dx}
check.close((1 - rs) * n, 3 * (4.3 - 2 / math.pi ^ 2), 0.15, "three exact slits keep 3 x (width - band tail)",
  "Parseval's theorem, common practice")

-- Soft edges: a hard slit on a broad Gaussian leaves content at the Nyquist
-- limit (the momentum guard's band measures it); an edge of rms 3 dx cuts
-- that content by exp(-(3 pi)^2 (15/16)^2) ~ 1e-34 (Gaussian transform,
-- common practice), below the guard threshold.
local gb = pf.grid{points = 1024, span = 400e-6}
local function broad() return pf.gaussian(gb, {mass = m, width = 25e-6}) end
local hard = broad():slit{width = 20e-6, center = 0.37e-6}
hard:fly(1e-3)
local soft = broad():slit{width = 20e-6, center = 0.37e-6, edge_width = 3 * gb:spacing(1)}
soft:fly(1e-3)
local gh, gs = hard:guard(), soft:guard()
check.truthy(gh.momentum[1] > gh.threshold, string.format("hard edges: momentum band %.2e above the guard threshold",
  gh.momentum[1]))
check.truthy(gs.momentum[1] < 1e-3 * gs.threshold, string.format(
  "soft edges (rms 3 dx): momentum band %.2e far below the threshold", gs.momentum[1]))
check.truthy(not gs.warned_momentum[1], "soft edges: no momentum warning")

-- Apertures take the same fields.
local g2 = pf.grid{points = {128, 128}, span = 64e-6}
local flat = pf.wave(g2, {mass = m, position = function() return 1 end})
-- A box of width w softened by a Gaussian of rms s keeps integral t^2 =
-- w - 2 s / sqrt(pi) (each edge loses s / sqrt(pi): the integral of
-- Phi (1 - Phi) over the line is 1 / sqrt(pi), half the mean absolute
-- difference 2 / sqrt(pi) of two standard normal variables, a standard result)
-- while the edges are far apart (w / 2 s >= 10 here).
local s_e = 1e-6 -- 2 dx: the band limit cuts exp(-(2 pi)^2 / 2) of the edge coefficient at Nyquist
local _, rr = flat:copy():aperture{shape = "rectangle", size = {20.5e-6, 30.25e-6}, edge_width = s_e}
local want = (20.5e-6 - 2 * s_e / math.sqrt(math.pi)) * (30.25e-6 - 2 * s_e / math.sqrt(math.pi)) / 64e-6 ^ 2
check.near(1 - rr, want, 1e-7, "soft rectangle keeps prod (w - 2 s / sqrt pi) / L",
  "mean absolute difference of normal variables, standard result")
local _, rcirc = flat:copy():aperture{shape = "circle", radius = 10.3e-6}
-- Exact disk: the kept probability is the band-limited disk's |t|^2 mean,
-- close to pi R^2 / area (Parseval again); cells count points inside.
check.close(1 - rcirc, math.pi * 10.3e-6 ^ 2 / 64e-6 ^ 2, 0.01, "exact disk keeps about pi R^2 / area",
  "Parseval's theorem, common practice")

-- Refused values name the field and the value.
check.fails(function() uniform():slit{width = 1e-6, edges = "smooth"} end, "unknown edges refused", "edges",
  "smooth")
check.fails(function() uniform():slit{width = 1e-6, edges = "cells", edge_width = 1e-7} end,
  "edge_width with cell edges refused", "edge_width", "exact")
check.fails(function() uniform():mask_grating{period = 4e-6, edge_width = -1e-7} end, "negative edge_width refused",
  "edge_width", "-1e-07")
check.done()
