-- picture_names.lua - pictures whose names carry PLplot's file-family
-- syntax ("%n"), for tests/runner/test_hostile_files.sh.  The names are
-- ordinary literal names to psiflight: each picture must land inside the
-- output folder under exactly that name, and the run must go on to write
-- its manifest.
local pf = require "psiflight"
local p = pf.parameters{
  name = {default = "plain.png", help = "picture name inside the output folder"},
}
local x, y = {}, {}
for i = 1, 32 do x[i] = (i - 16) * 1e-6; y[i] = math.exp(-((i - 16) / 5) ^ 2) end
local path = pf.picture_lines(p.name, {series = {{x = x, y = y, label = "profile"}},
                                      x_name = "x", x_quantity = "length", y_name = "density"})
print("picture: " .. path)
