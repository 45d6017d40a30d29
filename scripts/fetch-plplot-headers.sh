#!/usr/bin/env bash
# fetch-plplot-headers.sh [--force] - gives the build PLplot's C headers and a
# pkg-config module `plplot` without installing libplplot-dev.
#
# Why: on Debian 12, libplplot-dev depends on PLplot's C++, Fortran, Qt and
# wxWidgets bindings (several hundred MB of GUI toolkits), while psiflight
# only calls the C library through the cairo PNG driver.  The runtime set of
# scripts/install-deps.sh installs libplplot17 and plplot-driver-cairo; this
# script downloads the libplplot-dev package of exactly the installed
# libplplot17 version with apt (whose signed package lists check the file),
# unpacks it in a temporary folder, and keeps the three headers plplot.h
# includes, a libplplot.so link to the installed library and a plplot.pc,
# under .deps/ in the source tree (the Makefile searches .deps/pkgconfig
# first).  Nothing outside the source tree changes; root is not needed.
#
# Does nothing when pkg-config already knows `plplot` (libplplot-dev
# installed) unless --force is given, or when .deps already matches the
# installed version.  PSIFLIGHT_DEPS_DIR replaces .deps (for tests).
set -euo pipefail
root=$(cd "$(dirname "$0")/.." && pwd)
deps=${PSIFLIGHT_DEPS_DIR:-$root/.deps} # tests unpack into a folder of their own
force=0
[ "${1:-}" = "--force" ] && force=1

if [ $force -eq 0 ] && PKG_CONFIG_PATH= pkg-config --exists plplot 2>/dev/null; then
  exit 0 # libplplot-dev is installed: its module serves the build
fi

version=$(dpkg-query -W -f='${Version}' libplplot17 2>/dev/null || true)
if [ -z "$version" ]; then
  echo "fetch-plplot-headers: libplplot17 is not installed (make deps installs it, as root)" >&2
  exit 1
fi
if [ $force -eq 0 ] && [ -f "$deps/pkgconfig/plplot.pc" ] &&
   grep -qxF "# libplplot-dev $version" "$deps/pkgconfig/plplot.pc"; then
  exit 0 # already unpacked for this version
fi

# The installed shared library (the -dev package's libplplot.so points at it).
solib=$(dpkg -L libplplot17 | grep -E '/libplplot\.so\.17$' | head -n 1)
[ -n "$solib" ] && [ -e "$solib" ] || { echo "fetch-plplot-headers: libplplot.so.17 not found in libplplot17" >&2; exit 1; }

tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
chmod 755 "$tmp" # apt's download sandbox user must be able to write here
(cd "$tmp" && apt-get download -q "libplplot-dev=$version" >/dev/null 2>"$tmp/apt.err") || {
  cat "$tmp/apt.err" >&2
  echo "fetch-plplot-headers: could not download libplplot-dev $version (run apt-get update as root?)" >&2
  exit 1
}
dpkg-deb -x "$tmp"/libplplot-dev_*.deb "$tmp/x"
src="$tmp/x/usr/include/plplot"

rm -rf "$deps/plplot" "$deps/pkgconfig/plplot.pc"
mkdir -p "$deps/plplot/include/plplot" "$deps/plplot/lib" "$deps/pkgconfig"
# plplot.h includes plConfig.h and pldll.h; nothing else is needed for C.
for h in plplot.h plConfig.h pldll.h; do
  cp "$src/$h" "$deps/plplot/include/plplot/$h"
done
ln -s "$solib" "$deps/plplot/lib/libplplot.so"
cat >"$deps/pkgconfig/plplot.pc" <<EOF
# libplplot-dev $version
# Written by scripts/fetch-plplot-headers.sh: PLplot's C headers unpacked from
# Debian's libplplot-dev without its GUI-toolkit dependencies.
prefix=\${pcfiledir}/../plplot
includedir=\${prefix}/include/plplot
libdir=\${prefix}/lib

Name: PLplot
Description: PLplot core C library (headers only, from libplplot-dev)
Version: ${version%%+*}
Libs: -L\${libdir} -lplplot
Cflags: -I\${includedir}
EOF
echo "fetch-plplot-headers: PLplot $version headers in $deps/plplot"
