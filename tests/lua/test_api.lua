-- test_api.lua - the Lua API of grids, wave functions and complex numbers:
-- values, lifetimes, printing and the wording of argument errors.
local pf = require "psiflight"
local check = require "check"
pf.setup{planning = "estimate"}

-- complex numbers
local z = pf.complex(3, -4)
check.equal(z.re, 3, "complex real part")
check.equal(z.im, -4, "complex imaginary part")
check.equal(z:abs(), 5, "complex modulus")
check.equal(tostring(pf.i * pf.i), "-1+0i", "i*i prints as -1+0i")
check.truthy((z * 2 + 1) == pf.complex(7, -8), "complex arithmetic mixes with numbers")
check.truthy(z:conj() == pf.complex(3, 4), "conjugate")
check.near((pf.cexp(pf.i * math.pi) + 1):abs(), 0, 0, "exp(i pi) = -1", "Euler's formula", 1e-15)
check.truthy(pf.polar(2, math.pi / 2) == pf.complex(2 * math.cos(math.pi / 2), 2), "polar form")
check.truthy((pf.complex(1, 1) ^ 2) == pf.complex(0, 2), "integer power is exact")

-- grids
local g = pf.grid{points = {64, 32}, span = {64e-6, 16e-6}, origin = {1e-6, 0}}
check.equal(g:dim(), 2, "grid dimension")
check.equal(g:points(2), 32, "points per axis")
check.near(g:spacing(1), 1e-6, 1e-15, "spacing from span", "span = points * spacing")
check.near(g:x(1, 33), 1e-6, 1e-15, "origin is point n/2+1 (1-based)", "documented grid convention")
check.near(g:k(1, 1), -math.pi / 1e-6, 1e-15, "ascending k starts at -pi/dx", "DFT frequencies, common practice")
check.equal(#g:x_axis(2), 32, "x_axis table length")
check.truthy(tostring(g):find("grid 2D", 1, true), "grid prints its shape")
local g2 = pf.grid{points = 16, spacing = 0.5e-6}
check.near(g2:span(), 8e-6, 1e-15, "span from spacing", "span = points * spacing")

check.fails(function() pf.grid{points = 1, span = 1} end, "one point is refused", "points on axis 1", "at least 4")
check.fails(function() pf.grid{points = {8, 8}, span = {1, -1}} end, "negative span is refused", "span on axis 2", "-1")
check.fails(function() pf.grid{points = 8, span = 0 / 0} end, "NaN span is refused", "span", "nan")
check.fails(function() pf.grid{points = 8} end, "span or spacing required", "span", "spacing")
check.fails(function() pf.grid{points = {8, 8, 8, 8}, span = 1} end, "four axes refused", "1, 2 or 3")
check.fails(function() pf.grid{points = "many", span = 1} end, "points must be numbers", "points", "many")

-- wave functions
local m = 1.0e-25
local w = pf.wave(g, {mass = m, position = function(x, y)
  return math.exp(-((x - 1e-6) / 4e-6) ^ 2 - (y / 2e-6) ^ 2)
end})
check.near(w:norm(), 1, 1e-13, "builder normalises by default", "convention: integral |psi|^2 = 1")
check.equal(w:representation(), "position", "built in position representation")
local raw = pf.wave(g, {mass = m, normalize = false, position = function() return 1, 1 end})
check.near(raw:norm(), 2 * 64e-6 * 16e-6, 1e-12, "two return values are (re, im)", "|1+i|^2 times the box area")
check.truthy(raw:psi(3, 4) == pf.complex(1, 1), "psi at a 1-based index")
raw:set_psi(3, 4, pf.complex(0, 2))
check.truthy(raw:psi(3, 4) == pf.complex(0, 2), "set_psi writes one sample")
check.equal(#w:density(), 64 * 32, "density table covers the grid")
check.equal(w:fly(1e-3), w, "fly returns the wave for chaining")
-- A flight from position representation on a 2D/3D grid is deferred and
-- carried out as one fused sweep when a result needs the data (docs/lua-api.md).
check.equal(w:representation(), "position", "a 2D flight from position is deferred: storage stays in position")
check.near(w:clock(), 1e-3, 1e-15, "clock adds flight durations", "definition")
local mx, my = w:position_mean()
check.near(mx, 1e-6, 1e-9, "two values from position_mean in 2D", "free flight without momentum keeps <x>")
check.equal(w:representation(), "position", "a position observable brought it back")
local w1 = pf.wave(pf.grid{points = 256, span = 64e-6}, {mass = m, position = function(x)
  return math.exp(-(x / 4e-6) ^ 2)
end})
w1:fly(1e-3)
check.equal(w1:representation(), "momentum", "a 1D flight leaves the state in momentum representation")
local w2 = w:copy()
w2:fly(2e-3):fly(-1e-3)
w2:momentum_mean()
check.equal(w2:representation(), "momentum", "a momentum observable settles deferred flights in momentum")
check.near(w2:clock(), 2e-3, 1e-15, "deferred flights add their durations to the clock", "definition")
local ax = w2:position_mean()
local w3 = w:copy()
w3:fly(1e-3)
check.near(ax, w3:position_mean(), 1e-15, "two deferred flights equal one of their sum", "free flight composes (group law)")
local log = w:log()
check.equal(#log, 2, "log has build and flight")
check.equal(log[2].kind, "flight", "second step is the flight")
check.truthy(w:log_text():find("^step kind method"), "log text starts with its header")
-- Each record of w:log() holds the fields of its line in w:log_text() (the
-- core's own formatting of the same step), and a guard figure that was not
-- measured ("-" in the text) is absent from the record (implementation check).
do
  local lines = {}
  for line in w:log_text():gmatch("[^\n]+") do lines[#lines + 1] = line end
  local names = {"duration", "clock", "norm", "removed", "edge_x", "edge_k"}
  for i, rec in ipairs(log) do
    local f = {}
    for word in lines[i + 1]:gmatch("%S+") do f[#f + 1] = word end
    check.equal(rec.kind, f[2], "log record " .. i .. ": kind as in the text")
    check.equal(rec.method or "", f[3] == "-" and "" or f[3], "log record " .. i .. ": method as in the text")
    for k, name in ipairs(names) do
      local text = f[3 + k]
      if text == "-" then
        check.equal(rec[name], nil, "log record " .. i .. ": unmeasured " .. name .. " absent")
      else
        -- relative, to the text's digits: %.3e for the guard figures, %.9e / %.12f otherwise
        local digits = name:find("^edge") and 1e-3 or 1e-9
        check.near(rec[name], tonumber(text), digits, "log record " .. i .. ": " .. name .. " as in the text", "definition")
      end
    end
    local count = 0
    for _ in pairs(rec) do count = count + 1 end
    local shown = 2
    for k = 4, 9 do if f[k] ~= "-" then shown = shown + 1 end end
    check.equal(count, shown, "log record " .. i .. ": no field beyond the text's")
  end
end
local c = w:copy()
c:scale(2)
check.near(w:norm(), 1, 1e-12, "a copy is independent", "definition")
-- A flight carries the norm into its log entry instead of summing again; a
-- scaling or normalisation in between must be carried too (unitarity of
-- free flight: the norm after the flight is the norm before it).
c:fly(1e-4)
check.near(c:log()[#c:log()].norm, 4, 1e-12, "flight logs the norm after a scaling", "unitarity of free flight")
local cut = w:copy()
cut:slit{width = 2e-6}
cut:normalize()
cut:fly(1e-4)
check.near(cut:log()[#cut:log()].norm, 1, 1e-12, "flight logs the norm after a mask and normalize", "unitarity of free flight")
check.near(cut:norm(), 1, 1e-12, "and the state's norm agrees", "Parseval")

-- building from momentum: phi(k) of a Gaussian of width s has |phi|^2 of width 1/(2 s)
local g1 = pf.grid{points = 256, span = 200e-6}
local s = 5e-6
local wk = pf.wave(g1, {mass = m, momentum = function(k) return math.exp(-(k * s) ^ 2) end})
check.near(wk:position_width(), s, 1e-12, "phi(k) = exp(-k^2 s^2) gives sigma_x = s",
  "Gaussian Fourier pair (textbook)")
check.near(wk:momentum_width() * wk:position_width(), 1.054571817e-34 / 2, 1e-9,
  "minimum uncertainty product", "Heisenberg: sigma_x sigma_p = hbar/2 for a Gaussian (CODATA 2018 hbar)")

check.fails(function() pf.wave(g1, {mass = -1, position = function() return 1 end}) end,
  "negative mass refused", "mass", "-1")
check.fails(function() pf.wave(g1, {mass = m}) end, "a builder function is required", "position", "momentum")
check.fails(function() pf.wave(g1, {mass = m, position = function() return "x" end}) end,
  "a callback returning a string is refused", "position function", "'x'")
check.fails(function() pf.wave(g1, {mass = m, position = function(x) return x > 0 and 0 / 0 or 1 end}) end,
  "a NaN from the callback names the point", "non-finite", "x =")
check.fails(function() pf.wave(g1, {mass = m, position = function() error("boom") end}) end,
  "an error inside the callback propagates", "boom")
check.fails(function() w:fly(0 / 0) end, "NaN flight time refused", "flight time", "nan")
check.fails(function() w:fly("soon") end, "string flight time refused", "bad argument #1 to 'fly'", "soon")
check.fails(function() w:psi(0, 1) end, "index 0 refused", "index on axis 1", "1..64")
check.fails(function() g1:x(2, 1) end, "axis beyond the dimension refused", "axis must be 1..1")

-- lifetimes: close, __close, printing
do
  local scoped <close> = pf.wave(g1, {mass = m, position = function() return 1 end})
  check.truthy(tostring(scoped):find("wave function 1D", 1, true), "wave prints its shape")
end
local closed = pf.wave(g1, {mass = m, position = function() return 1 end})
closed:close()
closed:close() -- harmless twice
check.equal(tostring(closed), "wave function (closed)", "closed wave prints its state")
check.fails(function() closed:norm() end, "methods on a closed wave fail clearly", "closed")
g1:close()
check.truthy(wk:norm() > 0, "a wave outlives its closed grid handle")

-- engine settings
pf.setup{memory_cap = 1e6}
check.fails(function() pf.grid{points = {512, 512}, span = 1} end, "memory cap refuses big grids",
  "memory cap", "MiB")
pf.setup{memory_cap = 2 ^ 34}
check.fails(function() pf.setup{threads = 0} end, "zero threads refused", "threads", "0")
check.fails(function() pf.setup{planning = "fast"} end, "unknown planning refused", "planning", "fast")
local info = pf.run_info()
check.equal(info.planning, "estimate", "run_info reports the planning mode")
check.truthy(#info.wisdom_digest == 16, "run_info reports a wisdom digest")
check.truthy(info.fftw_version:find("fftw"), "run_info reports the FFTW version")
check.done()
