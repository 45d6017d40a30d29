#!/usr/bin/env bash
# measure-deps.sh - what each dependency set of scripts/install-deps.sh costs
# on a fresh Debian 12 machine: packages, download size and installed size.
#
# How: apt resolves each install against an empty dpkg status file
# (`apt-get -s -o Dir::State::status=EMPTY`, nothing is installed or
# downloaded), so the answer does not depend on what this machine already
# has.  The starting point is a minimal Debian (what `debootstrap
# --variant=minbase` installs: every package of priority "required", plus
# apt); a set's cost is what it adds to the sets before it, with
# --no-install-recommends as install-deps.sh uses.  Sizes are the Size
# (download, bytes) and Installed-Size (KiB) fields of the package lists, in
# MB of 10^6 bytes.  Needs current package lists (apt-get update).
#
# Usage: scripts/measure-deps.sh [--packages]   (--packages also lists them)
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
show_packages=0
[ "${1:-}" = "--packages" ] && show_packages=1

tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
: >"$tmp/status"

# "NAME VERSION" for every package an install of $@ brings onto an empty system.
resolve() {
  apt-get -s -q -o Dir::State::status="$tmp/status" -o APT::Install-Recommends=0 \
    -o APT::Install-Suggests=0 install "$@" 2>"$tmp/err" |
    sed -n 's/^Inst \([^ ]*\) (\([^ ]*\) .*/\1 \2/p' | sort -u || true
  if [ -s "$tmp/err" ] && grep -q '^E:' "$tmp/err"; then
    cat "$tmp/err" >&2
    echo "measure-deps: apt could not resolve the set" >&2
    exit 1
  fi
}

# Sums the download and installed sizes of "NAME VERSION" lines on stdin:
# prints "COUNT DOWNLOAD_BYTES INSTALLED_BYTES".
sizes() {
  local args=()
  while read -r name version; do args+=("$name=$version"); done
  [ ${#args[@]} -gt 0 ] || { echo "0 0 0"; return; }
  apt-cache show "${args[@]}" 2>/dev/null | awk '
    /^Package: / { pkg = $2 }
    /^Size: / { if (!(pkg in dl)) dl[pkg] = $2 }
    /^Installed-Size: / { if (!(pkg in inst)) inst[pkg] = $2 * 1024 }
    END { n = 0; d = 0; i = 0
          for (p in inst) { n++; d += dl[p]; i += inst[p] }
          printf "%d %d %d\n", n, d, i }'
}

mb() { awk -v b="$1" 'BEGIN { printf "%.0f", b / 1e6 }'; }

list() { bash "$here/install-deps.sh" --list "$@"; }

mapfile -t required < <(apt-cache dumpavail | awk '
  /^Package: / { pkg = $2 } /^Priority: required/ { print pkg }' | sort -u)

resolve "${required[@]}" apt >"$tmp/base"
mapfile -t runtime < <(list runtime)
mapfile -t testset < <(list test)
mapfile -t mpi < <(list mpi)
resolve "${required[@]}" apt "${runtime[@]}" >"$tmp/runtime"
resolve "${required[@]}" apt "${runtime[@]}" "${testset[@]}" >"$tmp/test"
resolve "${required[@]}" apt "${runtime[@]}" "${mpi[@]}" >"$tmp/mpi"
resolve "${required[@]}" apt "${runtime[@]}" "${testset[@]}" "${mpi[@]}" >"$tmp/all"
# For comparison: the runtime set with PLplot's -dev package instead of the
# headers unpacked by fetch-plplot-headers.sh.
mapfile -t runtime_dev < <(printf '%s\n' "${runtime[@]}" | sed 's/^libplplot17$/libplplot-dev/')
resolve "${required[@]}" apt "${runtime_dev[@]}" >"$tmp/runtime_dev"
resolve "${required[@]}" apt "${runtime_dev[@]}" "${testset[@]}" "${mpi[@]}" >"$tmp/one_list"

# Lines of $2 not in $1.
added() { comm -13 "$1" "$2"; }

row() { # label, file of added packages
  read -r n d i < <(sizes <"$2")
  printf '| %s | %d | %s MB | %s MB |\n' "$1" "$n" "$(mb "$d")" "$(mb "$i")"
}

base_n=$(wc -l <"$tmp/base")
echo "Debian $(cat /etc/debian_version 2>/dev/null || echo '?'), $(dpkg --print-architecture); starting from a minimal system of $base_n packages (priority required + apt)."
echo
echo "| set (make target) | packages added | download | installed |"
echo "| --- | --- | --- | --- |"
added "$tmp/base" "$tmp/runtime" >"$tmp/add_runtime"
added "$tmp/runtime" "$tmp/test" >"$tmp/add_test"
added "$tmp/runtime" "$tmp/mpi" >"$tmp/add_mpi"
added "$tmp/runtime" "$tmp/all" >"$tmp/add_testmpi"
added "$tmp/base" "$tmp/all" >"$tmp/add_all"
added "$tmp/base" "$tmp/runtime_dev" >"$tmp/add_runtime_dev"
added "$tmp/base" "$tmp/one_list" >"$tmp/add_one_list"
row "runtime (\`make deps\`, \`make demo\`)" "$tmp/add_runtime"
row "test, on top of runtime" "$tmp/add_test"
row "mpi, on top of runtime (\`make deps-mpi\`)" "$tmp/add_mpi"
row "test + mpi, on top of runtime" "$tmp/add_testmpi"
row "all three (\`make test\`)" "$tmp/add_all"
row "runtime with libplplot-dev instead (not used)" "$tmp/add_runtime_dev"
row "one list as before the split (libplplot-dev, all sets)" "$tmp/add_one_list"
echo
echo "PLplot's headers (fetch-plplot-headers.sh) add one download of libplplot-dev:"
apt-cache show "libplplot-dev=$(sed -n 's/^libplplot17 //p' "$tmp/runtime")" 2>/dev/null |
  awk '/^Size: / { printf "  %.2f MB downloaded, three headers kept (under 0.1 MB)\n", $2 / 1e6; exit }'

if [ $show_packages -eq 1 ]; then
  for s in runtime test mpi; do
    echo
    echo "$s adds:"
    cut -d' ' -f1 "$tmp/add_$s" | paste -sd' ' | fold -s -w 100 | sed 's/^/  /'
  done
fi
