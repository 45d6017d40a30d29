-- slow_writer.lua - helper for test_interrupt.sh: writes many items into one
-- HDF5 file, slowly enough that the test can interrupt it mid-write.
local pf = require "psiflight"
pf.setup{planning = "estimate"}
local g = pf.grid{points = {128, 128}, span = {1e-4, 1e-4}}
local w = pf.wave(g, {mass = 1e-26, position = function(x, y) return math.exp(-(x * x + y * y) / 1e-10) end})
local f = pf.h5file("big.h5")
for i = 1, 800 do
  f:put_wave("w" .. i, w)
  local t0 = os.clock()
  while os.clock() - t0 < 0.002 do end
end
f:close()
print("finished")
