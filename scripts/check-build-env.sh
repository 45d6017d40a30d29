#!/usr/bin/env bash
# check-build-env.sh MODULE=PACKAGE... - before the first compile, checks that
# pkg-config knows every module the build needs, so a fresh machine gets one
# clear message naming the Debian packages and the command that installs
# them, instead of a compiler error about a missing header.  Exits 1 when
# anything is missing.
set -u
missing_mods=() missing_pkgs=()
if ! command -v pkg-config >/dev/null 2>&1; then
  echo "psiflight build: pkg-config is not installed." >&2
  echo "  Install the build dependencies with: make deps   (as root; or: sudo apt-get install pkg-config)" >&2
  exit 1
fi
for pair in "$@"; do
  mod=${pair%%=*} pkg=${pair#*=}
  pkg-config --exists "$mod" 2>/dev/null || { missing_mods+=("$mod"); missing_pkgs+=("$pkg"); }
done
[ ${#missing_mods[@]} -eq 0 ] && exit 0
echo "psiflight build: pkg-config cannot find: ${missing_mods[*]}" >&2
echo "  These come from the Debian packages: ${missing_pkgs[*]}" >&2
echo "  Install everything the build needs with: make deps   (as root)" >&2
echo "  or by hand: sudo apt-get install ${missing_pkgs[*]}" >&2
# PLplot's headers are not in the runtime package (libplplot-dev would pull
# in Qt and wxWidgets): they are unpacked into .deps/ by a script.
case " ${missing_pkgs[*]} " in
  *" libplplot17 "*) echo "  then PLplot's C headers: bash scripts/fetch-plplot-headers.sh   (make deps runs it)" >&2 ;;
esac
exit 1
