#!/usr/bin/env bash
# The shared library exports cpx_ symbols only: nothing of Eigen, FFTW or the C++ library.
set -euo pipefail
lib="$1"
soname="$(readelf -d "$lib" | sed -n 's/.*Library soname: \[\(.*\)\]/\1/p')"
case "$soname" in
  libcritplex.so.[0-9]*) ;;
  *) echo "unexpected SONAME '$soname'" >&2; exit 1 ;;
esac
others="$(nm -D --defined-only "$lib" | awk '{print $3}' | grep -v '^cpx_' || true)"
if [ -n "$others" ]; then
  echo "non-cpx_ symbols exported from $lib:" >&2
  echo "$others" >&2
  exit 1
fi
echo "exports: $(nm -D --defined-only "$lib" | wc -l) symbols, all cpx_; SONAME $soname"
