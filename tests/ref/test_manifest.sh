#!/usr/bin/env bash
# test_manifest.sh - the run manifest: schema keys agreed between the parts
# of psiflight, SHA-256 of the script and of every output equal to
# sha256sum's (GNU coreutils), parameters sorted, results from pf.report,
# and a failed run recorded as such.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
runner=${PSIFLIGHT_RUNNER:-$root/build/psiflight}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
# A script that declares three parameters (names chosen to test sorting).
cat >"$tmp/writer.lua" <<'LUA'
local pf = require "psiflight"
local p = pf.parameters{
  t = {default = 0.2e-3, unit = "s", help = "flight time"},
  zeta = {default = 1, type = "number", help = "amplitude before normalisation"},
  alpha = {default = "a", help = "name of the data set", choices = {"a", "x"}},
}
local g = pf.grid{points = 32, span = 40e-6}
local w = pf.gaussian(g, {mass = pf.mass("23Na"), width = 3e-6})
w:scale(p.zeta)
w:fly(p.t)
local f = pf.h5file("state.h5")
f:put_wave(p.alpha, w)
f:close()
LUA
"$runner" run "$tmp/writer.lua" --out "$tmp/ok" --set t=1e-3 --set zeta=3 --set alpha=x --set t=2e-3 \
  --seed 7 --threads 2 --planning estimate --quiet

/usr/bin/python3 - "$tmp/ok" "$tmp/writer.lua" <<'PY'
import json, subprocess, sys, os
folder, script = sys.argv[1], sys.argv[2]
m = json.load(open(os.path.join(folder, "manifest.json")))
def ok(c, label):
    if not c: print("FAIL", label); sys.exit(1)
    print("ok", label)
def sha256sum(p):
    return subprocess.run(["sha256sum", p], capture_output=True, text=True, check=True).stdout.split()[0]
ok(m["format"] == "psiflight-run-manifest" and m["format_version"] == 1, "format and version [BRIEF schema]")
for key in ["script", "parameters", "seed", "threads", "status", "results", "outputs", "modules", "versions", "planning", "plans", "guards"]:
    ok(key in m, "manifest has '%s' [BRIEF schema]" % key)
ok(m["script"]["sha256"] == sha256sum(script), "script SHA-256 equals sha256sum [coreutils]")
ok(m["parameters"] == {"alpha": "x", "t": "2e-3", "zeta": "3"} and list(m["parameters"]) == ["alpha", "t", "zeta"],
   "parameters as strings, sorted, last --set wins")
ok(m["seed"] == 7 and m["threads"] == 2 and m["status"] == "ok" and m["planning"] == "estimate", "seed, threads, status, planning")
paths = [o["path"] for o in m["outputs"]]
ok(paths == ["state.h5"], "outputs listed relative to the folder")
for o in m["outputs"]:
    ok(o["sha256"] == sha256sum(os.path.join(folder, o["path"])), "%s SHA-256 equals sha256sum [coreutils]" % o["path"])
v = m["versions"]
ok(all(v.get(k) for k in ["psiflight", "lua", "fftw", "hdf5", "plplot", "cjson"]), "versions of engine and libraries")
ok(m["guards"]["strict"] is False and m["guards"]["warnings"] == 0, "guard figures")
text = open(os.path.join(folder, "manifest.json")).read()
ok("2026" not in text and "time" not in text.replace("timestamp", ""), "no timestamps")
PY

# pf.report values and a failed run.
cat >"$tmp/fails.lua" <<'LUA'
local pf = require "psiflight"
pf.report("width", 2.5e-6, "m")
pf.report("ratio", 0.5)
pf.write_csv("part.csv", {{"x", "m", {1, 2}}})
error("detector saturated")
LUA
if "$runner" run "$tmp/fails.lua" --out "$tmp/bad" --quiet 2>/dev/null; then echo "FAIL the failing script succeeded"; exit 1; fi
/usr/bin/python3 - "$tmp/bad/manifest.json" <<'PY'
import json, sys
m = json.load(open(sys.argv[1]))
def ok(c, label):
    if not c: print("FAIL", label, m); sys.exit(1)
    print("ok", label)
ok(m["status"] == "failed" and "detector saturated" in m["error"], "a failed run is recorded with its error")
ok(m["results"] == {"ratio": {"value": 0.5, "unit": ""}, "width": {"value": 2.5e-6, "unit": "m"}}, "pf.report results, sorted by name")
ok([o["path"] for o in m["outputs"]] == ["part.csv"], "files completed before the failure are listed")
PY

# Default folder: out/<script stem> below the working folder.
(cd "$tmp" && "$runner" run fails.lua --quiet 2>/dev/null || true)
[ -f "$tmp/out/fails/manifest.json" ] && [ -f "$tmp/out/fails/part.csv" ] &&
  echo "ok without --out, files and manifest go to out/<script stem>"
