#!/usr/bin/env bash
# install-deps.sh - installs the Debian 12 packages psiflight needs to build,
# test, benchmark and plot, when any is missing.  As root it runs apt-get
# (after `apt-get update`, since a fresh machine's package lists may be empty);
# otherwise it prints the exact command to run.  Safe to run repeatedly.
set -euo pipefail

# Build: compiler, pkg-config, Lua 5.4, FFTW (with its OpenMP layer), cmocka.
# Tests and references: GSL, libcerf, numpy/scipy and h5py from Debian
# (published masses and constants are committed excerpts in tests/data).
# Outputs: HDF5, PLplot with its cairo PNG driver, cJSON.  Sweeps: Open MPI.
# strace: the hostile-file tests check that HDF5 never opens outside files.
PACKAGES=(
  build-essential pkg-config
  liblua5.4-dev lua5.4
  libfftw3-dev
  libcmocka-dev
  libgsl-dev libcerf-dev
  python3 python3-numpy python3-scipy python3-h5py
  libhdf5-dev hdf5-tools
  libplplot-dev plplot-driver-cairo
  libcjson-dev
  strace
  netcdf-bin udunits-bin  # tests only: ncdump and udunits2 read the HDF5 files (tests/ref/test_h5_netcdf.sh)
  libopenmpi-dev openmpi-bin
  # Test and development only (not needed to build or run psiflight): clang
  # with libFuzzer and its sanitizer runtimes for `make fuzz`, the fuzz smoke
  # pass of the test suite and the clang half of `make asan`; libomp for
  # clang's -fopenmp.
  clang libclang-rt-14-dev libomp-14-dev
)

missing=()
for p in "${PACKAGES[@]}"; do
  if ! dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed"; then
    missing+=("$p")
  fi
done

if [ ${#missing[@]} -eq 0 ]; then
  exit 0
fi

echo "install-deps: missing Debian packages: ${missing[*]}"
if [ "$(id -u)" -ne 0 ]; then
  echo "install-deps: not root; run:"
  echo "  sudo apt-get update && sudo apt-get install -y ${missing[*]}"
  exit 1
fi
export DEBIAN_FRONTEND=noninteractive
apt-get update -q
apt-get install -y -q --no-install-recommends "${missing[@]}"
