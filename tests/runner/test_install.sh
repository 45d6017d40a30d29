#!/usr/bin/env bash
# test_install.sh - `make install` into a temporary prefix gives a working
# psiflight: the installed runner runs an installed example with output
# byte-identical to the build's runner, lua5.4 loads the installed module,
# a C program builds against the installed core with pkg-config, the man
# page lists exactly the options of --help (one table) and every one is
# accepted by the parser; DESTDIR staging and `make uninstall` leave no file.
#
# Physics reference for the two flights: the free spreading of a Gaussian
# packet, sigma(t)^2 = sigma0^2 + (hbar t / (2 m sigma0))^2 (textbook result,
# e.g. Griffiths & Schroeter, Introduction to Quantum Mechanics, 3rd ed.,
# Problem 2.21; cited from memory), with hbar and the 87Rb mass from the
# engine's CODATA 2018 / AME2020 tables.
set -u
root=${PSIFLIGHT_ROOT:-$(cd "$(dirname "$0")/../.." && pwd)}
build=${PSIFLIGHT_BUILD:-$root/build}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
fail() { echo "FAIL $*"; exit 1; }
prefix="$tmp/prefix"

make -C "$root" --no-print-directory BUILD="$build" PREFIX="$prefix" install >"$tmp/install.log" 2>&1 ||
  { cat "$tmp/install.log"; fail "make install"; }
manifest="$prefix/share/psiflight/install-manifest.txt"
[ -f "$manifest" ] || fail "no install manifest"
for f in bin/psiflight lib/lua/5.4/psiflight.so lib/libpsiflight-core.a lib/pkgconfig/psiflight.pc \
         include/psiflight/pf_wave.h share/man/man1/psiflight.1 share/psiflight/recipes/tof_image.lua share/psiflight/annotations/psiflight.lua \
         share/doc/psiflight/docs/install.md share/doc/psiflight/examples/release_tof.lua; do
  [ -f "$prefix/$f" ] || fail "not installed: $f"
  grep -qxF "$prefix/$f" "$manifest" || fail "installed but not in the manifest: $f"
done
[ -e "$prefix/include/psiflight/pf_internal.h" ] && fail "the core's internal header was installed"
while IFS= read -r f; do [ -f "$f" ] || fail "manifest lists a missing file: $f"; done <"$manifest"
[ "$(find "$prefix" -type f | wc -l)" -eq "$(($(wc -l <"$manifest") + 1))" ] ||
  fail "files installed outside the manifest"
echo "ok make install puts runner, Lua module, core library, headers, psiflight.pc, man page, recipes, docs under PREFIX, each listed in the manifest"

# 1. The installed runner runs an installed example; same bytes as the build's.
mkdir -p "$tmp/a" "$tmp/b"
(cd "$tmp/a" && "$prefix/bin/psiflight" run "$prefix/share/doc/psiflight/examples/release_tof.lua" --out out --quiet \
   >stdout 2>stderr) || { cat "$tmp/a/stderr"; fail "installed runner on the installed example"; }
# The same script path for both (HDF5 files record the script's path).
cmp -s "$prefix/share/doc/psiflight/examples/release_tof.lua" "$root/examples/release_tof.lua" || fail "installed example differs"
(cd "$tmp/b" && "$build/psiflight" run "$prefix/share/doc/psiflight/examples/release_tof.lua" --out out --quiet >stdout 2>stderr) ||
  fail "build runner on the example"
cmp -s "$tmp/a/stdout" "$tmp/b/stdout" || { diff "$tmp/a/stdout" "$tmp/b/stdout" | head; fail "stdout differs"; }
for f in release_tof.h5 widths.csv widths.png; do
  cmp -s "$tmp/a/out/$f" "$tmp/b/out/$f" || fail "$f differs between installed and build runner"
done
echo "ok the installed runner runs the installed release_tof example: stdout, HDF5, CSV and PNG byte-identical to the build's runner"

# 2. lua5.4 finds the module in PREFIX/lib/lua/5.4 (the folder it searches for
# /usr/local) and flies a packet by the textbook law.
if ! command -v lua5.4 >/dev/null; then
  echo "note: lua5.4 not installed: the plain-interpreter check was skipped"
elif ldd "$prefix/lib/lua/5.4/psiflight.so" | grep -q libasan ||
     nm -D --undefined-only "$prefix/lib/lua/5.4/psiflight.so" 2>/dev/null | grep -q __asan_; then
  # gcc links the module to libasan; clang leaves the runtime's symbols
  # undefined for the executable to provide (lua5.4 does not).
  echo "note: sanitizer build: lua5.4 cannot load the module without the runtime preloaded; check skipped"
else
  cat >"$tmp/spread.lua" <<'EOF'
local pf = require "psiflight"
local s0, t = 1.5e-6, 10e-3
local grid = pf.grid{points = 2048, span = 800e-6}
local w = pf.wave(grid, {mass = "87Rb", momentum = function(k) return math.exp(-(k * s0) ^ 2) end})
w:fly(t)
local m, hbar = pf.species("87Rb").mass, pf.constants.hbar
local law = math.sqrt(s0 ^ 2 + (hbar * t / (2 * m * s0)) ^ 2)
print(string.format("%.12e %.12e", w:position_width(), law))
EOF
  LUA_CPATH="$prefix/lib/lua/5.4/?.so" lua5.4 "$tmp/spread.lua" >"$tmp/spread.out" 2>&1 ||
    { cat "$tmp/spread.out"; fail "lua5.4 with the installed module"; }
  read -r got law <"$tmp/spread.out"
  awk -v g="$got" -v l="$law" 'BEGIN { r = (g - l) / l; if (r < 0) r = -r; exit !(r < 1e-9) }' ||
    fail "lua5.4: width $got, textbook law $law"
  echo "ok lua5.4 loads the installed module; 87Rb width after 10 ms $got m matches the Gaussian spreading law (Griffiths 3rd ed. Pr. 2.21, rel 1e-9)"
fi

# 3. A C program against the installed core, flags from psiflight.pc.
cat >"$tmp/core.c" <<'EOF'
#include <math.h>
#include <stdio.h>
#include <psiflight/pf_build.h>
#include <psiflight/pf_constants.h>
#include <psiflight/pf_context.h>
#include <psiflight/pf_flight.h>
#include <psiflight/pf_grid.h>
#include <psiflight/pf_observe.h>
#include <psiflight/pf_species.h>
#include <psiflight/pf_wave.h>
int main(void)
{
    const double s0 = 2e-6, t = 5e-3;
    const pf_species *rb = pf_species_find("87Rb"); /* the engine's AME2020 table */
    if (!rb) return 4;
    const double mass = rb->mass_kg;
    size_t n = 4096;
    double span = 1e-3, var;
    pf_context *ctx = pf_context_new();
    pf_grid *g;
    pf_wave *w;
    pf_gaussian_spec spec;
    if (!ctx || pf_grid_new(ctx, 1, &n, &span, NULL, &g) != PF_OK || pf_wave_new(g, mass, &w) != PF_OK) return 2;
    pf_gaussian_spec_init(&spec, s0);
    if (pf_build_gaussian(w, &spec, 1) != PF_OK || pf_wave_fly(w, t) != PF_OK ||
        pf_wave_position_moments(w, NULL, &var) != PF_OK) return 3;
    double law = sqrt(s0 * s0 + pow(PF_HBAR * t / (2 * mass * s0), 2));
    printf("%.12e %.12e\n", sqrt(var), law);
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
    return 0;
}
EOF
pcflags=$(PKG_CONFIG_PATH="$prefix/lib/pkgconfig" pkg-config --cflags --libs psiflight) || fail "pkg-config psiflight"
# A sanitizer build (make asan) installs an instrumented library, which only
# links with the sanitizer runtime of the compiler that built it.
san=
nm "$prefix/lib/libpsiflight-core.a" 2>/dev/null | grep -q __asan_ && san="-fsanitize=address,undefined"
if ! cc -std=c11 $san -o "$tmp/core" "$tmp/core.c" $pcflags 2>"$tmp/cc.err"; then
  [ -n "$san" ] || { cat "$tmp/cc.err"; fail "compiling against the installed core"; }
  echo "note: sanitizer build: the instrumented core does not link with cc's runtime here; C check skipped"
else
  "$tmp/core" >"$tmp/core.out" || fail "the C program failed ($?)"
  read -r got law <"$tmp/core.out"
  awk -v g="$got" -v l="$law" 'BEGIN { r = (g - l) / l; if (r < 0) r = -r; exit !(r < 1e-9) }' ||
    fail "C core: width $got, textbook law $law"
  echo "ok a C program built with pkg-config psiflight against the installed core: width $got m matches the Gaussian spreading law (rel 1e-9; 87Rb mass from the engine's AME2020 table)"
fi

# 4. One option table: the man page and --help list the same options, the
# parser accepts each, and every option the parser compares against is listed.
"$prefix/bin/psiflight" --help >"$tmp/help" || fail "--help"
"$prefix/bin/psiflight" --help-man >"$tmp/man" || fail "--help-man"
cmp -s "$tmp/man" "$prefix/share/man/man1/psiflight.1" || fail "installed man page differs from --help-man"
grep -oE '^  --[a-z-]+' "$tmp/help" | tr -d ' ' | sort >"$tmp/help.opts"
sed -n 's/^\\fB\\-\\-\([a-z\\-]*\)\\fR.*/--\1/p' "$tmp/man" | sed 's/\\-/-/g' | sort >"$tmp/man.opts"
[ "$(wc -l <"$tmp/help.opts")" -ge 15 ] || fail "--help lists only $(wc -l <"$tmp/help.opts") options"
cmp -s "$tmp/help.opts" "$tmp/man.opts" || { diff "$tmp/help.opts" "$tmp/man.opts"; fail "man page and --help list different options"; }
grep -oE 'strcmp\(a, "-[-a-z]+"\)' "$root/engine/runner/pfr_options.c" | sed 's/.*"\(.*\)".*/\1/' | sort -u >"$tmp/parser.opts"
while IFS= read -r o; do
  grep -qE "^  $o(,| |$)|, $o( |$)" "$tmp/help" || fail "the parser accepts $o but --help does not list it (add it to pfr_option_docs in engine/runner/pfr_usage.c)"
done <"$tmp/parser.opts"
while IFS= read -r o; do
  cmd=run; grep -A1 -E "^  $o( |,|$)" "$tmp/help" >/dev/null
  sed -n '/^sweep options:/,/^exit status:/p' "$tmp/help" | grep -qE "^  $o( |,|$)" && cmd=sweep
  "$prefix/bin/psiflight" "$cmd" "$tmp/none.lua" "$o" 1 >/dev/null 2>"$tmp/err"
  grep -qE "unknown option|is an option of psiflight sweep" "$tmp/err" && fail "--help lists $o but $cmd refuses it: $(head -1 "$tmp/err")"
done <"$tmp/help.opts"
if command -v groff >/dev/null; then
  groff -man -Tutf8 -ww -z "$prefix/share/man/man1/psiflight.1" 2>"$tmp/groff.err"
  [ -s "$tmp/groff.err" ] && { cat "$tmp/groff.err"; fail "groff warns about the man page"; }
  groff -man -Tascii -P-cbou "$prefix/share/man/man1/psiflight.1" 2>/dev/null >"$tmp/man.txt"
  grep -q "^EXIT STATUS" "$tmp/man.txt" && grep -q "^       --memory-cap SIZE" "$tmp/man.txt" || fail "man page does not render"
  echo "ok man page = --help-man; $(wc -l <"$tmp/help.opts") options in both, each accepted by the parser, none of the parser's missing; groff renders it without warnings"
else
  echo "ok man page = --help-man; $(wc -l <"$tmp/help.opts") options in both, each accepted by the parser, none of the parser's missing (groff absent: rendering not checked)"
fi

# 5. Staging with DESTDIR: files land under DESTDIR, paths inside are PREFIX's.
stage="$tmp/stage"
make -C "$root" --no-print-directory BUILD="$build" PREFIX=/opt/psiflight-staged DESTDIR="$stage" install >/dev/null 2>&1 ||
  fail "make install DESTDIR"
[ -x "$stage/opt/psiflight-staged/bin/psiflight" ] || fail "DESTDIR install did not put the runner under DESTDIR/PREFIX"
grep -q "^prefix=/opt/psiflight-staged$" "$stage/opt/psiflight-staged/lib/pkgconfig/psiflight.pc" || fail "psiflight.pc names the staging folder"
grep -q "$stage" "$stage/opt/psiflight-staged/share/psiflight/install-manifest.txt" && fail "manifest names the staging folder"
make -C "$root" --no-print-directory BUILD="$build" PREFIX=/opt/psiflight-staged DESTDIR="$stage" uninstall >/dev/null 2>&1 ||
  fail "make uninstall DESTDIR"
left=$(find "$stage" -type f -o -type l | head -3)
[ -z "$left" ] || fail "files left after uninstall from DESTDIR: $left"
echo "ok DESTDIR staging: files under DESTDIR, psiflight.pc and manifest name PREFIX only; uninstall leaves no file"

# 6. make uninstall removes everything make install put there.
make -C "$root" --no-print-directory BUILD="$build" PREFIX="$prefix" uninstall >"$tmp/un.log" 2>&1 || { cat "$tmp/un.log"; fail "make uninstall"; }
left=$(find "$prefix" -type f -o -type l | head -3)
[ -z "$left" ] || fail "files left after uninstall: $left"
for d in include/psiflight share/psiflight share/doc/psiflight; do [ -e "$prefix/$d" ] && fail "folder left: $d"; done
echo "ok make uninstall removes every installed file and psiflight's own folders"
