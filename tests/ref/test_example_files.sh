#!/usr/bin/env bash
# test_example_files.sh - every example (examples/*.lua, examples/recipes/*.lua,
# whoever added it) writes its main result as files a lab opens: at least one
# HDF5 file and one PNG picture.  Every HDF5 file opens in h5py (Debian
# python3-h5py: every dataset read), h5dump (hdf5-tools) and ncdump (Debian
# netcdf-bin) with no anonymous phony_dim dimension; every PNG starts with
# the PNG signature and a well-formed IHDR chunk (ISO/IEC 15948); every CSV
# has a header naming its columns and rows of as many fields.  Examples run
# with --planning estimate to keep the suite short; EXAMPLES="a.lua b.lua"
# picks some.
set -uo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
runner=${PSIFLIGHT_RUNNER:-$root/build/psiflight}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
for tool in h5dump ncdump; do
  command -v "$tool" >/dev/null || { echo "FAIL $tool missing (scripts/install-deps.sh test)"; exit 1; }
done
if [ -n "${EXAMPLES:-}" ]; then
  read -r -a scripts <<<"$EXAMPLES"
else
  scripts=("$root"/examples/*.lua "$root"/examples/recipes/*.lua)
fi
failures=0
fail() { echo "FAIL $*"; failures=$((failures + 1)); }
for s in "${scripts[@]}"; do
  rel=${s#"$root"/}
  name=$(basename "$s" .lua)
  out=$tmp/$name
  start=$(date +%s)
  if ! "$runner" run "$s" --out "$out" --planning estimate --quiet >"$tmp/$name.stdout" 2>"$tmp/$name.stderr"; then
    fail "$rel: the run failed:"; tail -5 "$tmp/$name.stderr" | sed 's/^/    /'; continue
  fi
  secs=$(( $(date +%s) - start ))
  mapfile -t h5s < <(find "$out" -name '*.h5' | sort)
  mapfile -t pngs < <(find "$out" -name '*.png' | sort)
  mapfile -t csvs < <(find "$out" -name '*.csv' | sort)
  if [ ${#h5s[@]} -eq 0 ] || [ ${#pngs[@]} -eq 0 ]; then
    fail "$rel wrote ${#h5s[@]} HDF5 and ${#pngs[@]} PNG files: every example writes its main result as HDF5 + PNG (docs/outputs.md); add pf.h5file and a pf.picture_* call"
    continue
  fi
  bad=0
  for f in "${h5s[@]}"; do
    h5dump -H "$f" >/dev/null 2>"$tmp/err" || { fail "$rel: h5dump cannot read ${f#"$out"/}: $(head -2 "$tmp/err")"; bad=1; }
    if ! ncdump -h "$f" >"$tmp/cdl" 2>"$tmp/err"; then fail "$rel: ncdump cannot read ${f#"$out"/}: $(head -2 "$tmp/err")"; bad=1
    elif grep -q phony_dim "$tmp/cdl"; then fail "$rel: ncdump shows anonymous dimensions in ${f#"$out"/}: $(grep -m2 phony_dim "$tmp/cdl")"; bad=1; fi
  done
  /usr/bin/python3 - "${h5s[@]}" "--" "${pngs[@]}" "--" "${csvs[@]}" >"$tmp/py" 2>&1 <<'PY' || { fail "$rel: $(cat "$tmp/py")"; bad=1; }
import sys, struct, zlib, csv
import h5py, numpy as np
args = sys.argv[1:]
i = args.index("--"); h5s = args[:i]; rest = args[i + 1:]
j = rest.index("--"); pngs = rest[:j]; csvs = rest[j + 1:]
for path in h5s:
    with h5py.File(path, "r") as f:
        n = [0]
        def visit(name, o):
            if isinstance(o, h5py.Dataset):
                v = o[()]
                # Tables may hold NaN for "not measured" (the step log's guard
                # columns); amplitudes, densities and images never.
                in_table = o.parent.attrs.get("content") == "table"
                if isinstance(v, np.ndarray) and v.dtype.kind in "fc":
                    if np.any(np.isinf(v)) or (not in_table and np.any(np.isnan(v))):
                        raise SystemExit("h5py: %s:%s holds non-finite numbers" % (path.split("/")[-1], name))
                n[0] += 1
        f.visititems(visit)
        if n[0] == 0: raise SystemExit("h5py: %s holds no dataset" % path)
for path in pngs:
    b = open(path, "rb").read()
    if b[:8] != b"\x89PNG\r\n\x1a\n": raise SystemExit("%s: no PNG signature" % path)
    ln, typ = struct.unpack(">I4s", b[8:16])
    if typ != b"IHDR" or ln != 13: raise SystemExit("%s: first chunk is not IHDR" % path)
    w, h = struct.unpack(">II", b[16:24])
    if zlib.crc32(b[12:29]) != struct.unpack(">I", b[29:33])[0]: raise SystemExit("%s: IHDR CRC wrong" % path)
    if not (100 <= w <= 4000 and 100 <= h <= 4000): raise SystemExit("%s: odd size %d x %d" % (path, w, h))
for path in csvs:
    rows = list(csv.reader(open(path)))
    if len(rows) < 2: raise SystemExit("%s: no data rows" % path)
    if any(len(r) != len(rows[0]) for r in rows): raise SystemExit("%s: rows of unequal length" % path)
print("ok")
PY
  [ $bad -eq 0 ] && echo "ok $rel (${secs} s): ${#h5s[@]} HDF5 [h5py, h5dump, ncdump], ${#pngs[@]} PNG [signature, IHDR], ${#csvs[@]} CSV"
done
echo "note examples/*.sh run sweeps and batch jobs of the recipe examples checked above; not run here"
[ $failures -eq 0 ] || { echo "FAIL $failures example problem(s) above"; exit 1; }
