-- test_options.lua - the one options checker, walked over every Lua function
-- that takes an options table.
--
-- The list of such functions is not typed here: it comes from the engine's
-- own registration (pf._option_sets(), filled by each binding file's
-- declarations).  This file only says how to call each one.  Three ways a
-- function could slip through are closed:
--   * a declared set with no caller below fails ("no caller for ...");
--   * a Lua-visible function (module, wave, ensemble, camera, grid, file,
--     generator, potential, progress, region) that is neither declared nor
--     listed in TAKES_NO_OPTIONS fails, so a new function must be classified;
--   * the binding's field readers refuse to read a table that was not checked
--     (an internal error any test calling the function would hit).
-- The wording checked here is the project's own rule (docs/lua-api.md,
-- "Options tables"); there is no outside reference for an error message.
local pf = require "psiflight"
local check = require "check"
pf.setup{planning = "estimate", guard_threshold = math.huge}

-- Objects the callers need, on small grids.
local g1 = pf.grid{points = 64, span = 64e-6}
local g2 = pf.grid{points = {16, 16}, span = {32e-6, 32e-6}}
local w1 = pf.gaussian(g1, {mass = "87Rb", width = 4e-6})
local w2 = pf.gaussian(g2, {mass = "87Rb", width = 4e-6})
local ens = pf.mixture({w1:copy(), w1:copy()}, {0.5, 0.5})
local cam = pf.camera{pixels = {4, 4}, pitch = 4e-6}
local h5 = pf.h5file("options-walk.h5", {overwrite = true})
local gen = pf.random{seed = 3}
local pot = pf.potential(g1, function(x) return 0 end)
local region = pf.box{min = {-1e-6}, max = {1e-6}}
local bar = pf.progress(10, "walk")
local lv = pf.levels{labels = {"F1", "F2"}, waves = {F1 = w1}}
local csv = pf.write_csv("options-walk.csv", {{name = "x", unit = "m", values = {0, 1}}}, {overwrite = true})

-- How to call each declared function with an options table o (the other
-- arguments valid, so the options check is what decides).
local callers = {
  ["pf.setup"] = function(o) pf.setup(o) end,
  ["pf.grid"] = function(o) pf.grid(o) end,
  ["pf.wave"] = function(o) pf.wave(g1, o) end,
  ["pf.gaussian"] = function(o) pf.gaussian(g1, o) end,
  ["pf.momentum_orders"] = function(o) pf.momentum_orders(g1, o) end,
  ["pf.momentum_orders orders[i]"] = function(o)
    pf.momentum_orders(g1, {mass = "87Rb", width = 4e-6, step_wavenumber = 1e6, orders = {o}})
  end,
  ["pf.ground_state"] = function(o) pf.ground_state(g1, o) end,
  ["pf.oscillator"] = function(o) pf.oscillator(g1, o) end,
  ["pf.flat_top"] = function(o) pf.flat_top(g1, o) end,
  ["pf.thomas_fermi"] = function(o) pf.thomas_fermi(g1, o) end,
  ["pf.sampled"] = function(o) pf.sampled(g1, o) end,
  ["pf.thermal"] = function(o) pf.thermal(o) end,
  ["pf.coupling"] = function(o) pf.coupling(o) end,
  ["pf.beam"] = function(o) pf.beam(o) end,
  ["pf.random"] = function(o) pf.random(o) end,
  ["pf.camera"] = function(o) pf.camera(o) end,
  ["camera:expose"] = function(o) cam:expose(w2, o) end,
  ["camera:absorb"] = function(o) cam:absorb(w2, o) end,
  ["pf.box"] = function(o) pf.box(o) end,
  ["pf.half_space"] = function(o) pf.half_space(o) end,
  ["pf.ball"] = function(o) pf.ball(o) end,
  ["pf.histogram"] = function(o) pf.histogram({1, 2, 3}, o) end,
  ["pf.fringes"] = function(o) pf.fringes({1, 2, 3, 4}, {1, 0, 1, 0}, o) end,
  ["pf.grid_advice"] = function(o) pf.grid_advice(o) end,
  ["pf.rank_advice"] = function(o) pf.rank_advice(o) end,
  ["grid_advice kicks[i]"] = function(o) w1:grid_advice{time = 1e-3, kicks = {o}} end,
  ["pf.h5file"] = function(o) pf.h5file("options-walk-2.h5", o) end,
  ["h5file:put_wave"] = function(o) h5:put_wave("cloud", w1, o) end,
  ["pf.write_csv"] = function(o) pf.write_csv("options-walk-3.csv", {{name = "x", values = {1}}}, o) end,
  ["pf.write_csv columns[i]"] = function(o) pf.write_csv("options-walk-4.csv", {o}) end,
  ["h5file:put_table columns[i]"] = function(o) h5:put_table("walk", {o}) end,
  ["h5file:put_image"] = function(o) h5:put_image("walk_image", {{1, 2}, {3, 4}}, o) end,
  ["pf.load_wave"] = function(o) pf.load_wave(csv, o) end,
  ["pf.picture_map"] = function(o) pf.picture_map("options-walk.png", w2, o) end,
  ["pf.picture_lines"] = function(o) pf.picture_lines("options-walk.png", o) end,
  ["pf.picture_lines series[i]"] = function(o) pf.picture_lines("options-walk.png", {series = {o}}) end,
  ["pf.picture_lines residual"] = function(o) pf.picture_lines("options-walk.png", {residual = o,
    series = {{x = {0, 1}, y = {0, 1}}, {x = {0, 1}, y = {0, 1.1}}}}) end,
  ["pf.picture_carpet"] = function(o) pf.picture_carpet("options-walk.png", w1, o) end,
  ["pf.picture_carpet marks[i]"] = function(o) pf.picture_carpet("options-walk.png", w1, {duration = 1e-6, frames = 2, marks = {o}}) end,
  ["pf.parameters spec"] = function(o) pf.parameters{walk_value = o} end,
  ["wave:far_field"] = function(o) w1:far_field(1e-3, o) end,
  ["wave:fly"] = function(o) w1:copy():fly(1e-6, o) end,
  ["wave:kick"] = function(o) w1:copy():kick(1e5, o) end,
  ["wave:fly_long"] = function(o) w1:copy():fly_long(1e-3, o) end,
  ["wave:fly_scaled"] = function(o) w1:copy():fly_scaled(1e-3, o) end,
  ["wave:grid_advice"] = function(o) w1:grid_advice(o) end,
  ["wave:grating"] = function(o) w1:copy():grating(o) end,
  ["wave:lens"] = function(o) w1:copy():lens(1e-3, o) end,
  ["wave:slit"] = function(o) w1:copy():slit(o) end,
  ["wave:slits"] = function(o) w1:copy():slits(o) end,
  ["wave:mask_grating"] = function(o) w1:copy():mask_grating(o) end,
  ["wave:aperture"] = function(o) w2:copy():aperture(o) end,
  ["wave:select_velocity"] = function(o) w1:copy():select_velocity(o) end,
  ["wave:evolve"] = function(o) w1:copy():evolve(1e-6, o) end,
  ["wave:expand"] = function(o) w1:copy():expand(1e-6, o) end,
  ["wave:relax"] = function(o) w1:copy():relax(o) end,
  ["wave:energy"] = function(o) w1:energy(o) end,
  ["state:distribution"] = function(o) w1:distribution(o) end,
  ["state:profile"] = function(o) w2:profile(1, o) end,
  ["state:marginal"] = function(o) w2:marginal(o) end,
  ["state:slice"] = function(o) w2:slice(o) end,
  ["state:radial_profile"] = function(o) w2:radial_profile(o) end,
  ["state:sample"] = function(o) w1:sample(4, o) end,
  ["state:fringes"] = function(o) w1:fringes(o) end,
  ["state:flux"] = function(o) w1:flux(o) end,
  ["state:beyond"] = function(o) w1:beyond(o) end,
  ["state:arrival_times"] = function(o) w1:arrival_times(o) end,
  ["state:wigner"] = function(o) w1:wigner(o) end,
  ["state:measure_region"] = function(o) w1:copy():measure_region(region, o) end,
  ["state:measure_position"] = function(o) w1:copy():measure_position(o) end,
  ["pf.levels"] = function(o) pf.levels(o) end,
  ["levels:pulse"] = function(o) lv:pulse(o) end,
  ["levels:bragg"] = function(o) lv:bragg(o) end,
  ["levels:fly"] = function(o) lv:fly(1e-6, o) end,
  ["levels:order_populations"] = function(o) lv:order_populations(o) end,
  ["levels:sample"] = function(o) lv:sample(3, o) end,
  ["levels:evolve"] = function(o) lv:evolve(1e-6, o) end,
}

-- Lua-visible functions that take no options table (positional numbers,
-- strings, objects, or data tables: lists of values, columns, members).
local TAKES_NO_OPTIONS = {
  -- module
  "pf.complex", "pf.polar", "pf.cexp", "pf.run_info", "pf.species", "pf.mass", "pf.species_list",
  "pf.photon_momentum", "pf.photon_wavenumber", "pf.mixture", "pf.mask", "pf.potential", "pf.progress",
  "pf.read_csv", "pf.report", "pf.output_path", "pf.outputs", "pf.sha256", "pf.resonant_cross_section",
  "pf.parameters", "pf.check_options", "pf._option_sets", "pf._frame_aware", "pf._frame_guard_probe", "pf.mpi_info", "pf._dist_aware",
  -- wave functions
  "wave:psi", "wave:phi", "wave:set_psi", "wave:set_phi", "wave:density", "wave:momentum_density", "wave:copy",
  "wave:normalize", "wave:scale", "wave:mass", "wave:clock", "wave:representation", "wave:grid", "wave:log",
  "wave:log_text", "wave:close", "wave:norm", "wave:frame", "wave:x_axis", "wave:k_axis", "wave:position_mean", "wave:position_variance",
  "wave:position_width", "wave:momentum_mean", "wave:momentum_variance", "wave:momentum_width",
  "wave:wavenumber_mean", "wave:wavenumber_width", "wave:velocity_mean", "wave:kinetic_energy",
  "wave:position_momentum_covariance", "wave:add", "wave:psi_at", "wave:density_at", "wave:mark_periodic",
  "wave:inner", "wave:guard", "wave:imprint", "wave:mask", "wave:momentum_mask",
  "wave:shift", "wave:fall", "wave:log_columns", "wave:fidelity", "wave:current",
  "wave:column_density", "wave:probability_in", "wave:position_covariance", "wave:momentum_covariance",
  -- ensembles
  "ensemble:count", "ensemble:member", "ensemble:weight", "ensemble:weights", "ensemble:each", "ensemble:copy",
  "ensemble:close", "ensemble:norm", "ensemble:position_mean", "ensemble:position_variance",
  "ensemble:position_width", "ensemble:momentum_mean", "ensemble:momentum_variance", "ensemble:momentum_width",
  "ensemble:wavenumber_mean", "ensemble:wavenumber_width", "ensemble:velocity_mean", "ensemble:kinetic_energy",
  "ensemble:current", "ensemble:column_density", "ensemble:probability_in", "ensemble:position_covariance",
  "ensemble:momentum_covariance",
  -- other objects
  "grid:dim", "grid:points", "grid:total", "grid:span", "grid:spacing", "grid:origin", "grid:kspacing",
  "grid:knyquist", "grid:x", "grid:k", "grid:x_axis", "grid:k_axis", "grid:close",
  "h5file:put_density", "h5file:put_table", "h5file:put_value", "h5file:close", "h5file:discard", "h5file:path",
  "random:uniform", "random:normal", "random:poisson", "random:raw",
  "potential:close", "potential:range", "potential:cache_status", "progress:advance", "progress:finish", "progress:shown",
  "complex:abs", "complex:arg", "complex:conj", "complex:abs2",
  "levels:populations", "levels:level", "levels:labels", "levels:energy", "levels:clock", "levels:norm",
  "levels:close",
  "pf.units.angular", "pf.units.as_frequency", "pf.units.as_temperature",
}

local sets = pf._option_sets()
local declared_names = {}
for name in pairs(sets) do declared_names[#declared_names + 1] = name end
table.sort(declared_names)
check.truthy(#declared_names >= 50, "the engine declares its option sets (" .. #declared_names .. ")")

-- Every declared set has a caller, and every caller a declared set.
for _, name in ipairs(declared_names) do
  check.truthy(callers[name] ~= nil, "caller for declared option set " .. name)
end
for name in pairs(callers) do
  if not sets[name] then error("caller for '" .. name .. "', which the engine does not declare", 0) end
end

-- Methods of an object's metatable (a table __index, or the ensemble's
-- 'methods' table behind its __index function).
local function methods_of(obj)
  local mt = getmetatable(obj)
  return type(mt.__index) == "table" and mt.__index or mt.methods
end

-- Every Lua-visible function is classified: declared, or in TAKES_NO_OPTIONS.
local no_options = {}
for _, n in ipairs(TAKES_NO_OPTIONS) do no_options[n] = true end
local seen = {}
local function classify(prefix, tbl, also)
  for key, value in pairs(tbl) do
    if type(value) == "function" then
      local name = prefix .. key
      seen[name] = true
      local ok = sets[name] or no_options[name] or (also and sets[also .. key])
      if not ok then
        error("'" .. name .. "' is neither a declared option set nor listed in TAKES_NO_OPTIONS: "
          .. "declare its keys (pfl_options.h) or list it here", 0)
      end
    end
  end
end
classify("pf.", pf)
classify("wave:", methods_of(w1), "state:")
classify("ensemble:", methods_of(ens), "state:")
classify("camera:", methods_of(cam))
classify("grid:", methods_of(g1))
classify("h5file:", methods_of(h5))
classify("random:", methods_of(gen))
classify("potential:", methods_of(pot))
classify("progress:", methods_of(bar))
classify("complex:", methods_of(pf.complex(1, 2)))
classify("levels:", methods_of(lv))
classify("pf.units.", pf.units)
-- Tables of functions inside the module are scanned too; a new one must be
-- added to the scan.
for key, value in pairs(pf) do
  if type(value) == "table" then
    for _, v in pairs(value) do
      if type(v) == "function" and key ~= "units" then error("pf." .. key .. " holds functions the walk does not scan", 0) end
    end
  end
end
check.truthy(next(seen) ~= nil, "every Lua-visible function is classified (declared or taking no options)")
-- The list of exceptions must not go stale either.
for name in pairs(no_options) do
  if not seen[name] then error("TAKES_NO_OPTIONS lists '" .. name .. "', which no object has", 0) end
end
-- A declared set names a function that exists (sub-tables: their parent).
for _, name in ipairs(declared_names) do
  local base = name:match("^(%S+)")
  if base == "grid_advice" then base = "pf.grid_advice" end
  local kind, fn = base:match("^(%a+)[.:]([%w_]+)$")
  local exists = seen[base] or (kind == "state" and seen["wave:" .. fn] and seen["ensemble:" .. fn])
  check.truthy(exists, "declared set " .. name .. " names an existing function")
end

-- The walk: a near miss of a real key, and a key like none of them.
local here = "test_options.lua:"
for _, name in ipairs(declared_names) do
  local keys = sets[name]
  local longest = keys[1]
  for _, k in ipairs(keys) do if #k > #longest then longest = k end end
  local typo = longest:sub(1, -2) -- one letter short: distance 1
  check.fails(function() callers[name]({[typo] = 1}) end, name .. ": near miss '" .. typo .. "'",
    here, name .. ": unknown option '" .. typo .. "' (did you mean '" .. longest .. "'?)")
  local parts = {here, name .. ": unknown option 'zzqq_frobnitz' (known options: "}
  for _, k in ipairs(keys) do parts[#parts + 1] = k end
  check.fails(function() callers[name]({zzqq_frobnitz = 1}) end, name .. ": unrelated key lists the known ones",
    table.unpack(parts))
end

-- The examples the issue named, each now an error with the intended key.
check.fails(function() w1:copy():fly_long(10e-3, {acceleraton = {0, -9.8}}) end, "fly_long acceleraton",
  "wave:fly_long: unknown option 'acceleraton' (did you mean 'acceleration'?)")
check.fails(function() pf.camera{pixels = 4, pitch = 1e-6, psff = 3e-6} end, "camera psff", "did you mean 'psf'?")
check.fails(function() w1:copy():fly_scaled(1e-3, {pionts = 64}) end, "fly_scaled pionts", "did you mean 'points'?")
check.fails(function() pf.setup{planing = "estimate"} end, "setup planing", "did you mean 'planning'?")
check.fails(function() pf.grid{points = 8, spn = 1} end, "grid spn", "unknown option 'spn' (did you mean 'span'?)")
check.fails(function() pf.grid{points = 8, span = 1, orgin = 0} end, "grid orgin", "did you mean 'origin'?")
check.fails(function() pf.wave(g1, {mass = 1e-25, postion = function() return 1 end}) end, "wave postion",
  "did you mean 'position'?")
check.fails(function() pf.thermal{grid = g1, mass = "87Rb", omega = 600, temprature = 1e-7} end, "thermal temprature",
  "did you mean 'temperature'?")
check.fails(function() w1:arrival_times{at = 0, to = 1e-3, bogus = 1} end, "arrival_times bogus", "unknown option 'bogus'")
check.fails(function() w1:fringes{perod = 1e-6} end, "fringes perod", "did you mean 'period'?")
check.fails(function() pf.picture_map("x.png", w2, {xrange = {0, 1}}) end, "picture_map xrange",
  "pf.picture_map: unknown option 'xrange'", "did you mean 'x_range'?")
check.fails(function() pf.picture_lines("x.png", {xlabel = "x", series = {{x = {0, 1}, y = {0, 1}}}}) end,
  "picture_lines xlabel", "unknown option 'xlabel'")

-- One spelling per concept: 'center' everywhere; 'centre' is refused with
-- the suggestion.
check.fails(function() pf.grid_advice{mass = 1e-25, time = 1e-3, width = 1e-6, centre = 0} end,
  "grid_advice centre refused", "pf.grid_advice: unknown option 'centre' (did you mean 'center'?)")
check.fails(function() pf.gaussian(g1, {mass = "87Rb", width = 4e-6, centre = 0}) end, "gaussian centre refused",
  "did you mean 'center'?")
check.fails(function() pf.load_wave(csv, {representation = "position"}) end, "load_wave representation refused",
  "pf.load_wave: unknown option 'representation' (did you mean 'space'?)")
check.fails(function() pf.picture_map("x.png", w2, {representation = "momentum"}) end,
  "picture_map representation refused", "did you mean 'space'?")
check.fails(function() pf.thermal{grid = g1, mass = "87Rb", trap = 600, temperature = 1e-7} end,
  "thermal trap refused", "pf.thermal: unknown option 'trap' (did you mean 'omega'?)")
-- No declared set uses a refused spelling, anywhere in the API.
local refused = {centre = "center", representation = "space", trap = "omega"}
for name, keys in pairs(sets) do
  for _, k in ipairs(keys) do
    if refused[k] then error(name .. " declares '" .. k .. "'; the API spells '" .. refused[k] .. "'", 0) end
  end
end
check.truthy(true, "no option set uses a refused spelling (centre, representation, trap)")

-- Keys are strings; option tables are plain tables.
check.fails(function() pf.grid{8, span = 1} end, "positional entry in an options table", here,
  "pf.grid: option names must be strings, got the key 1")
check.fails(function() pf.grid(setmetatable({points = 8, span = 1}, {})) end, "options table with a metatable",
  here, "pf.grid: the options table must be a plain table")

-- pf.setup reads each field once, raw: a table whose __index answers
-- differently on each read is refused before anything is read.
do
  local reads = 0
  local sneaky = setmetatable({}, {__index = function(_, k)
    reads = reads + 1
    if k == "output_dir" and reads > 1 then return "/tmp/elsewhere" end
  end})
  check.fails(function() pf.setup(sneaky) end, "setup refuses a table with __index", "pf.setup", "plain table")
  check.equal(reads, 0, "setup ran no __index while refusing")
  check.truthy(not pf.run_info().output_dir or pf.run_info().output_dir ~= "/tmp/elsewhere",
    "the output folder did not move")
end
-- Wrong types are errors, not conversions or silent skips.
local cap = pf.run_info().memory_cap
check.fails(function() pf.setup{memory_cap = "1e18"} end, "memory_cap as a string refused", here,
  "pf.setup: field 'memory_cap'", "'1e18'")
check.equal(pf.run_info().memory_cap, cap, "memory cap unchanged after the refusal")
check.fails(function() pf.setup{strict = "yes"} end, "strict must be a boolean", here, "strict", "true or false")
check.fails(function() pf.setup{seed = "7"} end, "seed as a string refused", here, "seed", "'7'")
check.fails(function() pf.setup{distribute = 1} end, "distribute must be a boolean", here, "distribute", "true or false")
check.fails(function() pf.setup{planning = 1} end, "planning must be a string", here, "planning", "got 1")
-- Numeric strings are not numbers in any options table.
check.fails(function() pf.grid{points = "64", span = 1e-4} end, "grid points as a string refused", here, "points", "'64'")
check.fails(function() pf.random{seed = "3"} end, "random seed as a string refused", "seed")
check.fails(function() w1:copy():slits{count = "2", width = 1e-6, pitch = 4e-6} end, "slits count as a string refused",
  "count", "'2'")
check.fails(function() w1:copy():grating{depth = 1, period = 1e-6, axis = "1"} end, "axis as a string refused", "axis")
check.fails(function() w2:marginal{axes = {"1"}} end, "marginal axes as strings refused", "axis")
-- One reader for 'space' everywhere: the same refusal of a bad value.
check.fails(function() w1:distribution{space = "momentun"} end, "distribution space value", "field 'space'", "'momentun'")
check.fails(function() pf.picture_map("x.png", w2, {space = "k"}) end, "picture_map space value", "field 'space'", "'k'")
check.fails(function() pf.load_wave(csv, {space = 2}) end, "load_wave space value", "field 'space'", "got 2")
-- Nothing is applied when one field is bad.
local seed = pf.run_info().seed
check.fails(function() pf.setup{seed = seed + 5, threads = 0} end, "bad threads refuses the whole call", "threads")
check.equal(pf.run_info().seed, seed, "seed not applied when another field was bad")
check.fails(function() pf.setup{seed = seed + 5, guard_threshold = -1} end, "bad guard threshold refuses the whole call",
  "guard_threshold")
check.equal(pf.run_info().seed, seed, "seed not applied when a field checked after it was bad")

-- The same checker for Lua code (the bundled recipes).
check.fails(function() pf.check_options({tof = 1, pixle = 2}, "demo.run", {"tof", "pixel"}, 1) end,
  "pf.check_options from Lua", here, "demo.run: unknown option 'pixle' (did you mean 'pixel'?)")
do
  local tof = require "psiflight.recipes.tof_image"
  -- Declared defaults in SI (the units tof_image declares), a small grid cap
  -- so that an unchecked run would stop quickly on its own error.
  local si = {u = pf.constants.u, Hz = 1, ms = 1e-3, um = 1e-6}
  local p = {}
  for k, spec in pairs(tof.parameters) do p[k] = spec.default * (si[spec.unit] or 1) end
  p.max_points = 32
  p.pixle = p.pixel
  check.fails(function() tof.run(p) end, "recipe run refuses a misspelt parameter", here,
    "tof_image.run: unknown option 'pixle' (did you mean 'pixel'?)")
end

h5:discard()
check.done()
