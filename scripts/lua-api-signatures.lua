-- lua-api-signatures.lua - what editors are told about each Lua function of
-- psiflight that cannot be read from the built module: parameter names and
-- types, return types, one line of help.  scripts/gen-annotations.lua turns
-- it, together with the module itself (which functions and methods exist,
-- which option keys each declares), into LuaLS annotations; it stops with a
-- message when a registered function has no entry here or an entry names a
-- function that no longer exists (tests/runner/test_annotations.sh).
--
-- functions["KEY"] = {"PARAMS", "RETURNS", "help"}
--   KEY      pf.NAME, pf.TABLE.NAME, CLASS:NAME (grid, wave, ensemble,
--            camera, h5file, random, potential, progress, complex), or
--            state:NAME for a method of both wave functions and ensembles
--   PARAMS   "name: type, name?: type" (? = may be omitted; ... for a
--            variable count); the type `options` is the function's declared
--            options table, whose keys the generator reads from the checker
--   RETURNS  LuaLS return types, comma-separated for several results;
--            "" for none
-- Types are LuaLS types: number, integer, string, boolean, table, function,
-- any, number[], psiflight.wave, ... (docs/editors.md).
local W, E, G = "psiflight.wave", "psiflight.ensemble", "psiflight.grid"
local S = "psiflight.wave|psiflight.ensemble"
local C = "psiflight.complex"
local PERAXIS = "number|number[]" -- a number in 1D, one per axis otherwise

return {
  classes = {
    state = {doc = "Methods shared by wave functions and ensembles (incoherent mixtures)."},
    wave = {parent = "state", doc = "A wave function on a grid (pf.wave, pf.gaussian and the other builders)."},
    ensemble = {parent = "state", doc = "An incoherent mixture of wave functions with weights (pf.mixture, pf.thermal)."},
    grid = {doc = "A periodic grid of 1 to 3 axes (pf.grid)."},
    camera = {doc = "A camera with pixels, resolution, efficiency and shot noise (pf.camera)."},
    h5file = {doc = "An HDF5 output file in the psiflight layout, written atomically when closed (pf.h5file)."},
    random = {doc = "A seeded random number generator (pf.random)."},
    potential = {doc = "A potential sampled on a grid, for evolve and relax (pf.potential)."},
    progress = {doc = "A progress bar on stderr, quiet when stderr is not a terminal (pf.progress)."},
    region = {doc = "A region of space for probability_in and measure_region (pf.box, pf.ball, pf.half_space, pf.mask)."},
    complex = {
      doc = "A complex number; arithmetic mixes freely with Lua numbers.",
      extra = {
        "---@field re number real part",
        "---@field im number imaginary part",
        "---@operator add(number|psiflight.complex): psiflight.complex",
        "---@operator sub(number|psiflight.complex): psiflight.complex",
        "---@operator mul(number|psiflight.complex): psiflight.complex",
        "---@operator div(number|psiflight.complex): psiflight.complex",
        "---@operator pow(number|psiflight.complex): psiflight.complex",
        "---@operator unm: psiflight.complex",
      },
    },
  },

  -- Module fields that are not functions: {type, help}.
  fields = {
    constants = {"psiflight.constants", "physical constants in SI units (CODATA 2018)"},
    units = {"psiflight.units", "unit factors (multiply to convert to SI) and unit helpers"},
    version = {"string", "the engine version"},
    i = {C, "the imaginary unit"},
    -- set by the runner only (absent under a plain lua5.4)
    script = {"psiflight.script", "the running script: path, label, sha256, folder"},
    params = {"table<string, number|string>", "the raw --set values by name (prefer pf.parameters)"},
  },

  functions = {
    -- complex numbers
    ["pf.complex"] = {"re: number, im?: number", C, "re + i im"},
    ["pf.polar"] = {"r: number, theta: number", C, "r e^(i theta)"},
    ["pf.cexp"] = {"z: number|psiflight.complex", C, "e^z for a number or complex z"},
    ["complex:abs"] = {"", "number", "modulus |z|"},
    ["complex:abs2"] = {"", "number", "squared modulus |z|^2"},
    ["complex:arg"] = {"", "number", "phase in rad"},
    ["complex:conj"] = {"", C, "complex conjugate"},

    -- settings, run, units, species
    ["pf.setup"] = {"opts: options", "", "engine settings: threads, FFTW planning, default acceleration, guards"},
    ["pf.run_info"] = {"", "table", "facts about this run: seed, output_dir, engine_allocations, ..."},
    ["pf.check_options"] = {"tbl: table, name: string, keys: string[], level?: integer", "",
      "applies the options checker to a table of your own function (unknown keys are errors with a suggestion)"},
    ["pf.parameters"] = {"spec: table", "table",
      "declares the script's parameters with defaults and units; returns their values (--set overrides)"},
    ["pf.species"] = {"label: string", "table",
      "a species by label (\"87Rb\", \"electron\"): mass in kg and u with uncertainty and source (AME2020, CODATA 2018)"},
    ["pf.mass"] = {"label: string", "number", "mass of a species in kg"},
    ["pf.species_list"] = {"", "string[]", "the labels of the species table"},
    ["pf.photon_momentum"] = {"lambda: number", "number", "h / lambda (kg m/s)"},
    ["pf.photon_wavenumber"] = {"lambda: number", "number", "2 pi / lambda (1/m)"},
    ["pf.resonant_cross_section"] = {"lambda: number", "number", "3 lambda^2 / 2 pi, the resonant two-level cross-section (m^2)"},
    ["pf.units.angular"] = {"f: number", "number", "2 pi f (rad/s for f in Hz)"},
    ["pf.units.as_frequency"] = {"energy: number", "number", "E / h (Hz)"},
    ["pf.units.as_temperature"] = {"energy: number", "number", "E / kB (K)"},
    ["pf.beam"] = {"opts: options", "table",
      "a (relativistic) particle beam: wavelength, wavenumber, momentum, velocity, gamma, transverse_mass, flight_time(L)"},
    ["pf.coupling"] = {"opts: options", "table", "mean-field coupling g from a scattering length, for evolve and relax"},

    -- grids
    ["pf.grid"] = {"opts: options", G, "a periodic grid: points and span (or spacing) per axis, origin"},
    ["pf.grid_advice"] = {"opts: options", "table", "grid proposals for a planned flight (points, span) before any state exists"},
    ["grid:dim"] = {"", "integer", "number of axes"},
    ["grid:total"] = {"", "integer", "number of points"},
    ["grid:points"] = {"axis?: integer", "integer", "points on an axis"},
    ["grid:span"] = {"axis?: integer", "number", "period of an axis (m)"},
    ["grid:spacing"] = {"axis?: integer", "number", "point spacing dx (m)"},
    ["grid:origin"] = {"axis?: integer", "number", "centre of an axis (m)"},
    ["grid:kspacing"] = {"axis?: integer", "number", "2 pi / span (1/m)"},
    ["grid:knyquist"] = {"axis?: integer", "number", "pi / dx (1/m)"},
    ["grid:x"] = {"axis: integer, i: integer", "number", "coordinate of point i (1-based) on an axis (m)"},
    ["grid:k"] = {"axis: integer, i: integer", "number", "wave number i (1-based, ascending) on an axis (1/m)"},
    ["grid:x_axis"] = {"axis?: integer", "number[]", "all coordinates of an axis (m)"},
    ["grid:k_axis"] = {"axis?: integer", "number[]", "all wave numbers of an axis, ascending (1/m)"},
    ["grid:close"] = {"", "", "releases the handle (waves keep their grid alive)"},

    -- state builders
    ["pf.wave"] = {"grid: psiflight.grid, opts: options", W, "a wave function from a function of position or of wave number"},
    ["pf.gaussian"] = {"grid: psiflight.grid, opts: options", W, "a Gaussian packet: width or covariance, center, wavenumber or velocity, chirp"},
    ["pf.ground_state"] = {"grid: psiflight.grid, opts: options", W, "harmonic-trap ground state"},
    ["pf.oscillator"] = {"grid: psiflight.grid, opts: options", W, "harmonic-oscillator eigenstate (excited states)"},
    ["pf.thomas_fermi"] = {"grid: psiflight.grid, opts: options", W, "Thomas-Fermi condensate profile"},
    ["pf.flat_top"] = {"grid: psiflight.grid, opts: options", W, "super-Gaussian momentum distribution"},
    ["pf.momentum_orders"] = {"grid: psiflight.grid, opts: options", W, "a superposition of diffraction orders n * step in wave number"},
    ["pf.sampled"] = {"grid: psiflight.grid, opts: options", W, "a wave function from sampled values (position or momentum space)"},
    ["pf.load_wave"] = {"path: string, opts?: options", W, "a wave function read from a psiflight HDF5 file, another HDF5 layout or a CSV file"},
    ["pf.mixture"] = {"members: psiflight.wave[], weights?: number[]", E, "an incoherent mixture (members are copied)"},
    ["pf.thermal"] = {"opts: options", E, "a thermal ensemble of trap eigenstates"},
    ["pf.potential"] = {"grid: psiflight.grid, values: function|number[]", "psiflight.potential",
      "a potential V (J) sampled once on the grid, from a function of the coordinates or a table"},

    -- wave functions: data and properties
    ["wave:psi"] = {"i: integer, j?: integer, k?: integer", C, "psi at a 1-based position index"},
    ["wave:phi"] = {"i: integer, j?: integer, k?: integer", C, "phi at a 1-based momentum index, ascending k"},
    ["wave:set_psi"] = {"...: integer|number|psiflight.complex", W, "write one position sample: indices, then the value; returns w"},
    ["wave:set_phi"] = {"...: integer|number|psiflight.complex", W, "write one momentum sample: indices, then the value; returns w"},
    ["wave:density"] = {"", "number[]", "|psi|^2 over the grid (row-major, m^-d)"},
    ["wave:momentum_density"] = {"", "number[]", "|phi|^2, ascending k on every axis (m^d)"},
    ["wave:x_axis"] = {"axis?: integer", "number[]", "coordinates of an axis (m)"},
    ["wave:k_axis"] = {"axis?: integer", "number[]", "wave numbers of an axis, ascending (1/m)"},
    ["wave:normalize"] = {"", W, "in-place normalisation to norm 1"},
    ["wave:scale"] = {"z: number|psiflight.complex", W, "multiplies by a number or complex"},
    ["wave:mass"] = {"", "number", "particle mass (kg)"},
    ["wave:clock"] = {"", "number", "total flown time (s)"},
    ["wave:representation"] = {"", "string", "how the state is stored now: \"position\" or \"momentum\""},
    ["wave:grid"] = {"", G, "the wave's grid"},
    ["wave:frame"] = {"", "table", "the moving frame: position, wavenumber, momentum, velocity, phase, moved"},
    ["wave:log"] = {"", "table[]", "the step log as a table of records"},
    ["wave:log_text"] = {"", "string", "the step log as text"},
    ["wave:log_columns"] = {"", "table", "the step log as columns (step, kind, ...) for tables and files"},
    ["wave:add"] = {"other: psiflight.wave, factor?: number|psiflight.complex", W, "adds in place: w <- w + factor * other"},
    ["wave:inner"] = {"other: psiflight.wave", C, "<w|other>"},
    ["wave:overlap"] = {"other: psiflight.wave", C, "<w|other>, the same as inner"},
    ["wave:fidelity"] = {"other: psiflight.wave", "number", "|<w|other>|^2 / (<w|w><other|other>)"},
    ["wave:position_momentum_covariance"] = {"", "table",
      "d x d table C[a][b] = <(x_a p_b + p_b x_a)/2> - <x_a><p_b> (m kg m/s)"},

    -- wave functions: flight and protocol steps
    ["wave:fly"] = {"t: number, opts?: options", W, "exact free flight for t seconds (t < 0 flies backwards); returns w"},
    ["wave:fly_long"] = {"t: number, opts?: options", W .. ", table",
      "long flight: the engine chooses same-grid or scaled-grid flight; returns w and a report"},
    ["wave:fly_scaled"] = {"t: number, opts?: options", W .. ", table", "flight on a scaled grid that follows an expanding cloud; returns w and a report"},
    ["wave:far_field"] = {"t: number", "table", "far-field image after t seconds"},
    ["wave:fall"] = {"t: number, acceleration: number|number[]", W, "exact flight for t seconds under a constant acceleration (m/s^2)"},
    ["wave:guard"] = {"", "table", "grid-guard figures: probability near the edges, momentum near Nyquist"},
    ["wave:grid_advice"] = {"opts: options", "table", "grid proposals for flying this state"},
    ["wave:kick"] = {"k: number|number[], opts?: options", W, "momentum kick hbar k (k in rad/m, one per axis or a table)"},
    ["wave:imprint"] = {"phase: function", W, "multiplies psi by exp(i phase(x...)), phase in rad"},
    ["wave:lens"] = {"focal_time: number, opts?: options", W, "thin lens pulse with focal time in s (< 0 defocuses)"},
    ["wave:grating"] = {"opts: options", W, "thin standing-wave phase grating (depth in rad, period in m)"},
    ["wave:mask"] = {"transmission: function", W .. ", number", "multiplies psi by a transmission t(x...) in [0, 1]; returns w and the removed probability"},
    ["wave:momentum_mask"] = {"transmission: function", W .. ", number", "transmission t(k...) in momentum space; returns w and the removed probability"},
    ["wave:mask_grating"] = {"opts: options", W .. ", number", "absorbing grating of open slits; returns w and the removed probability"},
    ["wave:slit"] = {"opts: options", W .. ", number", "one slit; returns w and the removed probability"},
    ["wave:slits"] = {"opts: options", W .. ", number", "count slits of a width and pitch; returns w and the removed probability"},
    ["wave:aperture"] = {"opts: options", W .. ", number", "circular aperture in the plane of two axes; returns w and the removed probability"},
    ["wave:select_velocity"] = {"opts: options", W .. ", number", "velocity filter (box or Gaussian); returns w and the removed probability"},
    ["wave:shift"] = {"d: number|number[]", W, "moves the state by d (m) on the periodic grid"},
    ["wave:evolve"] = {"t: number, opts: options", W, "split-step evolution for t seconds in a potential (optionally with a mean field)"},
    ["wave:relax"] = {"opts: options", W, "imaginary-time relaxation to the ground state of a potential"},
    ["wave:energy"] = {"opts: options", "table", "kinetic, potential and interaction energies (J) in a potential"},

    -- ensembles
    ["ensemble:count"] = {"", "integer", "number of members"},
    ["ensemble:member"] = {"i: integer", W, "member i (1-based)"},
    ["ensemble:weight"] = {"i: integer", "number", "weight of member i"},
    ["ensemble:weights"] = {"", "number[]", "all weights"},
    ["ensemble:each"] = {"fn: fun(w: psiflight.wave, weight: number, i: integer)", E, "calls fn for every member (which it may change in place)"},

    -- methods of every state (wave function or ensemble)
    ["state:copy"] = {"", S, "deep copy"},
    ["state:close"] = {"", "", "releases the state's memory now"},
    ["state:norm"] = {"", "number", "integral |psi|^2 (weighted over members)"},
    ["state:position_mean"] = {"", PERAXIS, "<x> per axis (m)"},
    ["state:position_variance"] = {"", PERAXIS, "position variance per axis (m^2)"},
    ["state:position_width"] = {"", PERAXIS, "rms width per axis (m)"},
    ["state:position_covariance"] = {"", "table", "d x d covariance matrix (m^2)"},
    ["state:momentum_mean"] = {"", PERAXIS, "hbar <k> per axis (kg m/s)"},
    ["state:momentum_variance"] = {"", PERAXIS, "momentum variance per axis ((kg m/s)^2)"},
    ["state:momentum_width"] = {"", PERAXIS, "rms momentum width per axis (kg m/s)"},
    ["state:momentum_covariance"] = {"", "table", "d x d momentum covariance matrix ((kg m/s)^2)"},
    ["state:wavenumber_mean"] = {"", PERAXIS, "<k> per axis (1/m)"},
    ["state:wavenumber_width"] = {"", PERAXIS, "rms wave-number width per axis (1/m)"},
    ["state:velocity_mean"] = {"", PERAXIS, "hbar <k> / m per axis (m/s)"},
    ["state:kinetic_energy"] = {"", "number", "<p^2> / 2m (J)"},
    ["state:current"] = {"axis?: integer", "number[]", "probability current density along an axis (1/(s m^(d-1)))"},
    ["state:column_density"] = {"axis?: integer", "number[]", "integral along the imaging axis (default the last), m^-(d-1)"},
    ["state:probability_in"] = {"region: psiflight.region", "number", "probability of finding the particle in the region"},
    ["state:distribution"] = {"opts?: options", "table", "the full density in position or momentum space, with its axes"},
    ["state:profile"] = {"axis: integer, opts?: options", "table", "1D marginal along one axis"},
    ["state:marginal"] = {"opts: options", "table", "integral over the other axes"},
    ["state:slice"] = {"opts: options", "table", "density along the free axes through a grid point"},
    ["state:radial_profile"] = {"opts?: options", "table", "ring (2D) or shell (3D) averages: radius, values, count"},
    ["state:sample"] = {"count: integer, opts?: options", "table", "Born-rule detection events (positions or momenta)"},
    ["state:fringes"] = {"opts: options", "table", "fringe fit of the density: period, phase, contrast"},
    ["state:flux"] = {"opts: options", "number", "flux through the plane x_axis = at (1/s), positive along +axis"},
    ["state:beyond"] = {"opts: options", "number", "probability between a plane and the far edge of the grid"},
    ["state:arrival_times"] = {"opts: options", "table", "arrival-time distribution at a plane: time, time_ms, flux (1/s), arrived"},
    ["state:wigner"] = {"opts?: options", "table", "Wigner function on a position-momentum grid (1D)"},
    ["state:measure_region"] = {"region: psiflight.region, opts?: options", "boolean, number",
      "collapsing measurement: is the particle in the region? returns the outcome and its probability"},
    ["state:measure_position"] = {"opts?: options", "table, number", "collapsing position measurement with a resolution; returns the outcome and its density"},

    -- detectors, regions, distributions
    ["pf.camera"] = {"opts: options", "psiflight.camera", "a camera: pixels, pitch, corner, resolution, efficiency"},
    ["camera:expose"] = {"state: psiflight.wave|psiflight.ensemble, opts?: options", "table", "fluorescence image: expected counts per pixel, with shot noise if asked"},
    ["camera:absorb"] = {"state: psiflight.wave|psiflight.ensemble, opts: options", "table", "absorption image: transmission and optical depth per pixel"},
    ["pf.box"] = {"opts: options", "psiflight.region", "axis-aligned box (axes not listed are open)"},
    ["pf.ball"] = {"opts: options", "psiflight.region", "ball (disc in 2D) of a radius around a center"},
    ["pf.half_space"] = {"opts: options", "psiflight.region", "the side of a plane its normal points to"},
    ["pf.mask"] = {"weight: function|number[]", "psiflight.region", "a soft region: weight per point from a function of the coordinates or a table"},
    ["pf.histogram"] = {"values: number[], opts: options", "table", "histogram: counts, edges, centers"},
    ["pf.fringes"] = {"coordinates: number[], values: number[], opts?: options", "table", "fringe fit of sampled data: period, phase, contrast"},
    ["pf.random"] = {"opts?: options", "psiflight.random", "a seeded random number generator (seed, stream)"},
    ["random:uniform"] = {"", "number", "uniform in [0, 1)"},
    ["random:normal"] = {"", "number", "standard normal (Box-Muller)"},
    ["random:poisson"] = {"mean: number", "integer", "Poisson-distributed count"},
    ["random:raw"] = {"", "integer", "64 random bits as an integer"},
    ["potential:range"] = {"", "number, number", "minimum and maximum of V (J)"},
    ["potential:close"] = {"", "", "releases the potential's memory now"},

    -- outputs
    ["pf.h5file"] = {"path: string, opts?: options", "psiflight.h5file", "an HDF5 file in the output folder, written atomically on close"},
    ["h5file:put_wave"] = {"name: string, w: psiflight.wave, opts?: options", "psiflight.h5file", "stores a wave function (psi or phi) with its grid and step log"},
    ["h5file:put_density"] = {"name: string, state: psiflight.wave|psiflight.ensemble", "psiflight.h5file", "stores a density with its axes"},
    ["h5file:put_table"] = {"name: string, columns: table[]", "psiflight.h5file", "stores a table of named columns with units"},
    ["h5file:put_value"] = {"name: string, value: number|string, unit?: string", "psiflight.h5file", "stores one value with its unit"},
    ["h5file:path"] = {"", "string", "final path of the file"},
    ["h5file:close"] = {"", "", "writes the file under its final name"},
    ["h5file:discard"] = {"", "", "drops the file without writing it"},
    ["pf.write_csv"] = {"path: string, columns: table[], opts?: options", "string", "writes a CSV table of named columns with units; returns its path"},
    ["pf.read_csv"] = {"path: string", "table", "reads a CSV table: columns by index and by name (name, unit, values)"},
    ["pf.picture_map"] = {"path: string, data: any, opts?: options", "string", "a PNG map of a 2D density, image or array"},
    ["pf.picture_lines"] = {"path: string, opts: options", "string", "a PNG line plot of one or more series"},
    ["pf.picture_carpet"] = {"path: string, w: psiflight.wave, opts: options", "string", "a PNG carpet: a 1D density against flight time"},
    ["pf.report"] = {"name: string, value: number, unit?: string", "", "records a scalar result in the run manifest"},
    ["pf.output_path"] = {"name: string", "string", "where a writer given name puts its file"},
    ["pf.outputs"] = {"", "string[]", "the files this run has completed so far, in order"},
    ["pf.sha256"] = {"text: string", "string", "SHA-256 digest of a string, in hex"},
    ["pf.progress"] = {"total: number, label?: string", "psiflight.progress", "a progress bar for a loop of total steps"},
    ["progress:advance"] = {"n?: number", "", "advances the bar by n steps (default 1)"},
    ["progress:finish"] = {"", "", "completes and clears the bar"},
    ["progress:shown"] = {"", "boolean", "whether the bar is drawn (stderr is a terminal)"},
  },
}
