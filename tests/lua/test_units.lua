-- test_units.lua - pf.units, pf.constants and the species table.
-- Published values are CODATA 2018 (exact ones are the defining constants of
-- the 2019 SI) and AME2020; the machine-readable comparisons, every entry to
-- all digits against committed excerpts of the source files, are
-- tests/ref/test_constants_species.sh and tests/ref/test_species_ame2020.sh.
local pf = require "psiflight"
local check = require "check"
local U, C = pf.units, pf.constants

-- Defining constants of the 2019 SI, exact (CODATA 2018).
check.equal(C.h, 6.62607015e-34, "h exact [CODATA 2018 / 2019 SI]")
check.equal(C.kB, 1.380649e-23, "kB exact [CODATA 2018 / 2019 SI]")
check.equal(C.e, 1.602176634e-19, "e exact [CODATA 2018 / 2019 SI]")
check.equal(C.c, 299792458, "c exact [CODATA 2018 / 2019 SI]")
check.near(C.hbar, 1.054571817e-34, 1e-9, "hbar = h/2pi", "CODATA 2018 listed value 1.054571817...e-34 (10 digits)")
check.near(C.u, 1.66053906660e-27, 1e-15, "atomic mass constant u", "CODATA 2018")
check.near(C.m_e, 9.1093837015e-31, 1e-15, "electron mass", "CODATA 2018")
check.near(C.m_n, 1.67492749804e-27, 1e-15, "neutron mass", "CODATA 2018")
check.equal(U.g_n, 9.80665, "standard gravity g_n [exact by definition, 3rd CGPM 1901]")
check.equal(C.g_n, U.g_n, "g_n in both tables")

-- Unit relations (SI prefixes are exact: common practice, no source).
check.near(U.mm / U.m, 1e-3, 1e-15, "mm", "SI prefix")
check.near(U.um * 1e6, 1, 1e-15, "um", "SI prefix")
check.near(U.ns * 1e9, 1, 1e-15, "ns", "SI prefix")
check.near(U.twopi_Hz, 2 * math.pi, 1e-15, "twopi_Hz = 2 pi rad/s", "definition of angular frequency")
check.near(U.angular(80 * U.Hz), 2 * math.pi * 80, 1e-15, "angular(80 Hz)", "omega = 2 pi f")
check.near(U.eV, C.e, 1e-15, "eV = e J", "CODATA 2018")
check.near(U.as_temperature(U.kB_uK), 1e-6, 1e-15, "kB x 1 uK expressed as temperature", "E = kB T")
check.near(U.as_frequency(U.h_kHz), 1e3, 1e-15, "h x 1 kHz expressed as frequency", "E = h f")
check.near(U.as_frequency(U.eV), 2.417989242e14, 1e-9, "1 eV as frequency", "CODATA 2018 eV-hertz relationship 2.417989242...e14 Hz")
check.near(U.as_temperature(U.eV), 1.160451812e4, 1e-9, "1 eV as temperature", "CODATA 2018 eV-kelvin relationship 1.160451812...e4 K")
check.near(pf.photon_momentum(780.241e-9), C.h / 780.241e-9, 1e-15, "photon momentum h/lambda", "de Broglie relation")
check.near(pf.photon_wavenumber(1064e-9), 2 * math.pi / 1064e-9, 1e-15, "photon wave number 2 pi/lambda", "definition")

-- Species: AME2020 atomic masses (u); kg = mass_u * u.
local rb = pf.species("87Rb")
local AME_RB = "AME2020 mass_1.mas20, 87Rb line (tests/data/ame2020_mass_1.mas20.excerpt)"
check.equal(rb.mass_micro_u, "86909180.529", "87Rb mass in micro-u, published digits")
check.equal(rb.uncertainty_micro_u, "0.006", "87Rb uncertainty in micro-u, published digits")
check.near(rb.mass_u, 86.909180529, 2e-16, "87Rb mass in u", AME_RB)
check.near(rb.uncertainty_u, 6e-9, 1e-15, "87Rb uncertainty in u", AME_RB)
check.near(rb.mass, rb.mass_u * C.u, 1e-15, "87Rb mass in kg = mass_u * u", "definition of u")
-- u's CODATA 2018 uncertainty 0.00000000050e-27 kg (allascii.txt excerpt)
-- and the AME one add in quadrature (GUM, JCGM 100:2008, 5.1.2).
check.near(rb.uncertainty, math.sqrt((6e-9 * C.u)^2 + (rb.mass_u * 0.00000000050e-27)^2), 1e-14,
           "87Rb uncertainty in kg, AME and u combined", "GUM 5.1.2; CODATA 2018 u uncertainty")
check.equal(rb.atomic_number, 37, "87Rb atomic number")
check.equal(rb.source, "AME2020", "87Rb source named")
check.truthy(rb.reference:find("Chinese Phys. C 45, 030003", 1, true) and rb.reference:find("mass_1.mas20", 1, true),
             "87Rb reference names the publication and the file")
local el = pf.species("electron")
check.equal(el.source, "CODATA 2018", "electron source named")
check.equal(el.atomic_number, nil, "a particle has no atomic number")
check.equal(el.uncertainty, 0.0000000028e-31, "electron kg uncertainty as published (CODATA 2018 allascii.txt)")
for _, label in ipairs{"Rb87", "Rb-87", "rb87", "rubidium-87", "87rb"} do
  check.equal(pf.mass(label), rb.mass, "label '" .. label .. "' names 87Rb")
end
check.equal(pf.mass("electron"), C.m_e, "electron mass from CODATA 2018")
check.equal(pf.mass("neutron"), C.m_n, "neutron mass from CODATA 2018")
check.equal(pf.species("Cs-133").mass_number, 133, "Cs-133 mass number")
local wanted = {"1H", "4He", "6Li", "7Li", "23Na", "39K", "40K", "41K", "40Ca", "52Cr", "53Cr", "85Rb", "87Rb",
                "84Sr", "86Sr", "87Sr", "88Sr", "133Cs", "161Dy", "162Dy", "163Dy", "164Dy", "166Er", "167Er", "168Er",
                "170Yb", "171Yb", "172Yb", "173Yb", "174Yb", "176Yb", "electron", "neutron"}
for _, label in ipairs(wanted) do
  local s = pf.species(label)
  check.truthy(s.mass > 0 and s.label == label, "species " .. label .. " present")
end
-- A user can give any mass directly.
local g = pf.grid{points = 64, span = 20e-6}
local w = pf.gaussian(g, {mass = 40.5 * U.u, width = 1e-6})
check.near(w:mass(), 40.5 * C.u, 1e-15, "explicit mass in kg", "definition of u")

-- Errors name the argument and list close matches.
check.fails(function() return pf.mass("Rb86") end, "unknown species lists close labels", "unknown species 'Rb86'", "85Rb", "87Rb")
check.fails(function() return pf.mass("Unobtainium") end, "unknown species with no close match", "unknown species 'Unobtainium'")
check.fails(function() return pf.gaussian(g, {mass = "K-42", width = 1e-6}) end, "builder with unknown species", "gaussian: unknown species 'K-42'", "41K")
check.fails(function() return pf.gaussian(g, {mass = -1, width = 1e-6}) end, "negative mass", "field 'mass' must be a positive mass")
check.fails(function() return U.umm end, "misspelt unit", "pf.units has no entry 'umm'", "um")
check.fails(function() U.m = 2 end, "units are read-only", "pf.units is read-only")
check.fails(function() return C.hbr end, "misspelt constant", "close matches: hbar")
local n = 0
for _ in pairs(U) do n = n + 1 end
check.truthy(n > 40, "pairs() lists the units")
check.done()
