-- manifest_fallback.lua - test helper: reports results into a manifest.json of
-- the agreed run-manifest schema when the engine itself does not write one
-- (pf.report absent).  It lets the sweep tests exercise resume and the
-- combined table; with an engine that has pf.report it only forwards.
local pf = require "psiflight"
local M = {}
local results = {}

function M.report(name, value, unit)
  if pf.report then return pf.report(name, value, unit) end
  results[name] = {value = value, unit = unit or ""}
end

local function quote(s)
  return '"' .. tostring(s):gsub('[%c"\\]', function(c) return string.format("\\u%04x", c:byte()) end) .. '"'
end

local function keys(t)
  local k = {}
  for name in pairs(t) do k[#k + 1] = name end
  table.sort(k)
  return k
end

-- Writes the manifest atomically (temporary name, then rename).
function M.finish()
  if pf.report then return end
  local info = pf.run_info()
  if not info.output_dir then return end
  local parts = {'{"format": "psiflight-run-manifest", "format_version": 1'}
  parts[#parts + 1] = ', "script": {"path": ' .. quote(pf.script.path) .. ', "sha256": ' .. quote(pf.script.sha256) .. '}'
  local ps = {}
  for _, name in ipairs(keys(pf.params)) do ps[#ps + 1] = quote(name) .. ": " .. quote(pf.params[name]) end
  parts[#parts + 1] = ', "parameters": {' .. table.concat(ps, ", ") .. '}'
  parts[#parts + 1] = string.format(', "seed": %d, "threads": %d, "status": "ok"', info.seed, info.threads)
  local rs = {}
  for _, name in ipairs(keys(results)) do
    rs[#rs + 1] = string.format('%s: {"value": %.17g, "unit": %s}', quote(name), results[name].value, quote(results[name].unit))
  end
  parts[#parts + 1] = ', "results": {' .. table.concat(rs, ", ") .. '}, "outputs": []}\n'
  local path = info.output_dir .. "/manifest.json"
  local f = assert(io.open(path .. ".tmp", "w"))
  f:write(table.concat(parts))
  f:close()
  assert(os.rename(path .. ".tmp", path))
end

return M
