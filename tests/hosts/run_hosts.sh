#!/usr/bin/env bash
# Builds the host bindings against an installed critplex and runs their tests:
#   run_hosts.sh BUILD_DIR r|octave|nipype|snakemake
set -euo pipefail
build_dir="$1"
host="$2"
here="$(cd "$(dirname "$0")" && pwd)"
src="$(cd "$here/../.." && pwd)"
prefix="$build_dir/hosts-$host/prefix"
rm -rf "$build_dir/hosts-$host"
mkdir -p "$build_dir/hosts-$host"
cmake --install "$build_dir" --prefix "$prefix" >/dev/null
export PKG_CONFIG_PATH="$(dirname "$(find "$prefix" -name critplex.pc | head -1)")"
export NITIME_CSV="/usr/lib/python3/dist-packages/nitime/data/fmri_timeseries.csv"
libdir="$(pkg-config --variable=libdir critplex)"
case "$host" in
  r)
    export R_TEST_LIBRARY="$build_dir/hosts-r/library"
    mkdir -p "$R_TEST_LIBRARY"
    # Build from a copy so no object files land in the source tree.
    cp -r "$src/plugins/r/critplex" "$build_dir/hosts-r/critplex"
    R CMD INSTALL --no-test-load --library="$R_TEST_LIBRARY" "$build_dir/hosts-r/critplex" >"$build_dir/hosts-r/install.log" 2>&1 \
      || { cat "$build_dir/hosts-r/install.log"; exit 1; }
    Rscript "$here/test_r.R"
    ;;
  octave)
    if ! command -v mkoctfile >/dev/null; then
      echo "octave is not installed: run cmake/install-deps.sh --reference" >&2
      exit 1
    fi
    cd "$build_dir/hosts-octave"
    mkoctfile --mex -o critplex_mex "$src/plugins/matlab/critplex_mex.c" \
      $(pkg-config --cflags --libs critplex) -Wl,-rpath,"$libdir" >/dev/null
    octave --no-gui --no-window-system --quiet --eval \
      "addpath('$build_dir/hosts-octave'); addpath('$src/plugins/matlab'); run('$here/test_matlab.m')"
    ;;
  nipype|snakemake)
    # The workflow engines call the installed command, as a site's pipeline would.
    export PATH="$prefix/bin:$PATH"
    /usr/bin/python3 "$here/test_$host.py" "$build_dir/hosts-$host/work"
    ;;
  *) echo "unknown host '$host'" >&2; exit 2 ;;
esac
