-- test_periodic.lua - states periodic by design (pf.wave{periodic = true},
-- w:mark_periodic()): the position-edge guards give no false alarm, the
-- momentum guard still watches Nyquist.  Strict mode turns every guard
-- warning into an error, so "no error" is "no warning".  Geometry of the
-- guard bands (outer 1/32 of the points, docs/long-flights.md): a uniform
-- state holds 2/32 of its probability there (definition).
local pf = require "psiflight"
local check = require "check"
pf.setup{planning = "estimate", strict = true}
local m = pf.mass("87Rb")
local d = 8e-6
local g = pf.grid{points = 512, span = 16 * d}
local function comb(x) return 1 + 0.5 * math.cos(2 * math.pi * x / d) end

check.fails(function() pf.wave(g, {mass = m, position = comb}) end,
  "strict mode: a periodic comb not marked trips the position guard", "grid edge")
local built, w = pcall(pf.wave, g, {mass = m, position = comb, periodic = true})
check.truthy(built, "marked periodic at build: no position warning in strict mode")
local f = w:guard()
check.close(f.position[1], 2 / 32, 0.02, "the band still holds ~1/16 of the probability (figure kept)",
  "guard band geometry, definition")
check.truthy(f.periodic and f.ok, "figures: periodic, ok")
-- Talbot flight (T_T / 2) and a soft-edged amplitude grating: no position alarm.
local TT = m * d * d / (math.pi * pf.constants.hbar)
w:fly(TT / 2)
w:mask_grating{period = d, open_fraction = 0.5, edge_width = d / 16}
w:fly(TT / 4)
check.truthy(w:guard().ok, "after flights and a soft grating: ok")
local c = w:copy()
check.truthy(c:guard().periodic, "a copy keeps the mark")

-- Marking afterwards, and the momentum guard still active: a hard-edged
-- grating puts content at Nyquist, which strict mode refuses.
pf.setup{strict = false}
local late = pf.wave(g, {mass = m, position = comb})
pf.setup{strict = true}
late:mark_periodic()
late:fly(TT / 3)
check.truthy(late:guard().ok, "marked later: position figures no longer fail the verdict")
check.fails(function() late:mask_grating{period = d / 7.3, open_fraction = 0.5}; late:fly(1e-6) end,
  "momentum at Nyquist still refused in strict mode", "Nyquist")
late:mark_periodic(false)
check.truthy(not late:guard().periodic, "mark_periodic(false) removes the mark")
check.fails(function() late:mark_periodic("yes") end, "mark_periodic takes a boolean", "boolean")
pf.setup{strict = false}
check.done()
