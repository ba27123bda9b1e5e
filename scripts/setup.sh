#!/bin/sh
# Set-up step of every make target that needs the NetCDF C library: installs it on Debian
# or Ubuntu when running as root, otherwise prints how to install it and stops.
set -u
have() { command -v "$1" >/dev/null 2>&1; }
if have pkg-config && pkg-config --exists netcdf && have ncdump; then
	exit 0
fi
if [ "$(id -u)" = 0 ] && have apt-get; then
	echo "setup: installing the NetCDF C library (libnetcdf-dev, netcdf-bin) with apt-get" >&2
	export DEBIAN_FRONTEND=noninteractive
	if apt-get update -qq && apt-get install -y -qq libnetcdf-dev netcdf-bin pkg-config gcc >/dev/null; then
		pkg-config --exists netcdf && exit 0
	fi
	echo "setup: apt-get could not install libnetcdf-dev" >&2
	exit 1
fi
cat >&2 <<'MSG'
colbridge needs the NetCDF C library, its pkg-config file and ncdump. Install them with:

  Debian / Ubuntu:  sudo apt-get install libnetcdf-dev netcdf-bin pkg-config gcc
  Fedora:           sudo dnf install netcdf-devel netcdf pkgconf-pkg-config gcc
  macOS (Homebrew): brew install netcdf pkg-config
  conda:            conda install -c conda-forge libnetcdf pkg-config compilers
                    (then: export PKG_CONFIG_PATH=$CONDA_PREFIX/lib/pkgconfig)

and run the make target again.
MSG
exit 1
