-- print_constants_species.lua - prints the engine's constants, a few unit
-- conversions and the species table as "kind name value" lines for
-- tests/ref/test_constants_species.sh.  Not a test by itself.
local pf = require "psiflight"
local names = {"c", "h", "hbar", "e", "kB", "NA", "u", "m_e", "m_n", "m_p", "mu_B", "a0", "alpha", "g_n"}
for _, n in ipairs(names) do print(string.format("constant %s %.17g", n, pf.constants[n])) end
print(string.format("unit eV %.17g", pf.units.eV))
print(string.format("unit eV_as_Hz %.17g", pf.units.as_frequency(pf.units.eV)))
print(string.format("unit eV_as_K %.17g", pf.units.as_temperature(pf.units.eV)))
print(string.format("unit g_n %.17g", pf.units.g_n))
for _, label in ipairs(pf.species_list()) do
  local s = pf.species(label)
  print(string.format("species %s %.17g %s %d %.17g", label, s.mass_u, s.symbol, s.mass_number, s.mass))
end
