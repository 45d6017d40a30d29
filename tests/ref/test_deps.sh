#!/usr/bin/env bash
# test_deps.sh - the dependency sets of scripts/install-deps.sh stay what
# README.md promises: the runtime set builds and draws without GUI toolkits,
# Fortran, clang or MPI, and PLplot's C headers unpacked by
# scripts/fetch-plplot-headers.sh (instead of libplplot-dev) are enough to
# compile, link and draw a PNG with the installed cairo driver.
# The package resolution uses apt's own solver on an empty dpkg status (as
# scripts/measure-deps.sh does); without package lists those checks skip.
set -u
root=${PSIFLIGHT_ROOT:-$(cd "$(dirname "$0")/../.." && pwd)}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
fail() { echo "FAIL $*"; exit 1; }
deps="$root/scripts/install-deps.sh"

# 1. The sets as listed.
bash "$deps" --list runtime >"$tmp/runtime" || fail "--list runtime"
bash "$deps" --list test >"$tmp/test" || fail "--list test"
bash "$deps" --list mpi >"$tmp/mpi" || fail "--list mpi"
grep -qx libplplot17 "$tmp/runtime" || fail "runtime set lacks libplplot17"
grep -qx plplot-driver-cairo "$tmp/runtime" || fail "runtime set lacks the cairo driver"
grep -qx libplplot-dev "$tmp/runtime" "$tmp/test" "$tmp/mpi" && fail "libplplot-dev is back in a set"
grep -q openmpi "$tmp/runtime" "$tmp/test" && fail "Open MPI outside the mpi set"
dup=$(sort "$tmp/runtime" "$tmp/test" "$tmp/mpi" | uniq -d)
[ -z "$dup" ] || fail "packages in two sets: $dup"
bash "$deps" --list nonsense >/dev/null 2>"$tmp/err" && fail "an unknown set was accepted"
grep -q "unknown set 'nonsense'" "$tmp/err" || fail "unknown set not named: $(cat "$tmp/err")"
echo "ok the sets list libplplot17 + cairo driver, no libplplot-dev, MPI only in mpi, no package twice, unknown set refused"

# 2. What the runtime set pulls in on a fresh system (apt's solver, simulated).
: >"$tmp/status"
if apt-get -s -q -o Dir::State::status="$tmp/status" -o APT::Install-Recommends=0 \
     install $(cat "$tmp/runtime") >"$tmp/sim" 2>"$tmp/sim.err"; then
  sed -n 's/^Inst \([^ ]*\) .*/\1/p' "$tmp/sim" >"$tmp/closure"
  n=$(wc -l <"$tmp/closure")
  [ "$n" -gt 50 ] || fail "runtime resolution looks empty ($n packages)"
  heavy=$(grep -E '^(libqt5|qtbase|libwx|libgtk-3|gfortran|libopenmpi|clang|libllvm|python3|libplplot-dev|systemd$)' "$tmp/closure" | paste -sd' ')
  [ -z "$heavy" ] || fail "the runtime set pulls in: $heavy"
  grep -qx libcairo2 "$tmp/closure" || fail "the runtime resolution lacks libcairo2 (cairo driver)"
  echo "ok the runtime set resolves to $n packages on an empty system, none of Qt, wxWidgets, GTK, Fortran, MPI, clang/LLVM, Python"
else
  echo "note: apt could not simulate the runtime set here (no package lists?): closure check skipped"
  sed 's/^/  /' "$tmp/sim.err" | head -5
fi

# 3. PLplot's headers without libplplot-dev: unpack into a private folder and
# build a program that draws a PNG, seeing no other plplot module.
if ! dpkg-query -W -f='${Status}' libplplot17 2>/dev/null | grep -q "install ok installed"; then
  fail "libplplot17 is not installed (make deps)"
fi
if ! PSIFLIGHT_DEPS_DIR="$tmp/deps" bash "$root/scripts/fetch-plplot-headers.sh" --force >"$tmp/fetch" 2>&1; then
  if grep -q "could not download" "$tmp/fetch"; then
    echo "note: libplplot-dev could not be downloaded here: header check skipped"; exit 0
  fi
  cat "$tmp/fetch"; fail "fetch-plplot-headers.sh failed"
fi
ls "$tmp/deps/plplot/include/plplot" | LC_ALL=C sort | paste -sd" " | grep -qx "plConfig.h pldll.h plplot.h" ||
  fail "unexpected headers: $(ls "$tmp/deps/plplot/include/plplot")"
pc() { PKG_CONFIG_LIBDIR="$tmp/deps/pkgconfig" PKG_CONFIG_PATH= pkg-config "$@"; }
cflags=$(pc --cflags plplot) && libs=$(pc --libs plplot) || fail "pkg-config cannot read the written plplot.pc"
case $cflags in *"$tmp/deps/"*) ;; *) fail "cflags do not point into the unpacked folder: $cflags" ;; esac
cat >"$tmp/draw.c" <<'EOF'
#include <plplot.h>
int main(int argc, char **argv)
{
    (void)argc;
    plsdev("pngcairo");
    plsfnam(argv[1]);
    plinit();
    plenv(0.0, 1.0, 0.0, 1.0, 0, 0);
    plend();
    return 0;
}
EOF
cc $cflags -o "$tmp/draw" "$tmp/draw.c" $libs 2>"$tmp/cc.err" || { cat "$tmp/cc.err"; fail "compiling against the unpacked headers"; }
"$tmp/draw" "$tmp/out.png" >/dev/null 2>&1 || fail "the drawing program failed"
head -c 8 "$tmp/out.png" | od -An -tx1 | tr -d ' \n' | grep -qx 89504e470d0a1a0a || fail "no PNG signature in the output"
# PNG signature: the PNG specification (ISO/IEC 15948), section 5.2.
echo "ok PLplot's three C headers from libplplot-dev $(sed -n 's/^# libplplot-dev //p' "$tmp/deps/pkgconfig/plplot.pc") compile, link and draw a PNG (signature per ISO/IEC 15948) through the cairo driver"
