-- double_slit_edges.lua - a helium-4 beam through a double slit with edges
-- between grid points, imaged on a detector downstream, in the (invented)
-- Linnet Hall atom-optics bench.  The transverse motion of a collimated
-- beam (rms width 20 um) crosses two slits cut in a thin membrane; the slit
-- edges are not on grid points and carry a soft profile of 40 nm rms (an
-- imaged, slightly rounded edge: edge_width).  The beam then flies the
-- distance to the detector at its longitudinal speed (paraxial: x and t
-- only), with the scaled long flight.
--
-- What it shows: masks with edges anywhere (edges = "exact", the default,
-- against the cell-switched edges = "cells": the probability the slits
-- pass, as the slit width moves by a fraction of a grid spacing); values
-- between grid points (w:density_at on a fine line in the near field);
-- and the fringe fit with the single-slit envelope model, whose period is
-- compared with the Fraunhofer prediction lambda L / D (lambda = h / m v).
--
-- Outputs (docs/outputs.md): double_slit_edges.h5 (the wave behind the
-- slits and at the detector, the detector and near-field profiles, the
-- fit), the detector profile as PNG and CSV, the near field as PNG, and the
-- run manifest.
--
-- The outputs are model predictions of ideal transverse free flight (no
-- gravity, no van der Waals interaction with the slit walls, a fully
-- coherent beam), not settings for a real apparatus: local safety rules and
-- the lab's qualified staff come first.
--
-- Run: build/psiflight run examples/double_slit_edges.lua [--set pitch=6um] [--set speed=40m/s]
local pf = require "psiflight"
local p = pf.parameters{
  slit     = {default = 1.2, unit = "um", help = "width of each slit", min = 0.2, max = 5},
  pitch    = {default = 4.5, unit = "um", help = "centre-to-centre distance of the slits", min = 1, max = 20},
  edge     = {default = 40, unit = "nm", help = "rms width of the soft slit edges (0: hard)", min = 0, max = 200},
  distance = {default = 0.2, unit = "m", help = "slits to detector", min = 0.01, max = 2},
  speed    = {default = 30, unit = "m/s", help = "longitudinal speed of the beam", min = 5, max = 500},
  beam     = {default = 20, unit = "um", help = "rms width of the incident beam", min = 5, max = 50},
}

local h = pf.constants.h                -- CODATA 2018 (engine constants table)
local mass = pf.mass("4He")             -- 4He atomic mass, AME2020 (species table)
local t = p.distance / p.speed          -- paraxial: distance -> flight time
local lambda = h / (mass * p.speed)     -- de Broglie wavelength

-- 25 nm spacing: the soft edge spans 1.6 spacings, so the band-limited mask
-- keeps its spectrum well inside the grid.
local dx = 25e-9
local n = 10240
local grid = pf.grid{points = n, spacing = dx}
local beam = pf.gaussian(grid, {mass = mass, width = p.beam})

print(string.format("Linnet Hall double slit: 4He at %.4g m/s (lambda %.4g nm), slits %.3g um wide, %.3g um apart",
  p.speed, lambda * 1e9, p.slit * 1e6, p.pitch * 1e6))
print(string.format("grid %d points at %.0f nm; flight %.4g ms to the detector %.3g m downstream",
  n, dx * 1e9, t * 1e3, p.distance))

-- Exact against cell-switched edges (both hard here): the passed probability
-- as the slit width grows by quarter spacings.  Exact edges follow it
-- smoothly; cell edges jump by whole grid points.
print("  slit width (um)   passed, exact edges   passed, cell edges")
for q = 0, 4 do
  local width = p.slit + q * dx / 4
  local _, re = beam:copy():slits{count = 2, width = width, pitch = p.pitch}
  local _, rc = beam:copy():slits{count = 2, width = width, pitch = p.pitch, edges = "cells"}
  print(string.format("  %15.5f   %19.10f   %18.10f", width * 1e6, 1 - re, 1 - rc))
end

local masked, removed = beam:slits{count = 2, width = p.slit, pitch = p.pitch, edge_width = p.edge}
print(string.format("probability passing the soft-edged slits: %.6f", 1 - removed))
masked:normalize()
local behind = masked:copy()

-- Near field, 0.3 mm behind the membrane: the density on a fine line of
-- points (4 nm apart, not grid points), from the band-limited wave function.
local near = masked:copy():fly(0.3e-3 / p.speed)
local xn, span_n = {}, 2 * p.pitch
for i = 1, 1000 do xn[i] = -0.5 * span_n + (i - 1) * span_n / 999 end
local near_profile = near:density_at(xn)

-- Far field at the detector: the scaled long flight.  Its output grid holds
-- a chirp beyond its own Nyquist limit (the momentum guard says so when the
-- density is taken), so the detector profile is read at the output grid's
-- points (exact there), not between them.
local _, report = masked:fly_long(t)
print(string.format("long flight: method %s", report.method))
local xs, profile = masked:grid():x_axis(1), masked:density()
local fringe = lambda * p.distance / p.pitch   -- Fraunhofer fringe period
local lobe = lambda * p.distance / p.slit      -- first zero of the envelope
local fit = pf.fringes(xs, profile, {from = -0.9 * lobe, to = 0.9 * lobe, envelope = "sinc2", period = fringe})
local plain = pf.fringes(xs, profile, {from = -0.9 * lobe, to = 0.9 * lobe, period = fringe})
print(string.format("fringe period: fit with sinc2 envelope %.4f um, plain fit %.4f um, Fraunhofer lambda L / D %.4f um",
  fit.period * 1e6, plain.period * 1e6, fringe * 1e6))
print(string.format("envelope first zero: fit %.2f um, Fraunhofer lambda L / a %.2f um; visibility %.4f",
  fit.envelope_width * 1e6, lobe * 1e6, fit.visibility))
pf.report("fringe_period", fit.period, "m")
pf.report("fringe_period_fraunhofer", fringe, "m")
pf.report("envelope_zero", fit.envelope_width, "m")
pf.report("visibility", fit.visibility, "")
pf.report("passed", 1 - removed, "")

-- The detector window only, for the files.
local dx_out, dd = {}, {}
for i, x in ipairs(xs) do
  if math.abs(x) <= 1.5 * lobe then dx_out[#dx_out + 1], dd[#dd + 1] = x, profile[i] end
end
local h5 <close> = pf.h5file("double_slit_edges.h5")
h5:put_wave("behind_slits", behind)
h5:put_wave("at_detector", masked, {parts = "both"})
h5:put_table("detector", {{"x", "m", dx_out}, {"density", "1/m", dd}})
h5:put_table("near_field", {{"x", "m", xn}, {"density", "1/m", near_profile}})
h5:put_value("fringe_period", fit.period, "m")
h5:put_value("fringe_period_fraunhofer", fringe, "m")
h5:put_value("envelope_zero", fit.envelope_width, "m")
local h5_path = h5:close()
local csv_path = pf.write_csv("detector_profile.csv", {{"x", "m", dx_out}, {"density", "1/m", dd}})
local um = function(v) local o = {} for i, x in ipairs(v) do o[i] = x * 1e6 end return o end
local png_path = pf.picture_lines("detector_profile.png", {
  title = "Linnet Hall: 4He double slit on the detector",
  x_name = "x", y_name = "density", y_unit = "1/m",
  series = {{x = um(dx_out), y = dd, label = "engine (scaled flight)"}},
})
local near_path = pf.picture_lines("near_field.png", {
  title = "0.3 mm behind the slits (values between grid points)",
  x_name = "x", y_name = "density", y_unit = "1/m",
  series = {{x = um(xn), y = near_profile, label = "engine, density_at"}},
})
print("outputs:")
for _, path in ipairs{h5_path, csv_path, png_path, near_path} do print("  " .. path) end
print("  " .. pf.output_path("manifest.json") .. " (written when the run ends)")
