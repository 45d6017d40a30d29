-- svg_writer.lua - helper for test_svg.sh: a map and a line plot written as
-- SVG (the file name decides) in an invented "Copse Lane" 87Rb test.
local pf = require "psiflight"
pf.setup{planning = "estimate"}
local g = pf.grid{points = {64, 64}, span = {80e-6, 80e-6}}
local w = pf.gaussian(g, {mass = "87Rb", width = {3e-6, 5e-6}})
pf.picture_map("cloud.svg", w, {title = "SVG map"})
pf.picture_lines("line.svg", {title = "SVG lines", x_name = "t", x_quantity = "time",
  series = {{x = {0, 1e-3, 2e-3}, y = {0, 1, 4}, label = "y"}}})
pf.picture_lines("line.png", {title = "PNG lines", x_name = "t", x_quantity = "time",
  series = {{x = {0, 1e-3, 2e-3}, y = {0, 1, 4}, label = "y"}}})
