#!/usr/bin/env bash
# test_h5dump.sh - h5dump (Debian hdf5-tools) shows the layout documented
# in docs/file-layout.md: the items, datasets and attributes in creation
# order, and complex data as the compound {r, i} of IEEE float64.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
runner=${PSIFLIGHT_RUNNER:-$root/build/psiflight}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
"$runner" run "$here/h5_writer.lua" --out "$tmp" --quiet
file=$tmp/state.h5

# Structure, in creation order (h5dump -q creation_order).
h5dump -H -q creation_order "$file" | grep -oE '(GROUP|DATASET|ATTRIBUTE) "[^"]*"' >"$tmp/got"
cat >"$tmp/want" <<'TXT'
GROUP "/"
ATTRIBUTE "layout"
ATTRIBUTE "layout_version"
ATTRIBUTE "engine"
GROUP "provenance"
ATTRIBUTE "content"
ATTRIBUTE "engine"
ATTRIBUTE "hdf5"
ATTRIBUTE "script"
ATTRIBUTE "script_sha256"
ATTRIBUTE "seed"
ATTRIBUTE "species"
ATTRIBUTE "step_logs"
GROUP "parameters"
ATTRIBUTE "content"
GROUP "cloud"
ATTRIBUTE "content"
ATTRIBUTE "dimensions"
ATTRIBUTE "grid_points"
ATTRIBUTE "grid_span_m"
ATTRIBUTE "grid_origin_m"
ATTRIBUTE "grid_spacing_m"
ATTRIBUTE "mass_kg"
ATTRIBUTE "clock_s"
ATTRIBUTE "step_log"
ATTRIBUTE "species"
ATTRIBUTE "mass_source"
ATTRIBUTE "representation"
DATASET "psi"
ATTRIBUTE "units"
ATTRIBUTE "long_name"
ATTRIBUTE "representation"
ATTRIBUTE "DIMENSION_LIST"
DATASET "psi_re"
ATTRIBUTE "units"
ATTRIBUTE "long_name"
ATTRIBUTE "representation"
ATTRIBUTE "DIMENSION_LIST"
DATASET "psi_im"
ATTRIBUTE "units"
ATTRIBUTE "long_name"
ATTRIBUTE "representation"
ATTRIBUTE "DIMENSION_LIST"
DATASET "x"
ATTRIBUTE "units"
ATTRIBUTE "long_name"
ATTRIBUTE "CLASS"
ATTRIBUTE "NAME"
ATTRIBUTE "REFERENCE_LIST"
DATASET "y"
ATTRIBUTE "units"
ATTRIBUTE "long_name"
ATTRIBUTE "CLASS"
ATTRIBUTE "NAME"
ATTRIBUTE "REFERENCE_LIST"
DATASET "phi"
ATTRIBUTE "units"
ATTRIBUTE "long_name"
ATTRIBUTE "representation"
ATTRIBUTE "DIMENSION_LIST"
DATASET "phi_re"
ATTRIBUTE "units"
ATTRIBUTE "long_name"
ATTRIBUTE "representation"
ATTRIBUTE "DIMENSION_LIST"
DATASET "phi_im"
ATTRIBUTE "units"
ATTRIBUTE "long_name"
ATTRIBUTE "representation"
ATTRIBUTE "DIMENSION_LIST"
DATASET "kx"
ATTRIBUTE "units"
ATTRIBUTE "long_name"
ATTRIBUTE "CLASS"
ATTRIBUTE "NAME"
ATTRIBUTE "REFERENCE_LIST"
DATASET "ky"
ATTRIBUTE "units"
ATTRIBUTE "long_name"
ATTRIBUTE "CLASS"
ATTRIBUTE "NAME"
ATTRIBUTE "REFERENCE_LIST"
GROUP "cloud_density"
ATTRIBUTE "content"
ATTRIBUTE "dimensions"
ATTRIBUTE "grid_points"
ATTRIBUTE "grid_span_m"
ATTRIBUTE "grid_origin_m"
ATTRIBUTE "grid_spacing_m"
ATTRIBUTE "mass_kg"
ATTRIBUTE "clock_s"
ATTRIBUTE "step_log"
ATTRIBUTE "species"
ATTRIBUTE "mass_source"
ATTRIBUTE "representation"
DATASET "density"
ATTRIBUTE "units"
ATTRIBUTE "long_name"
ATTRIBUTE "normalization"
ATTRIBUTE "representation"
ATTRIBUTE "DIMENSION_LIST"
DATASET "x"
ATTRIBUTE "units"
ATTRIBUTE "long_name"
ATTRIBUTE "CLASS"
ATTRIBUTE "NAME"
ATTRIBUTE "REFERENCE_LIST"
DATASET "y"
ATTRIBUTE "units"
ATTRIBUTE "long_name"
ATTRIBUTE "CLASS"
ATTRIBUTE "NAME"
ATTRIBUTE "REFERENCE_LIST"
GROUP "numbers"
ATTRIBUTE "content"
DATASET "a"
ATTRIBUTE "units"
ATTRIBUTE "CLASS"
ATTRIBUTE "NAME"
ATTRIBUTE "REFERENCE_LIST"
DATASET "b"
ATTRIBUTE "units"
ATTRIBUTE "DIMENSION_LIST"
DATASET "tof"
ATTRIBUTE "units"
TXT
if ! diff -u "$tmp/want" "$tmp/got"; then echo "FAIL h5dump structure differs from the documented layout"; exit 1; fi
echo "ok h5dump lists the documented items, datasets and attributes in creation order [h5dump]"

# Every name in the layout tables of docs/file-layout.md occurs in the file
# (the docs and the writer cannot drift apart unnoticed).
doc="$root/docs/file-layout.md"
for name in $(grep -oE '^\| `[a-z_0-9]+`' "$doc" | grep -oE '[a-z_0-9]+' | sort -u); do
  case $name in z|kz) continue ;; esac   # 3D axes; the test file is 2D
  grep -q "\"$name\"" "$tmp/got" || { echo "FAIL documented name '$name' not in the file"; exit 1; }
done
echo "ok every name in the docs' layout tables appears in the file [docs/file-layout.md, h5dump]"

# The complex type: compound of "r" and "i", both IEEE float64 little endian.
h5dump -H -d /cloud/psi "$file" | tr -s ' \n' ' ' >"$tmp/psi"
grep -q 'H5T_COMPOUND { H5T_IEEE_F64LE "r"; H5T_IEEE_F64LE "i"; }' "$tmp/psi" ||
  { echo "FAIL psi is not the compound {r, i}"; cat "$tmp/psi"; exit 1; }
grep -q 'SIMPLE { ( 48, 32 ) / ( 48, 32 ) }' "$tmp/psi" || { echo "FAIL psi shape"; exit 1; }
echo "ok psi is the compound {r, i} of IEEE float64, shape 48 x 32 [h5dump]"

# Attribute values as h5dump prints them.
h5dump -a /layout "$file" | grep -q '"psiflight-h5"' || { echo "FAIL layout attribute"; exit 1; }
h5dump -a /cloud/psi/units "$file" | grep -q '"m^-1"' || { echo "FAIL psi units"; exit 1; }
h5dump -a /cloud/grid_points "$file" | grep -q '(0): 48, 32' || { echo "FAIL grid_points"; exit 1; }
echo "ok attribute values: layout name, psi units m^-1 (2D), grid points [h5dump]"
h5dump -a /cloud/x/CLASS "$file" | grep -q '"DIMENSION_SCALE"' || { echo "FAIL x is not a dimension scale"; exit 1; }
echo "ok axes are HDF5 dimension scales (CLASS = DIMENSION_SCALE) [h5dump, HDF5 Dimension Scale specification]"
