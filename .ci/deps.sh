#!/usr/bin/env bash
# Installs the Debian packages warmrain needs to build and test. Idempotent:
# does nothing when everything is present. Needs root (or sudo) to install.
set -euo pipefail
pkgs=(libnetcdf-dev libdeflate-dev libisal-dev netcdf-bin libudunits2-dev udunits-bin pkg-config
      python3-xarray python3-netcdf4 python3-scipy python3-h5netcdf python3-h5py python3-matplotlib
      hdf5-tools time
      libhdf4-dev hdf4-tools libtirpc-dev gcc   # HDF4 SD inputs (libmfhdf, loaded at run time); ncgen-hdf, ncdump-hdf and a C build of ncgen-hdf -c output for the tests
      python3-zarr cdo    # Zarr stores (xarray's zarr writer) and CDO's absolute time axis, for the tests
      gmt-gshhg-low)      # GSHHG coastlines (netCDF) drawn on the maps
missing=()
for p in "${pkgs[@]}"; do
  dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q 'install ok installed' || missing+=("$p")
done
[ ${#missing[@]} -eq 0 ] && exit 0
echo "installing: ${missing[*]}" >&2
SUDO=""
if [ "$(id -u)" != 0 ]; then
  if command -v sudo >/dev/null; then SUDO=sudo; else
    echo "need root to run: apt-get install -y ${missing[*]}" >&2; exit 1
  fi
fi
export DEBIAN_FRONTEND=noninteractive
$SUDO apt-get update -qq -o DPkg::Lock::Timeout=300
$SUDO apt-get install -y -qq --no-install-recommends -o DPkg::Lock::Timeout=300 "${missing[@]}" >/dev/null
