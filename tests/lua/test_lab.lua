-- test_lab.lua - pf.coupling and pf.beam through the runner: the published
-- formulas written out here, tabulated beam values, a Thomas-Fermi
-- consequence of the 3D coupling through relax, and the errors on bad input.
local pf = require "psiflight"
local check = require "check"
pf.setup{planning = "estimate", guard_threshold = math.huge}
local C = pf.constants
local hbar, pi = C.hbar, math.pi
local a0 = 5.29177210903e-11 -- Bohr radius (m), CODATA 2018 (tests/data/codata2018_allascii.excerpt, line "Bohr radius")
local m = pf.mass("87Rb")
local a = 100 * a0

-- 3D: g = 4 pi hbar^2 a N / m (Pethick & Smith, Bose-Einstein Condensation in
-- Dilute Gases, U0 = 4 pi hbar^2 a / m), for psi normalised to 1: g = N U0.
local c3 = pf.coupling{scattering_length = a, atoms = 1e5, mass = "87Rb", dim = 3}
check.near(c3.g, 4 * pi * hbar^2 * a * 1e5 / m, 1e-14, "3D g = 4 pi hbar^2 a N / m", "Pethick & Smith")
check.equal(c3.unit, "J m^3", "3D unit")

-- Quasi-1D: 2 hbar omega_perp a N; with Olshanii's 1/(1 - 1.0326 a/a_perp)
-- (M. Olshanii, PRL 81, 938 (1998)).  Hz and rad/s give the same.
local wp = 2 * pi * 20e3
local aperp = math.sqrt(hbar / (m * wp))
local c1 = pf.coupling{scattering_length = a, atoms = 2000, mass = m, dim = 1, transverse_omega = wp}
check.near(c1.g, 2 * hbar * wp * a * 2000, 1e-14, "1D g = 2 hbar omega_perp a N", "Olshanii PRL 81, 938, weak limit")
local c1o = pf.coupling{scattering_length = a, atoms = 2000, mass = m, dim = 1, transverse_frequency = 20e3,
                        olshanii = true}
check.near(c1o.g, 2 * hbar * wp * a * 2000 / (1 - 1.0326 * a / aperp), 1e-13, "1D g with the Olshanii correction",
           "Olshanii PRL 81, 938 (1998)")
check.near(c1o.confinement_length, aperp, 1e-14, "a_perp = sqrt(hbar / (m omega_perp))", "Olshanii PRL 81, 938")

-- Quasi-2D: 2 sqrt(2 pi) hbar^2 a N / (m a_z) (Petrov, Holzmann, Shlyapnikov,
-- PRL 84, 2551 (2000)).
local wz = 2 * pi * 5e3
local az = math.sqrt(hbar / (m * wz))
local c2 = pf.coupling{scattering_length = a, atoms = 3e4, mass = "87Rb", dim = 2, transverse_omega = wz}
check.near(c2.g, 2 * math.sqrt(2 * pi) * hbar^2 * a * 3e4 / (m * az), 1e-14, "2D g = 2 sqrt(2 pi) hbar^2 a N / (m a_z)",
           "Petrov, Holzmann, Shlyapnikov PRL 84, 2551")

-- Thomas-Fermi consequence: in a 3D isotropic trap the GP chemical potential
-- tends to mu_TF = (hbar omega / 2) (15 N a / a_ho)^(2/5) (Pethick & Smith;
-- common practice).  At 15 N a / a_ho = 2000 (mu_TF = 10.5 hbar omega) the
-- relaxed mu lies above it by the kinetic (surface) energy: 1.34% on this
-- grid, the same on 48^3; at 20000 it is 0.26% (checked when this was
-- written).  Tolerance: above, by less than 2%.  Passing N times the one-atom
-- coupling is what makes this hold; g_one_atom alone would miss by far.
do
  local omega = 2 * pi * 100
  local aho = math.sqrt(hbar / (m * omega))
  local N = 2000 * aho / (15 * a)
  local c = pf.coupling{scattering_length = a, atoms = N, mass = "87Rb", dim = 3}
  local mu_tf = 0.5 * hbar * omega * 2000 ^ 0.4
  local R = aho * math.sqrt(2 * mu_tf / (hbar * omega))
  local g = pf.grid{points = {32, 32, 32}, span = {2.6 * R, 2.6 * R, 2.6 * R}}
  local w = pf.ground_state(g, {mass = "87Rb", omega = omega})
  local V = pf.potential(g, function(x, y, z) return 0.5 * m * omega ^ 2 * (x * x + y * y + z * z) end)
  local _, info = w:relax{potential = V, g = c.g, dt = 0.02 / omega * (hbar * omega / mu_tf), tolerance = 1e-9}
  check.truthy(info.converged, "3D mean-field relax converged")
  local gap = info.chemical_potential / mu_tf - 1
  check.truthy(gap > 0 and gap < 0.02, string.format("3D mu above mu_TF by %.2f%% (< 2%%)", 100 * gap))
  check.near(info.chemical_potential, mu_tf, 0.02, "3D mu -> (hbar omega/2)(15 N a/a_ho)^(2/5)",
             "Thomas-Fermi, Pethick & Smith; common practice")
end

-- Beams.  200 keV electrons: lambda = 2.508 pm, m/m0 = 1.391 (Williams &
-- Carter, Transmission Electron Microscopy, table of electron properties;
-- quoted from memory).
local e = pf.beam{particle = "e", kinetic_energy = 200e3 * C.e}
check.close(e.wavelength, 2.508e-12, 0.0005e-12, "200 keV electron wavelength 2.508 pm", "Williams & Carter table, from memory")
check.close(e.gamma, 1.391, 0.0005, "200 keV electron m/m0 = 1.391", "Williams & Carter table, from memory")
local ek, m0, c = 200e3 * C.e, C.m_e, C.c
local p = math.sqrt(2 * m0 * ek * (1 + ek / (2 * m0 * c * c)))
check.near(e.wavelength, C.h / p, 1e-14, "lambda = h / sqrt(2 m0 E (1 + E / 2 m0 c^2))", "relativistic de Broglie")
check.near(e.velocity, p * c * c / (ek + m0 * c * c), 1e-14, "v = p c^2 / E_total", "special relativity")
check.near(e.transverse_mass, (1 + ek / (m0 * c * c)) * m0, 1e-14, "transverse mass gamma m0", "special relativity")
check.near(e.flight_time(0.3), 0.3 / e.velocity, 1e-15, "flight_time(L) = L / v", "definition")
-- Paraxial check through the engine: a Gaussian of waist w0 flown for
-- t = flight_time(L) with the transverse mass widens as a Gaussian beam,
-- w(L) = w0 sqrt(1 + (L / z_R)^2), z_R = k w0^2 / 2 (amplitude waist; Siegman,
-- Lasers, ch. 17).  The amplitude exp(-r^2 / w0^2) has rms width w0 / 2.
do
  local w0 = 20e-9
  local L = 1.5 * e.wavenumber * w0 ^ 2 / 2
  local g = pf.grid{points = 512, span = 40 * w0}
  local psi = pf.gaussian(g, {mass = e.transverse_mass, width = w0 / 2})
  psi:fly(e.flight_time(L))
  local zr = e.wavenumber * w0 ^ 2 / 2
  check.near((psi:position_width()), w0 / 2 * math.sqrt(1 + (L / zr) ^ 2), 1e-9, "paraxial Gaussian beam width after L",
             "Gaussian beam w(z), Siegman, Lasers")
end

-- Thermal neutrons: 25.3 meV -> 1.798 Angstrom, 2200 m/s (common practice).
local n = pf.beam{particle = "n", kinetic_energy = 25.3e-3 * C.e}
check.close(n.wavelength, 1.798e-10, 0.0005e-10, "thermal neutron 1.798 Angstrom", "common practice")
check.close(n.velocity, 2200, 1, "thermal neutron 2200 m/s", "common practice")

-- Bad input: a clear error naming the value.
check.fails(function() pf.beam{particle = "e", kinetic_energy = -1e-15} end, "negative energy refused",
            "beam", "kinetic energy must be positive", "-1e-15")
check.fails(function() pf.beam{particle = "muon", kinetic_energy = 1e-15} end, "unknown particle refused",
            "unknown particle 'muon'")
check.fails(function() pf.beam{kinetic_energy = 1e-15} end, "no particle refused", "exactly one of 'particle'")
check.fails(function() pf.coupling{scattering_length = a, atoms = 1e3, mass = m, dim = 1} end,
            "1D without transverse frequency refused", "in 1D give the transverse confinement")
check.fails(function() pf.coupling{scattering_length = a, atoms = 1e3, mass = m, dim = 2} end,
            "2D without axial frequency refused", "in 2D give the axial confinement")
check.fails(function() pf.coupling{scattering_length = 1.2 * aperp, atoms = 1e3, mass = m, dim = 1,
                                   transverse_omega = wp} end, "a >= a_perp refused", "must be well below")
check.fails(function() pf.coupling{scattering_length = 0.99 * aperp, atoms = 1e3, mass = m, dim = 1,
                                   transverse_omega = wp, olshanii = true} end,
            "Olshanii beyond the confinement-induced resonance refused", "diverges")
check.fails(function() pf.coupling{scattering_length = a, atoms = 1e3, mass = m, dim = 3, transverse_omega = wp} end,
            "transverse frequency in 3D refused", "no meaning in 3D")
check.fails(function() pf.coupling{scattering_length = a, atoms = 1e3, mass = m, dim = 4} end, "dim 4 refused",
            "'dim' must be 1, 2 or 3, got 4")
check.done()
