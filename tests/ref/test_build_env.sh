#!/usr/bin/env bash
# test_build_env.sh - plain `make` on a machine without a build dependency
# stops before compiling, with one message that names the missing pkg-config
# module, its Debian package and `make deps`, not with a compiler error about
# a missing header.  A module is made "missing" by pointing the Makefile's
# module variable at a name pkg-config does not know.
set -u
root=${PSIFLIGHT_ROOT:-$(cd "$(dirname "$0")/../.." && pwd)}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
fail() { echo "FAIL $*"; exit 1; }

make -C "$root" --no-print-directory BUILD="$tmp/b" LUA_PC=psiflight-no-such-lua all >"$tmp/out" 2>&1
[ $? -ne 0 ] || fail "make succeeded without the Lua module"
grep -q "pkg-config cannot find: psiflight-no-such-lua" "$tmp/out" || { cat "$tmp/out"; fail "module not named"; }
grep -q "liblua5.4-dev" "$tmp/out" || fail "Debian package not named"
grep -q "make deps" "$tmp/out" || fail "install command not named"
grep -q "No such file or directory" "$tmp/out" && fail "a compiler error reached the user"
ls "$tmp/b"/engine 2>/dev/null | grep -q . && fail "objects were compiled before the check"
echo "ok a missing build module stops make before compiling, naming the module, liblua5.4-dev and make deps"

make -C "$root" --no-print-directory BUILD="$tmp/b" CMOCKA_PC=psiflight-no-such-cmocka "$tmp/b/tests/unit/base/test_grid.o" >"$tmp/out" 2>&1
[ $? -ne 0 ] || fail "a unit test compiled without cmocka"
grep -q "libcmocka-dev" "$tmp/out" || { cat "$tmp/out"; fail "cmocka's package not named"; }
echo "ok a missing test module names libcmocka-dev"

# PLplot's headers are not in a runtime package (libplplot-dev would pull in
# Qt and wxWidgets): the message points at the script that unpacks them.
make -C "$root" --no-print-directory BUILD="$tmp/c" PLPLOT_PC=psiflight-no-such-plplot all >"$tmp/out" 2>&1
[ $? -ne 0 ] || fail "make succeeded without PLplot"
grep -q "pkg-config cannot find: psiflight-no-such-plplot" "$tmp/out" || { cat "$tmp/out"; fail "PLplot module not named"; }
grep -q "libplplot17" "$tmp/out" || fail "PLplot's runtime package not named"
grep -q "scripts/fetch-plplot-headers.sh" "$tmp/out" || fail "the header script not named"
grep -q "libplplot-dev" "$tmp/out" && fail "the message suggests libplplot-dev"
echo "ok a missing PLplot module names libplplot17, make deps and scripts/fetch-plplot-headers.sh, not libplplot-dev"
