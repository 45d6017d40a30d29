#!/usr/bin/env bash
# test_hostile_files.sh - data files and picture names made by an attacker
# (tests/runner/hostile/): each HDF5 or CSV file is refused cleanly - an
# error naming the file as the script wrote it and the script line, the
# documented exit status (5 for a size over a limit, 1 for a refused file),
# no crash - and nothing outside the allowed folders is opened.  Picture
# names with PLplot's "%n" family syntax are literal names inside the
# output folder, and the run still writes its manifest.
source "$(dirname "$0")/lib.sh"
set -e
py=/usr/bin/python3   # Debian's python3, which has python3-h5py
rec="$work/recipe"; outdir="$work/out"
mkdir -p "$rec" "$outdir"
cp "$root/tests/runner/hostile/load_file.lua" "$root/tests/runner/hostile/picture_names.lua" "$rec/"
echo "top secret calibration key 0123456789abcdef" >"$work/secret.txt"
"$py" "$root/tests/runner/hostile/make_hostile_h5.py" "$rec" "$work/secret.txt"
"$py" "$root/tests/runner/hostile/make_hostile_csv.py" "$rec"
cd "$rec"
line=$(grep -n "^local w = pf.load_wave" load_file.lua | cut -d: -f1)
load() { "$runner" run load_file.lua --out "$outdir" --overwrite --set file="$1" "${@:2}"; }

# refused CODE FILE TEXT [runner options...]: the load fails with CODE, the
# message names the file as written and the script line, no absolute path
# of this machine appears in it, and the run still writes its manifest.
refused() {
  local code=$1 file=$2 text=$3; shift 3
  rm -f "$outdir/manifest.json"
  expect "$code" "$file $*: refused" -- load "$file" "$@"
  grep -Eq '"status":[[:space:]]*"failed"' "$outdir/manifest.json" || fail "$file: no manifest recording the failure"
  has "load_file.lua:$line: load_wave: " "$file: the error names the script line"
  has "$text" "$file: says why ($text)"
  case "$err" in *"$work"*) fail "$file: the message shows an absolute path: $err";; esac
  case "$out$err" in *"top secret"*) fail "$file: the outside secret's text reached the output";; esac
}

expect 0 "a plain HDF5 file loads" -- load plain.h5
expect 0 "a plain CSV file loads" -- load plain.csv

# Sizes: overflow and the memory cap, checked before anything is allocated.
refused 5 huge_shape.h5 "'huge_shape.h5': dataset 'psi' claims 1152921504606846976 entries on axis 1"
refused 5 overflow_3d.h5 "'overflow_3d.h5': the size of dataset 'psi' overflows"
refused 5 big_for_cap.h5 "file 'big_for_cap.h5' needs 67174400 bytes, over the memory cap" --memory-cap 64MiB
# The same file under the default cap is read (and then fails only because
# its 2^22 samples do not fit the 16-point grid of the script).
refused 1 big_for_cap.h5 "axis 1 has 4194304 samples but the grid has 16 points"
refused 5 huge_chunk.h5 "file 'huge_chunk.h5' needs 268435712 bytes, over the memory cap" --memory-cap 64MiB

# Values that live in other files: refused in the sandbox and when trusted.
for mode in "" --trusted; do
  refused 1 external_storage.h5 "dataset 'psi' keeps its values in external files" $mode
  refused 1 virtual.h5 "dataset 'psi' is a virtual dataset" $mode
  for ds in psi soft grp/psi; do
    refused 1 external_link.h5 "'$ds' leads through a link to another file" --set dataset=$ds $mode
  done
done

refused 1 item_external_axis.h5 "'x' leads through a link to another file" --set dataset=
refused 1 padded_compound.h5 "dataset 'psi' has elements of 4096 bytes (complex numbers take at most 64)"

# HDF5 itself never opens the outside files (strace, Debian's strace).
if strace -f -o /dev/null true 2>/dev/null; then
  for c in external_storage.h5:psi external_link.h5:psi external_link.h5:soft virtual.h5:psi; do
    set +e
    strace -f -e trace=open,openat -o "$work/trace" "$runner" run load_file.lua --out "$outdir" --overwrite \
      --set file="${c%%:*}" --set dataset="${c##*:}" >/dev/null 2>&1
    set -e
    grep -q "$work/secret" "$work/trace" && fail "$c: the outside file was opened: $(grep secret "$work/trace")"
    grep -q "${c%%:*}" "$work/trace" || fail "$c: the trace does not show the file being read"
    ok "$c: the outside file was never opened"
  done
else
  echo "note: strace cannot trace processes here; the never-opened checks were skipped"
fi

refused 1 truncated.h5 "cannot open HDF5 file 'truncated.h5'"
refused 1 corrupt.h5 "cannot open HDF5 file 'corrupt.h5'"

# CSV samples: line length, column count, binary content, rows vs the cap.
refused 5 long_line.csv "long_line.csv:2: line longer than 1048576 bytes"
refused 5 many_columns.csv "many_columns.csv:1: the header has 5000 columns (at most 4096)"
refused 1 nul.csv "nul.csv:2: the line holds a NUL byte"
refused 5 many_rows.csv "file 'many_rows.csv' needs" --memory-cap 4MiB
refused 1 nan.csv "'nan.csv' row 4 is not finite"
refused 1 inf.csv "'inf.csv' row 1 is not finite"
refused 1 wrong_columns.csv "wrong_columns.csv:18: 2 fields, the header has 3"

# Picture names: PLplot's "%n" is not interpreted; files stay in the output
# folder under the literal name, and the run's manifest lists them.
: >"$work/.before-pictures"; sleep 0.01
for name in ".%n./p.png" "a%n%n.png" "%s%d%n%x.png"; do
  rm -rf "$outdir"
  expect 0 "picture named '$name'" -- "$runner" run picture_names.lua --out "$outdir" --overwrite --set name="$name"
  [ -f "$outdir/$name" ] || fail "'$name' was not written under its literal name: $(find "$outdir" | head)"
  head -c 8 "$outdir/$name" | od -An -tx1 | grep -q "89 50 4e 47 0d 0a 1a 0a" || fail "'$name' is not a PNG"
  ok "'$name' is a PNG under its literal name"
  "$py" -c 'import json,sys; m=json.load(open(sys.argv[1])); assert any(o["path"]==sys.argv[2] for o in m["outputs"])' \
       "$outdir/manifest.json" "$name" || fail "'$name' is missing from the manifest"
  ok "'$name' is in the manifest"
  extra=$(find "$outdir" -type f ! -name manifest.json ! -path "$outdir/$name")
  [ -z "$extra" ] || fail "'$name' left other files: $extra"
  ok "'$name' left no other file (no partial, no expanded family member)"
done
stray=$(find "$work" -type f -newer "$work/.before-pictures" ! -path "$outdir/*" ! -name .stdout ! -name .stderr)
[ -z "$stray" ] || fail "files appeared outside the output folder: $stray"
ok "no file appeared outside the output folder"
done_checks
