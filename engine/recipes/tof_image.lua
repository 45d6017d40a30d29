-- tof_image.lua - time-of-flight expansion of a trapped cloud imaged by a camera
--
-- A cloud starts in the ground state of an anisotropic harmonic trap (the
-- engine's pf.ground_state: the product of two Gaussians of width
-- sqrt(hbar / 2 m omega)), is released, flies freely for the time of flight
-- and is imaged along the third axis by the engine's camera model
-- (pf.camera, cam:expose without noise): the 2D density is integrated over
-- square pixels whose edges coincide with grid-cell edges and scaled to an
-- atom number.  Results: the cloud widths seen on the camera (second moments
-- of the pixel counts with Sheppard's correction for binning), the textbook
-- widths sigma(t) = sigma0 sqrt(1 + (hbar t / 2 m sigma0^2)^2), the aspect
-- ratio and the brightest pixel.
--
-- Model: a single non-interacting particle state (no mean-field expansion, so
-- condensates released from a strong trap expand faster than this), free
-- flight without gravity in the image plane, an ideal camera (no point-spread
-- function, no noise, efficiency 1).  Outputs are model predictions.
local pf = require "psiflight"
local common = require "psiflight.recipes.common"

local recipe = {name = "tof_image"}

recipe.parameters = {
  mass = {default = common.mass_u("87Rb"), unit = "u", help = "particle mass"},
  trap_x = {default = 120, unit = "Hz", help = "trap frequency along x (image horizontal)"},
  trap_y = {default = 40, unit = "Hz", help = "trap frequency along y (image vertical)"},
  tof = {default = 15, unit = "ms", help = "time of flight after release"},
  pixel = {default = 4, unit = "um", help = "camera pixel size in the object plane"},
  atoms = {default = 1e5, help = "atom number the image is scaled to"},
  max_points = {default = 512, help = "largest grid size per axis", min = 32, max = 8192},
}

local function ground_width(mass, f)
  return math.sqrt(common.hbar / (2 * mass * 2 * math.pi * f))
end

local function width_law(mass, s0, t)
  return s0 * math.sqrt(1 + (common.hbar * t / (2 * mass * s0 * s0)) ^ 2)
end

-- Grid per axis: wide enough for 7 final widths each side, fine enough to
-- hold 8 initial momentum widths (k spread 1 / 2 sigma0) below Nyquist, and
-- a whole power-of-two number of grid points per camera pixel, so every pixel
-- integrates the same number of grid cells.
local function axis_grid(mass, s0, t, pixel, max_points)
  local dx_max = math.pi * s0 / 4        -- pi / dx >= 8 / (2 sigma0)
  local per_pixel = common.pow2(pixel / dx_max, 1)
  local pixels = math.ceil(14 * width_law(mass, s0, t) / pixel)
  local n = common.pow2(pixels * per_pixel)
  local span = n / per_pixel * pixel     -- whole pixels
  if n > max_points then
    error(string.format("tof_image: needs %d grid points per axis (span %.3g m, spacing <= %.3g m); "
      .. "raise max_points or shorten tof", n, span, dx_max), 0)
  end
  return n, span, per_pixel
end

-- Images the cloud with the engine's camera: px x py pixels of the given
-- pitch whose outer corner is the outer corner of grid cell 1, so pixel edges
-- fall on cell edges and every pixel integrates q x q whole cells.  Returns
-- the image as rows of atom counts (image[row][col], row = y pixel) and its
-- size.
local function camera_image(w, qx, qy, pixel, atoms)
  local g = w:grid()
  local nx, ny = g:points(1), g:points(2)
  local px, py = nx // qx, ny // qy
  local cam = pf.camera{
    pixels = {px, py}, pitch = pixel,
    corner = {g:x_axis(1)[1] - g:spacing(1) / 2, g:x_axis(2)[1] - g:spacing(2) / 2},
  }
  local shot = cam:expose(w, {atoms = atoms, noise = false})
  local v = shot.expected -- row-major over (x pixel, y pixel), y fastest
  local image = {}
  for r = 1, py do
    local row = {}
    for c = 1, px do row[c] = v[(c - 1) * py + r] end
    image[r] = row
  end
  return image, px, py
end

-- Second moments of the image about its centroid, Sheppard-corrected.  The
-- grid already holds the density on cells of width dx = pixel / q, and
-- binning q cells adds (q^2 - 1) / 12 cell widths squared of variance, which
-- is (pixel^2 - dx^2) / 12: Sheppard's pixel^2 / 12 for the pixel less the
-- dx^2 / 12 the cells never had.
local function image_widths(image, pixel, qx, qy)
  local n, sx, sy = 0, 0, 0
  for r, row in ipairs(image) do
    for c, v in ipairs(row) do
      n = n + v; sx = sx + v * c; sy = sy + v * r
    end
  end
  local cx, cy = sx / n, sy / n
  local vx, vy, peak = 0, 0, 0
  for r, row in ipairs(image) do
    for c, v in ipairs(row) do
      vx = vx + v * (c - cx) ^ 2; vy = vy + v * (r - cy) ^ 2
      if v > peak then peak = v end
    end
  end
  local wx = math.sqrt(vx / n - (1 - 1 / (qx * qx)) / 12) * pixel
  local wy = math.sqrt(vy / n - (1 - 1 / (qy * qy)) / 12) * pixel
  return wx, wy, n, peak
end

function recipe.run(p)
  common.check_params(recipe, p)
  local s0x, s0y = ground_width(p.mass, p.trap_x), ground_width(p.mass, p.trap_y)
  local nx, spanx, qx = axis_grid(p.mass, s0x, p.tof, p.pixel, p.max_points)
  local ny, spany, qy = axis_grid(p.mass, s0y, p.tof, p.pixel, p.max_points)
  local grid = pf.grid{points = {nx, ny}, span = {spanx, spany}}
  local cloud = pf.ground_state(grid, {mass = p.mass, frequency = {p.trap_x, p.trap_y}})
  cloud:fly(p.tof)
  local image, px, py = camera_image(cloud, qx, qy, p.pixel, p.atoms)
  local wx, wy, total, peak = image_widths(image, p.pixel, qx, qy)
  return {
    image = image, pixels = {px, py}, grid = {nx, ny}, wave = cloud,
    results = {
      sigma_x_camera = {wx, "m"}, sigma_y_camera = {wy, "m"},
      sigma_x_textbook = {width_law(p.mass, s0x, p.tof), "m"},
      sigma_y_textbook = {width_law(p.mass, s0y, p.tof), "m"},
      aspect_ratio = {wy / wx, ""},
      atoms_on_camera = {total, ""},
      peak_pixel_atoms = {peak, ""},
    },
  }
end

-- A coarse picture of the image on stdout, ten grey levels, so a headless
-- run shows the cloud's shape.
local function ascii(image, cols)
  local shades = " .:-=+*#%@"
  local peak = 0
  for _, row in ipairs(image) do for _, v in ipairs(row) do peak = math.max(peak, v) end end
  local py, px = #image, #image[1]
  local step = math.max(1, math.ceil(px / cols))
  for r = py, 1, -2 * step do
    local line = {}
    for c = 1, px, step do
      local v = image[r][c] / peak
      local k = math.min(#shades, math.floor(v * (#shades - 1) + 0.5) + 1)
      line[#line + 1] = shades:sub(k, k)
    end
    print("  |" .. table.concat(line) .. "|")
  end
end

function recipe.main(p)
  local out = recipe.run(p)
  print(string.format("tof_image: %d x %d grid, %d x %d camera pixels of %.3g um, tof %.4g ms",
    out.grid[1], out.grid[2], out.pixels[1], out.pixels[2], p.pixel * 1e6, p.tof * 1e3))
  ascii(out.image, 64)
  for _, name in ipairs(common.sorted_keys(out.results)) do
    common.report(name, out.results[name][1], out.results[name][2])
  end
  common.write_results(recipe.name, out, {
    waves = {{"cloud", out.wave}},
    images = {{"camera", out.image, {pixel = p.pixel, value_name = "atoms per pixel"}}},
    pictures = {{"tof_image.png", out.image, {title = string.format("camera image after %.3g ms of flight", p.tof * 1e3),
      pixel = p.pixel, value_name = "atoms per pixel"}, map = true}},
  })
  return out
end

return recipe
