-- h5_netcdf_writer.lua - helper for test_h5_netcdf.sh: an invented "Fallowfield"
-- rubidium-87 bench writing one file with every kind of item (1D and 2D
-- waves, psi and phi, a density, a table led by a number column and one led
-- by a text column, a scalar) and declared parameters with units.
local pf = require "psiflight"
pf.setup{planning = "estimate", seed = 7}
local p = pf.parameters{
  tof   = {default = 0.4, unit = "ms", help = "flight time"},
  width = {default = 3, unit = "um", help = "initial rms width"},
  label = {default = "bench-a", help = "a text parameter"},
}
local mass = pf.mass("87Rb")
local g2 = pf.grid{points = {128, 64}, span = {80e-6, 60e-6}}
local w2 = pf.gaussian(g2, {mass = mass, width = {p.width, 0.8 * p.width}, wavenumber = {2e5, 0}})
w2:fly(p.tof)
local g1 = pf.grid{points = {256}, span = {100e-6}}
local w1 = pf.gaussian(g1, {mass = 1.5e-26, width = p.width})
w1:fly(p.tof)
local f = pf.h5file("state.h5")
f:put_wave("cloud", w2, {parts = "both"})
f:put_wave("line", w1, {parts = "phi"})
f:put_density("cloud_density", w2)
f:put_density("line_kdensity", w1, "momentum")
f:put_table("widths", {{"t", "s", {0, 1e-4, 2e-4}}, {"sigma", "m", {3e-6, 3.1e-6, 3.3e-6}}})
f:put_table("steps", w2:log_columns())
f:put_value("tof", w2:clock(), "s")
f:close()
