#!/usr/bin/env bash
# test_runner.sh - the headless runner's contract: exit codes, error
# positions, parameters, deterministic output, and the Lua C module loading
# into a plain lua5.4 interpreter.
set -u
root=${PSIFLIGHT_ROOT:-$(cd "$(dirname "$0")/../.." && pwd)}
build=${PSIFLIGHT_BUILD:-$root/build}
runner=${PSIFLIGHT_RUNNER:-$build/psiflight}
tmp=$(mktemp -d); trap 'rm -rf "$tmp"' EXIT
fails=0
ok()   { echo "ok $*"; }
bad()  { echo "FAILED: $*"; fails=$((fails + 1)); }
expect_status() { # want, label, command...
  local want=$1 label=$2; shift 2
  "$@" >"$tmp/out" 2>"$tmp/err"; local got=$?
  if [ "$got" -eq "$want" ]; then ok "$label (exit $got)"; else bad "$label: exit $got, want $want"; sed 's/^/  | /' "$tmp/err"; fi
}

# An error on line 3 exits 1 and names :3: with a traceback.
printf 'local pf = require "psiflight"\nlocal g = pf.grid{points = 64, span = 1e-4}\nlocal w = pf.wave(g, {mass = -2, position = function(x) return 1 end})\n' > "$tmp/line3.lua"
expect_status 1 "script error exits 1" "$runner" run "$tmp/line3.lua"
grep -q 'line3.lua:3:' "$tmp/err" && ok "error names the script line :3:" || bad "no :3: in: $(cat "$tmp/err")"
grep -q "mass" "$tmp/err" && grep -q -- "-2" "$tmp/err" && ok "error names the field and the bad value" || bad "message lacks field/value"
grep -q 'script traceback:' "$tmp/err" && grep -q 'line3.lua:3: in main chunk' "$tmp/err" && ok "script traceback on stderr" || bad "no traceback"
[ ! -s "$tmp/out" ] && ok "nothing on stdout for a failed script" || bad "stdout not empty"

printf 'print(1)\nlocal x = = 2\n' > "$tmp/syntax.lua"
expect_status 1 "syntax error exits 1" "$runner" run "$tmp/syntax.lua"
grep -q 'syntax.lua:2:' "$tmp/err" && ok "syntax error names line 2" || bad "no :2: in syntax error"

expect_status 2 "missing script is a usage error" "$runner" run "$tmp/none.lua"
expect_status 2 "unknown option is a usage error" "$runner" run "$tmp/line3.lua" --frobnicate
expect_status 2 "malformed --set is a usage error" "$runner" run "$tmp/line3.lua" --set novalue
expect_status 2 "bad thread count is a usage error" "$runner" run "$tmp/line3.lua" --threads 0
expect_status 2 "no command is a usage error" "$runner"

# Memory cap: resource limit, exit 5.
printf 'local pf = require "psiflight"\npf.setup{memory_cap = 1e6}\nlocal g = pf.grid{points = {1024, 1024}, span = 1}\n' > "$tmp/big.lua"
expect_status 5 "memory cap exits 5" "$runner" run "$tmp/big.lua"
grep -q 'big.lua:3:' "$tmp/err" && ok "memory cap error names line 3" || bad "no :3: for memory cap"
# A caught engine error followed by a plain error is a script error (1), not a limit.
printf 'local pf = require "psiflight"\npf.setup{memory_cap = 1e6}\npcall(pf.grid, {points = {1024, 1024}, span = 1})\nerror("later")\n' > "$tmp/caught.lua"
expect_status 1 "a later plain error is a script error" "$runner" run "$tmp/caught.lua"

# --set parameters reach the script; numbers stay numbers.
printf 'local pf = require "psiflight"\nprint(pf.params.tof * 2, pf.params.label, math.type(pf.params.n))\n' > "$tmp/params.lua"
"$runner" run "$tmp/params.lua" --set tof=1.5e-3 --set label=cloudA --set n=7 > "$tmp/p.out" 2>&1
[ "$(cat "$tmp/p.out")" = "$(printf '0.003\tcloudA\tinteger')" ] && ok "--set values visible as pf.params" || bad "params: $(cat "$tmp/p.out")"

# The flagship gives byte-identical stdout on repeated runs, also with 2 threads.
# (The same output folder both times: stdout names the files it wrote.)
for i in 1 2; do "$runner" run "$root/examples/release_tof.lua" --out "$tmp/demo" --overwrite > "$tmp/demo$i.txt" 2>"$tmp/demo$i.err" || bad "demo run $i failed: $(cat "$tmp/demo$i.err")"; done
cmp -s "$tmp/demo1.txt" "$tmp/demo2.txt" && ok "demo stdout byte-identical over two runs" || bad "demo stdout differs"
for i in 1 2; do "$runner" run "$root/examples/release_tof.lua" --threads 2 --out "$tmp/demo2t" --overwrite > "$tmp/demo2t$i.txt" 2>/dev/null; done
cmp -s "$tmp/demo2t1.txt" "$tmp/demo2t2.txt" && ok "demo stdout byte-identical with 2 threads" || bad "2-thread demo stdout differs"
grep -q 'largest relative deviation' "$tmp/demo1.txt" && ok "demo prints its comparison with the width law" || bad "demo summary missing"

# The same engine as a Lua C module in a plain interpreter.
if command -v lua5.4 >/dev/null; then
  # A sanitizer build of the module needs the sanitizer runtime loaded first.
  preload=""
  if ldd "$build/psiflight.so" 2>/dev/null | grep -q libasan; then
    preload=$(${CC:-cc} -print-file-name=libasan.so)
  elif nm -D --undefined-only "$build/psiflight.so" 2>/dev/null | grep -q ' __asan_'; then
    # clang links its ASan runtime into programs only; a module needs the
    # shared runtime preloaded (make asan's clang build).
    preload=$(clang -print-file-name=libclang_rt.asan-x86_64.so)
  fi
  out=$(cd "$tmp" && LD_PRELOAD="$preload" ASAN_OPTIONS=detect_leaks=0 LUA_CPATH="$build/?.so" lua5.4 -e '
    local pf = require "psiflight"
    local g = pf.grid{points = 128, span = 1e-4}
    local w = pf.wave(g, {mass = 1e-25, position = function(x) return math.exp(-(x / 5e-6) ^ 2) end})
    w:fly(1e-3)
    print(type(pf), string.format("%.12f", w:norm()))' 2>&1)
  [ "$out" = "$(printf 'table\t1.000000000000')" ] && ok "require \"psiflight\" works in lua5.4" || bad "lua5.4 module: $out"
else
  bad "lua5.4 not installed"
fi

echo "ok runner contract: $fails failure(s)"
[ "$fails" -eq 0 ]
