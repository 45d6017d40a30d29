#!/usr/bin/env bash
# test_h5py.sh - psiflight's HDF5 files against h5py (Debian python3-h5py)
# and numpy: a psiflight file read by h5py, and h5py files read by psiflight.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
runner=${PSIFLIGHT_RUNNER:-$here/../../build/psiflight}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT

"$runner" run "$here/h5_writer.lua" --out "$tmp/w" --set t=2e-3 --quiet

/usr/bin/python3 - "$tmp/w/state.h5" <<'PY'
# References: h5py 3 (reads the file), numpy (direct DFT sums, |z|^2),
# free-flight width law sigma(t) = sigma0 sqrt(1 + (hbar t / 2 m sigma0^2)^2)
# (textbook), CODATA 2018 constants.
import sys, math
import h5py, numpy as np
f = h5py.File(sys.argv[1], "r")
def ok(cond, label):
    if not cond:
        print("FAIL", label); sys.exit(1)
    print("ok", label)
ok(f.attrs["layout"] == "psiflight-h5" and int(f.attrs["layout_version"]) == 1, "h5py: root attributes name the layout [h5py]")
c = f["cloud"]
psi, phi = c["psi"][()], c["phi"][()]
ok(psi.dtype == np.complex128 and phi.dtype == np.complex128, "h5py maps the {r,i} compound to complex128 [h5py]")
ok(psi.shape == (48, 32), "psi shape is points per axis, last axis fastest [h5py]")
x, y, kx, ky = c["x"][()], c["y"][()], c["kx"][()], c["ky"][()]
dx, dy = 60e-6 / 48, 50e-6 / 32
ok(np.allclose(x, 2e-6 + (np.arange(48) - 24) * dx, rtol=0, atol=1e-18), "x axis = origin + (j - n/2) dx [pf_grid.h formula, numpy]")
ok(np.allclose(y, -1e-6 + (np.arange(32) - 16) * dy, rtol=0, atol=1e-18), "y axis = origin + (j - n/2) dy [numpy]")
ok(np.allclose(kx, 2 * np.pi / 60e-6 * np.arange(-24, 24), rtol=1e-14), "kx ascending = 2 pi m / span [numpy fftfreq convention]")
ok([[s.name for s in dim.values()] for dim in c["psi"].dims] == [["/cloud/x"], ["/cloud/y"]] and
   [[s.name for s in dim.values()] for dim in c["phi"].dims] == [["/cloud/kx"], ["/cloud/ky"]],
   "axes attached to psi and phi as dimension scales [h5py dims API]")
ok(c["x"].attrs["units"] == "m" and c["kx"].attrs["units"] == "m^-1" and c["psi"].attrs["units"] == "m^-1", "units attributes [h5py]")
u = 1.66053906660e-27
mass = 22.9897692820 * u
ok(c.attrs["mass_kg"] == mass, "mass_kg attribute is the mass given [h5py]")
ok(abs(c.attrs["clock_s"] - 2e-3) < 1e-18, "clock_s attribute is the flight time [h5py]")
ok(list(c.attrs["grid_points"]) == [48, 32], "grid_points attribute [h5py]")
ok("flight" in c.attrs["step_log"] and c.attrs["step_log"].startswith("step kind"), "step_log attribute holds the step log text [h5py]")
norm = np.sum(np.abs(psi) ** 2) * dx * dy
ok(abs(norm - 1) < 1e-12, "sum |psi|^2 dx dy = 1 [numpy]")
# phi(k) = (2 pi)^-1 sum psi(x, y) exp(-i (kx x + ky y)) dx dy, as a direct sum.
Ex = np.exp(-1j * np.outer(kx, x)); Ey = np.exp(-1j * np.outer(ky, y))
ref = dx * dy / (2 * np.pi) * Ex @ psi @ Ey.T
err = np.max(np.abs(phi - ref)) / np.max(np.abs(ref))
ok(err < 1e-12, "phi(k) equals the direct Fourier sum of psi (rel %.1e) [numpy]" % err)
rho = f["cloud_density"]["density"][()]
ok(np.allclose(rho, np.abs(psi) ** 2, rtol=1e-12, atol=1e-13 * rho.max()), "density = |psi|^2 [numpy]")
hbar = 6.62607015e-34 / (2 * math.pi)
t = 2e-3
px = np.sum(rho, axis=1) * dy * dx
mean = np.sum(px * x)
width = math.sqrt(np.sum(px * (x - mean) ** 2))
law = 3.0e-6 * math.sqrt(1 + (hbar * t / (2 * mass * 3.0e-6 ** 2)) ** 2)
ok(abs(width / law - 1) < 1e-9, "rms width from the file follows the width law (rel %.1e) [textbook formula]" % abs(width / law - 1))
ok(list(f["numbers"]["a"][()]) == [1, 2, 3] and f["numbers"]["b"].attrs["units"] == "m", "table columns with units [h5py]")
ok(f["tof"][()] == c.attrs["clock_s"] and f["tof"].attrs["units"] == "s", "scalar value with unit [h5py]")
# f["/"], not f: h5py 3.7 with HDF5 1.10 asks the file creation list about
# link order, which H5Fget_create_plist does not report (h5py's own
# track_order files list alphabetically on reopen too); the root group's own
# creation list does (docs/file-layout.md, Names and order).
ok(list(f["/"].keys()) == ["provenance", "cloud", "cloud_density", "numbers", "tof"], "items listed in creation order [h5py f['/']]")
PY

/usr/bin/python3 - "$tmp/other.h5" <<'PY'
# A file as another program would write it, with h5py: the packet
# psi(x) = (2 pi s^2)^(-1/4) exp(-(x-x0)^2/4s^2 + i k0 x) and its transform.
import sys, numpy as np, h5py
s, x0, k0 = 3e-6, 1e-6, 1.5e6
n, L = 64, 64e-6
dx = L / n
x = (np.arange(n) - n // 2) * dx
psi = (2 * np.pi * s * s) ** -0.25 * np.exp(-(x - x0) ** 2 / (4 * s * s) + 1j * k0 * x)
k = 2 * np.pi / L * np.arange(-n // 2, n // 2)
phi = (2 * s * s / np.pi) ** 0.25 * np.exp(-(k - k0) ** 2 * s * s - 1j * (k - k0) * x0)
with h5py.File(sys.argv[1], "w") as f:
    f["amp"] = psi
    f["xpos"] = x
    f["re"] = psi.real
    f["im"] = psi.imag
    f["pair"] = np.stack([psi.real, psi.imag], axis=-1)
    dt = np.dtype([("real", "<f8"), ("imag", "<f8")])
    named = np.zeros(n, dtype=dt); named["real"] = psi.real; named["imag"] = psi.imag
    f["named"] = named
    f["phi"] = phi
    f["k"] = k
    # 2D: the same packet along x times a narrower one along y (row-major,
    # last axis fastest, as numpy stores it).
    ny, Ly = 32, 16e-6
    yy = (np.arange(ny) - ny // 2) * (Ly / ny)
    gy = (2 * np.pi * 1.5e-6 ** 2) ** -0.25 * np.exp(-yy ** 2 / (4 * 1.5e-6 ** 2))
    f["amp2"] = psi[:, None] * gy[None, :]
    f["ypos"] = yy
print("ok h5py wrote a reference file")
PY

# check.lua lives with the Lua tests.
PSIFLIGHT_RECIPE_PATH="$here/../lua" "$runner" run "$here/h5_reader.lua" --data "$tmp/other.h5" --set file="$tmp/other.h5" --quiet 2>&1 || {
  echo "FAIL psiflight could not load the h5py file"; exit 1; }
