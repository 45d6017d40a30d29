-- print_species.lua - prints every entry of the engine's species table as one
-- tab-separated line for tests/ref/test_species_ame2020.sh.  Not a test by
-- itself.  Numbers are printed with 17 significant digits (enough to give
-- back the exact double); the micro-u values are the engine's strings.
local pf = require "psiflight"
local fields = {"label", "source", "symbol", "atomic_number", "mass_number", "mass_micro_u",
                "uncertainty_micro_u", "mass_u", "uncertainty_u", "mass", "uncertainty", "reference"}
print(table.concat(fields, "\t"))
for _, label in ipairs(pf.species_list()) do
  local s = pf.species(label)
  local row = {}
  for i, f in ipairs(fields) do
    local v = s[f]
    if math.type(v) == "float" then v = string.format("%.17g", v) end
    row[i] = v == nil and "-" or tostring(v)
  end
  print(table.concat(row, "\t"))
end
