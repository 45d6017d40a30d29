-- common.lua - helpers shared by the bundled recipes: physical constants,
-- parameter-table merging, result printing and reporting.
local pf = require "psiflight"
local common = {}

-- Constants from the engine's table (CODATA 2018, h exact since the 2019
-- SI; standard gravity exact by definition, 3rd CGPM 1901), so recipes and
-- the engine cannot disagree about a digit.
common.h = pf.constants.h
common.hbar = pf.constants.hbar
common.u = pf.constants.u
common.g = pf.constants.g_n

-- Mass of a species from the engine's table (AME2020 atoms, CODATA 2018
-- particles) in u, the unit recipe mass parameters are declared in.
function common.mass_u(label)
  return pf.species(label).mass_u
end

-- Merges parameter declaration tables (later ones win), so a script can
-- declare a recipe's parameters together with its own in one pf.parameters.
function common.merge(...)
  local out = {}
  for _, t in ipairs{...} do
    for k, v in pairs(t) do out[k] = v end
  end
  return out
end

-- A copy of a parameter declaration with some defaults replaced (values in
-- each parameter's declared unit, as a person types them), for scripts that
-- run a recipe in their own scenario.
function common.with_defaults(decl, defaults)
  local out = {}
  for name, spec in pairs(decl) do
    local copy = {}
    for k, v in pairs(spec) do copy[k] = v end
    out[name] = copy
  end
  for name, value in pairs(defaults) do
    if not out[name] then error("with_defaults: no parameter '" .. name .. "' to set a default for", 2) end
    out[name].default = value
  end
  return out
end

-- Checks the parameter table a recipe's run was given against the recipe's
-- declared parameters with the engine's one options checker: a misspelt
-- name is an error with a suggestion, never a silently missing value.  The
-- error names the line that called recipe.run (level 3: past this helper
-- and run itself).
function common.check_params(recipe, p)
  return pf.check_options(p, recipe.name .. ".run", common.sorted_keys(recipe.parameters), 3)
end

-- Reports a scalar result: pf.report when the engine has it (the run
-- manifest then carries it), and always one stable "result" line on stdout.
function common.report(name, value, unit)
  if pf.report then pf.report(name, value, unit) end
  print(string.format("result %-28s %.12g %s", name, value, unit or ""))
end

-- Smallest power of two >= n and >= least (default 16: FFT sizes).
function common.pow2(n, least)
  local p = least or 16
  while p < n do p = p * 2 end
  return p
end

-- Probability in [a, b] of a 1D wave, from the engine's probability beyond
-- a plane (w:beyond, evaluated on the band-limited interpolant of the grid
-- state, so a boundary between grid points moves the result smoothly).
-- Limits outside the box are clamped to its edges.  The engine's cost is
-- quadratic in the number of points (it refuses above about 1.4e5).
function common.probability_between(w, a, b)
  local g = w:grid()
  local lo = g:x_axis(1)[1] - g:spacing(1) / 2
  local hi = lo + g:span(1)
  a, b = math.max(a, lo), math.min(b, hi)
  if not (b > a) then return 0 end
  return w:beyond{axis = 1, at = a} - w:beyond{axis = 1, at = b}
end

-- Writes a recipe's main result as files a lab opens (docs/outputs.md), in
-- the run's output folder: NAME.h5 holding files.waves ({item, wave, parts}),
-- files.tables ({item, columns}) and every finite scalar result as a value
-- item; NAME.csv with the first table; and each picture of files.pictures
-- ({file, options} for pf.picture_lines, or {file, wave_or_array, options,
-- map = true} for pf.picture_map).  Returns the paths written.
function common.write_results(name, out, files)
  local paths = {}
  local h5 = pf.h5file(name .. ".h5")
  for _, w in ipairs(files.waves or {}) do h5:put_wave(w[1], w[2], {parts = w[3] or "psi"}) end
  for _, img in ipairs(files.images or {}) do h5:put_image(img[1], img[2], img[3]) end
  for _, t in ipairs(files.tables or {}) do h5:put_table(t[1], t[2]) end
  for _, k in ipairs(common.sorted_keys(out.results)) do
    local v, unit = out.results[k][1], out.results[k][2]
    if v == v and v ~= math.huge and v ~= -math.huge then h5:put_value(k, v, unit or "") end
  end
  paths[#paths + 1] = h5:close()
  if files.tables and files.tables[1] then paths[#paths + 1] = pf.write_csv(name .. ".csv", files.tables[1][2]) end
  for _, pic in ipairs(files.pictures or {}) do
    if pic.map then paths[#paths + 1] = pf.picture_map(pic[1], pic[2], pic[3])
    else paths[#paths + 1] = pf.picture_lines(pic[1], pic[2]) end
  end
  return paths
end

-- Sorted keys of a table, for deterministic output.
function common.sorted_keys(t)
  local keys = {}
  for k in pairs(t) do keys[#keys + 1] = k end
  table.sort(keys)
  return keys
end

return common
