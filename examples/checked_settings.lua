-- checked_settings.lua - a lab's own helper that takes an options table and
-- checks it with the engine's one options checker (docs/lua-api.md,
-- "Options tables").
--
-- Scenario (invented): the Wrenfield Yard sodium bench keeps its standard
-- "release and fly" step in one helper, release{...}, that every script of
-- the bench calls.  Because the helper checks its options with
-- pf.check_options, a misspelt setting in somebody's script stops the run
-- with the line and a suggestion, instead of silently flying with a default:
-- exactly what the engine's own functions do (pf.grid{spn = ...} is an error).
--
-- Model: one non-interacting 23Na atom in the ground state of a harmonic
-- trap, released and flown freely in 1D (no gravity, no interactions).  The
-- widths are model predictions, not measurements.
--
-- Outputs: release_widths.csv (time, computed and textbook widths) in the
-- run's output folder.
--
-- Run: build/psiflight run examples/checked_settings.lua [--set trap=300Hz] [--set tof=4ms]
local pf = require "psiflight"

local p = pf.parameters{
  trap = {default = 250, unit = "Hz", help = "trap frequency of the bench's dipole trap"},
  tof = {default = 3, unit = "ms", help = "time of flight after release"},
}

local mass = pf.mass("23Na")          -- AME2020 atomic mass (engine's species table)
local hbar = pf.constants.hbar        -- CODATA 2018

-- The bench's helper: options declared once, checked before anything runs.
local RELEASE_OPTIONS = {"trap", "tof", "points", "snapshots"}
local function release(o)
  pf.check_options(o, "release", RELEASE_OPTIONS) -- errors point at the caller's line
  local omega = 2 * math.pi * o.trap
  local s0 = math.sqrt(hbar / (2 * mass * omega)) -- ground-state rms width (textbook)
  local s_end = s0 * math.sqrt(1 + (hbar * o.tof / (2 * mass * s0 * s0)) ^ 2)
  local grid = pf.grid{points = o.points or 1024, span = 16 * s_end}
  local w = pf.ground_state(grid, {mass = mass, frequency = o.trap})
  local rows = {t = {}, sigma = {}, law = {}}
  local n, flown = o.snapshots or 6, 0
  for j = 0, n do
    local t = o.tof * j / n
    w:fly(t - flown)
    flown = t
    rows.t[#rows.t + 1] = t
    rows.sigma[#rows.sigma + 1] = w:position_width()
    rows.law[#rows.law + 1] = s0 * math.sqrt(1 + (hbar * t / (2 * mass * s0 * s0)) ^ 2)
  end
  return rows
end

-- A correct call.
local rows = release{trap = p.trap, tof = p.tof, snapshots = 6}
print(string.format("23Na released from a %.0f Hz trap (Wrenfield Yard), %.1f ms of flight", p.trap, p.tof * 1e3))
print("  t (ms)   sigma (um)   textbook (um)")
for i = 1, #rows.t do
  print(string.format("  %6.3f   %10.5f   %12.5f", rows.t[i] * 1e3, rows.sigma[i] * 1e6, rows.law[i] * 1e6))
end
pf.report("sigma_final", rows.sigma[#rows.t], "m")
local columns = {{"t", "s", rows.t}, {"sigma", "m", rows.sigma}, {"sigma_law", "m", rows.law}}
pf.write_csv("release_widths.csv", columns)
local h5 <close> = pf.h5file("release_widths.h5")
h5:put_table("widths", columns)
h5:close()
local um = function(v) local o = {} for i, x in ipairs(v) do o[i] = x * 1e6 end return o end
pf.picture_lines("release_widths.png", {
  title = "23Na rms width after release (Wrenfield Yard)", x_name = "t", x_quantity = "time",
  y_name = "rms width", y_unit = "#gmm", legend = "upper left",
  series = {{x = rows.t, y = um(rows.sigma), label = "engine"}, {x = rows.t, y = um(rows.law), label = "textbook", points = true}},
})

-- A typo, as it might appear in a copied script: caught, with a suggestion.
local ok, msg = pcall(release, {trap = p.trap, tof = p.tof, snapshtos = 12})
print("misspelt option refused: " .. tostring(not ok))
print("  " .. tostring(msg))
-- The engine's own functions behave the same way.
ok, msg = pcall(pf.grid, {points = 64, spn = 1e-4})
print("  " .. tostring(msg))
