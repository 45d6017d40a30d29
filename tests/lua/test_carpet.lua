-- test_carpet.lua - pf.picture_carpet flies a copy and leaves the state as
-- it was; the flight it pictures shows the Talbot revival at
-- T_T = 2 m d^2 / h (Talbot 1836, Rayleigh 1881; time-domain form for
-- matter waves).  Invented "Brackenfield" 23Na grating numbers.
local pf = require "psiflight"
local check = require "check"
pf.setup{planning = "estimate"}
-- The suite runner gives each test its own output folder (--out).
local tmp = assert(pf.run_info().output_dir, "run this test with --out DIR")

local h = 6.62607015e-34                 -- exact (SI 2019)
local mass = 22.9897692820 * 1.66053906660e-27 -- 23Na AME2020, u CODATA 2018
local d = 2e-6
local talbot = 2 * mass * d * d / h
local g = pf.grid{points = 512, span = 4 * d}
local w = pf.wave(g, {mass = mass, position = function(x)
  local r = (x / d) % 1
  return math.exp(-(math.min(r, 1 - r) * d / (0.1 * d)) ^ 2)
end})
local before = {}
for i = 1, g:points(1) do before[i] = w:psi(i) end
local clock = w:clock()
local path = pf.picture_carpet("carpet.png", w, {duration = talbot, frames = 50, overwrite = true})
check.equal(path, tmp .. "/carpet.png", "carpet written into the output folder")
local worst = 0
for i = 1, g:points(1) do worst = math.max(worst, (w:psi(i) - before[i]):abs()) end
check.equal(worst, 0, "the state itself is unchanged by the carpet")
check.equal(w:clock(), clock, "the state's clock is unchanged")
local rho0 = w:density()
w:fly(talbot)
local rho1, err, peak = w:density(), 0, 0
for i = 1, #rho0 do
  err = math.max(err, math.abs(rho1[i] - rho0[i]))
  peak = math.max(peak, rho0[i])
end
check.truthy(err <= 1e-12 * peak, string.format("density revives at T_T = 2 m d^2/h (max diff %.1e of peak) [Talbot effect]", err / peak))
os.remove(path)
check.done()
