#!/usr/bin/env bash
# test_h5_netcdf.sh - a psiflight HDF5 file as generic readers see it:
# netCDF-4 (ncdump, Debian netcdf-bin) shows every amplitude, density and
# table column on named dimensions (no phony_dim); h5py (Debian python3-h5py)
# finds the parallel real/imaginary parts equal to the complex compound, the
# representation tags true, the items in creation order, the density a
# probability density integrating to 1 (numpy sum), the provenance equal to
# the script's SHA-256 (Python hashlib, FIPS 180-4) and its declared
# parameters in SI; UDUNITS-2 (Debian udunits-bin) parses every unit string
# to the right dimension, or refuses a half-integer power (which UDUNITS-2
# cannot express) instead of misreading it; large datasets are compressed
# (shuffle + deflate) and a rerun writes the same bytes.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
runner=${PSIFLIGHT_RUNNER:-$root/build/psiflight}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
for tool in ncdump udunits2; do
  command -v "$tool" >/dev/null || { echo "FAIL $tool missing (Debian netcdf-bin / udunits-bin; scripts/install-deps.sh)"; exit 1; }
done
"$runner" run "$here/h5_netcdf_writer.lua" --out "$tmp/a" --quiet --set tof=0.5ms
"$runner" run "$here/h5_netcdf_writer.lua" --out "$tmp/b" --quiet --set tof=0.5ms
file=$tmp/a/state.h5

cmp "$file" "$tmp/b/state.h5" && echo "ok a rerun writes a byte-identical file (compression included)"

ncdump -h "$file" >"$tmp/cdl" || { echo "FAIL ncdump cannot read the file"; exit 1; }
if grep -q phony_dim "$tmp/cdl"; then echo "FAIL ncdump shows anonymous dimensions:"; grep phony_dim "$tmp/cdl"; exit 1; fi
echo "ok ncdump -h shows no phony_dim"
check_cdl() { # pattern, label
  if grep -qF -- "$1" "$tmp/cdl"; then echo "ok ncdump: $2"; else echo "FAIL ncdump lacks '$1' ($2)"; exit 1; fi
}
check_cdl "double psi_re(x, y)" "psi real part on the position axes"
check_cdl "double psi_im(x, y)" "psi imaginary part"
check_cdl "double phi_re(kx, ky)" "phi real part on the wave-number axes"
check_cdl "double phi_im(kx)" "1D phi imaginary part"
check_cdl "double density(x, y)" "position density"
check_cdl "double density(kx)" "momentum density"
check_cdl "double sigma(t)" "a table column tied to its time axis"
check_cdl "string kind(step)" "the step log's text column tied to the step axis"
check_cdl "double sigma(t)" "table column on the first column's axis"
check_cdl "string psi_re:units = \"m^-1\"" "2D amplitude unit"
check_cdl "string phi_re:units = \"m^(1/2)\"" "1D momentum amplitude unit"
check_cdl "group: provenance" "provenance group visible"
check_cdl "string label" "text parameter visible"

/usr/bin/python3 - "$file" "$here/h5_netcdf_writer.lua" <<'PY'
# References: h5py 3 (reads the file), numpy (sums), hashlib (SHA-256).
import sys, hashlib, math
import h5py, numpy as np
f = h5py.File(sys.argv[1], "r")
def ok(cond, label):
    if not cond:
        print("FAIL", label); sys.exit(1)
    print("ok", label)
ok(list(f["/"].keys()) == ["provenance", "cloud", "line", "cloud_density", "line_kdensity", "widths", "steps", "tof"],
   "root items in creation order [h5py, f['/'].keys()]: %s" % list(f["/"].keys()))
c = f["cloud"]
ok(list(c.keys())[:3] == ["psi", "psi_re", "psi_im"], "item datasets in creation order")
for grp, name in (("cloud", "psi"), ("cloud", "phi"), ("line", "phi")):
    z = f[grp][name][()]
    ok(np.array_equal(z.real, f[grp][name + "_re"][()]) and np.array_equal(z.imag, f[grp][name + "_im"][()]),
       "%s/%s_re + i %s_im equals the complex compound bit for bit [h5py]" % (grp, name, name))
ok(c.attrs["representation"] == "position and momentum", "group tag says what the item holds (both parts)")
ok(f["line"].attrs["representation"] == "momentum" and "psi" not in f["line"], "phi-only item tagged momentum")
for grp, name, rep in (("cloud", "psi", "position"), ("cloud", "phi_re", "momentum"), ("line", "phi_im", "momentum"),
                       ("cloud_density", "density", "position"), ("line_kdensity", "density", "momentum")):
    ok(f[grp][name].attrs["representation"] == rep, "%s/%s tagged %s" % (grp, name, rep))
# Density: a probability density, sum * cell = 1 for the normalised state.
d = f["cloud_density"]
dx, dy = d.attrs["grid_spacing_m"]
ok(abs(d["density"][()].sum() * dx * dy - 1) < 1e-12, "position density integrates to 1 over the grid [numpy sum x dx dy]")
rho, ref = d["density"][()], abs(c["psi"][()]) ** 2
ok(np.abs(rho - ref).max() <= 1e-13 * ref.max(), "density = |psi|^2 to 1e-13 of its peak [numpy]")
kd = f["line_kdensity"]
dk = 2 * math.pi / kd.attrs["grid_span_m"][0]
ok(abs(kd["density"][()].sum() * dk - 1) < 1e-12, "momentum density integrates to 1 over k [numpy sum x 2 pi / L]")
ok("integrates" in d["density"].attrs["normalization"], "density states its normalisation")
# Axes as dimension scales, attached to each part.
ok([dim[0].name for dim in c["psi_im"].dims] == ["/cloud/x", "/cloud/y"], "psi_im dims are the x, y scales [h5py dims]")
ok(f["widths"]["sigma"].dims[0][0].name == "/widths/t", "table column attached to the table's first column")
# Provenance.
pv = f["provenance"]
want = hashlib.sha256(open(sys.argv[2], "rb").read()).hexdigest()
ok(pv.attrs["script_sha256"] == want, "script digest equals hashlib.sha256 of the script")
ok(int(pv.attrs["seed"]) == 7, "seed recorded")
pp = pv["parameters"]
ok(pp["tof"][()] == 0.5e-3 and pp["tof"].attrs["units"] == "s" and pp["tof"].attrs["as_given"] == "0.5ms",
   "parameter tof in SI (0.5ms -> 5e-4 s) with unit and text as given")
ok(abs(pp["width"][()] - 3e-6) < 1e-21 and pp["width"].attrs["units"] == "m", "parameter width in m (default 3 um)")
ok(pp["label"][()].decode() == "bench-a", "text parameter stored as text")
ok("87Rb" in pv.attrs["species"] and "AME2020" in pv.attrs["species"], "species with its mass source")
ok("not a tabulated species" in f["line"].attrs["mass_source"], "a plain-number mass is said to be one")
ok(c.attrs["species"] == "87Rb", "item names its species")
ok("item cloud:" in pv.attrs["step_logs"] and "flight" in pv.attrs["step_logs"], "step logs in the provenance")
# Compression of large datasets.
for name in ("psi", "psi_re", "phi_im"):
    ds = c[name]
    ok(ds.compression == "gzip" and ds.shuffle and ds.chunks is not None, "cloud/%s chunked with shuffle + deflate" % name)
ok(f["widths"]["t"].compression is None, "small table columns stay contiguous")
# Every units attribute, for the UDUNITS check below.
units = set()
def visit(name, o):
    if "units" in o.attrs: units.add(o.attrs["units"])
f.visititems(visit)
units.add(f["tof"].attrs["units"])
open(sys.argv[1] + ".units", "w").write("\n".join(sorted(units)) + "\n")
PY

# UDUNITS-2: each unit string either parses to the expected dimension, or is
# one of the documented half-integer powers, which UDUNITS-2 must refuse
# (not read as something else).
while IFS= read -r u; do
  case "$u" in
    "m^(-1/2)"|"m^(1/2)"|"m^(-3/2)"|"m^(3/2)")
      out=$(udunits2 -H m -W "$u" 2>&1 || true)
      if [[ $out == *"Don't recognize"* ]]; then echo "ok UDUNITS-2 refuses half power '$u' (no misreading)"
      else echo "FAIL UDUNITS-2 reads '$u' as something"; exit 1; fi;;
    "") echo "ok dimensionless (empty) unit";;
    *)
      out=$(udunits2 -H "$u" -W "$u" 2>&1 || true)
      case "$out" in *"Don't recognize"*|*"not convertible"*) echo "FAIL UDUNITS-2 cannot parse '$u': $out"; exit 1;; esac
      echo "ok UDUNITS-2 parses '$u'";;
  esac
done <"$file.units"
# Dimensions, not only syntax (UDUNITS-2 conversions): 2D psi per metre, 2D density per square metre.
udunits2 -H "m^-2" -W "cm^-2" | grep -q "= 0.0001 cm^-2" && echo "ok m^-2 converts as an inverse area [udunits2]" \
  || { echo "FAIL m^-2 is not an inverse area"; exit 1; }
