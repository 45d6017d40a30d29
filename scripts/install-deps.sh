#!/usr/bin/env bash
# install-deps.sh [SET...] - installs the Debian 12 packages of the named
# dependency sets when any is missing.  As root it runs apt-get (after
# `apt-get update`, since a fresh machine's package lists may be empty);
# otherwise it prints the exact command to run.  Safe to run repeatedly.
#
# Sets (README.md states what each costs; scripts/measure-deps.sh measures it):
#   runtime  build and run psiflight: `make`, `make demo`, `make install`
#   test     the references and tools the test suite compares against
#   mpi      Open MPI and FFTW's MPI layer: sweeps spread over MPI ranks, and
#            one grid distributed over ranks (docs/distributed.md)
# `--list SET...` prints the packages of the sets, one per line, and exits.
# With no set named it installs runtime only.
set -euo pipefail

# Build and run: compiler, pkg-config, Lua 5.4 (headers, and the interpreter
# that loads the Lua module), FFTW (with its OpenMP layer), HDF5, cJSON, and
# PLplot's core library with its cairo driver (PNG pictures).  PLplot's
# headers are not here: Debian 12's libplplot-dev depends on the Qt,
# wxWidgets and Fortran bindings (about 800 MB installed); the three C
# headers the build needs are unpacked from that package instead, without
# its dependencies, by scripts/fetch-plplot-headers.sh.
RUNTIME=(
  build-essential pkg-config
  liblua5.4-dev lua5.4
  libfftw3-dev
  libhdf5-dev
  libplplot17 plplot-driver-cairo
  libcjson-dev
)

# Tests: cmocka (unit tests); GSL and libcerf (C reference libraries);
# numpy/scipy/h5py from Debian (reference computations and file readers);
# h5dump; strace (the hostile-file tests check that HDF5 never opens outside
# files); clang with libFuzzer, its sanitizer runtimes and libomp for the
# fuzz smoke pass of the suite, `make fuzz` and the clang half of `make asan`;
# groff renders the man page in tests/runner/test_install.sh.
TEST=(
  libcmocka-dev
  libgsl-dev libcerf-dev
  python3 python3-numpy python3-scipy python3-h5py
  hdf5-tools
  strace
  groff-base
  netcdf-bin udunits-bin  # ncdump and udunits2 read the HDF5 files (tests/ref/test_h5_netcdf.sh)
  clang libclang-rt-14-dev libomp-14-dev
)

# MPI sweeps (psiflight sweep under mpirun) and distributed grids (FFTW's
# MPI layer, libfftw3-mpi-dev, built against Open MPI in Debian).  Without
# them the runner builds without MPI, sweeps run their points as local worker
# processes and pf.setup{distribute = true} keeps every grid whole.
MPI=(
  libopenmpi-dev openmpi-bin
  libfftw3-mpi-dev
)

packages_of() { # set name -> its packages on stdout
  case $1 in
    runtime) printf '%s\n' "${RUNTIME[@]}" ;;
    test) printf '%s\n' "${TEST[@]}" ;;
    mpi) printf '%s\n' "${MPI[@]}" ;;
    *) echo "install-deps: unknown set '$1' (sets: runtime test mpi)" >&2; return 1 ;;
  esac
}

list=0
if [ "${1:-}" = "--list" ]; then list=1; shift; fi
sets=("$@")
[ ${#sets[@]} -eq 0 ] && sets=(runtime)
wanted=()
for s in "${sets[@]}"; do
  mapfile -t pk < <(packages_of "$s") || exit 2
  [ ${#pk[@]} -gt 0 ] || exit 2
  wanted+=("${pk[@]}")
done
if [ "$list" -eq 1 ]; then
  printf '%s\n' "${wanted[@]}"
  exit 0
fi

here=$(cd "$(dirname "$0")" && pwd)
missing=()
for p in "${wanted[@]}"; do
  if ! dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed"; then
    missing+=("$p")
  fi
done

if [ ${#missing[@]} -gt 0 ]; then
  echo "install-deps: missing Debian packages (${sets[*]}): ${missing[*]}"
  if [ "$(id -u)" -ne 0 ]; then
    echo "install-deps: not root; run:"
    echo "  sudo apt-get update && sudo apt-get install -y --no-install-recommends ${missing[*]}"
    exit 1
  fi
  export DEBIAN_FRONTEND=noninteractive
  apt-get update -q
  apt-get install -y -q --no-install-recommends "${missing[@]}"
fi

# PLplot's C headers, when no plplot pkg-config module is installed (the
# usual case: libplplot-dev is not in the runtime set).
bash "$here/fetch-plplot-headers.sh"
