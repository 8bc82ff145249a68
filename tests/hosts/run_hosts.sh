#!/usr/bin/env bash
# Installs the build into a scratch prefix and checks each host package from there, as a
# user would install it, from a working folder outside the source tree:
#   run_hosts.sh BUILD_DIR install|python|r|octave|julia|parity|nipype|snakemake
# install makes BUILD_DIR/hosts/prefix, which python, r, octave, julia and parity use
# (ctest runs install first: fixture hosts_prefix); parity also needs what python, r and
# octave leave in BUILD_DIR/hosts (the virtual environment, the R library, the MEX file).
set -euo pipefail
build_dir="$(cd "$1" && pwd)"
host="$2"
here="$(cd "$(dirname "$0")" && pwd)"
src="$(cd "$here/../.." && pwd)"
hosts="$build_dir/hosts"
prefix="$hosts/prefix"
export NITIME_CSV="/usr/lib/python3/dist-packages/nitime/data/fmri_timeseries.csv"
octave_run=(octave --no-gui --no-window-system --quiet --eval)

use_prefix() {
  if [ ! -d "$prefix" ]; then
    echo "no install in $prefix: run 'run_hosts.sh $build_dir install' first (ctest does)" >&2
    exit 1
  fi
  PKG_CONFIG_PATH="$(dirname "$(find "$prefix" -name critplex.pc | head -1)")"
  export PKG_CONFIG_PATH
  unset CRITPLEX_LIBRARY PYTHONPATH LD_LIBRARY_PATH
}

fresh() {
  rm -rf "$1"
  mkdir -p "$1"
  cd "$1"
}

case "$host" in
  install)
    rm -rf "$hosts"
    mkdir -p "$hosts"
    cmake --install "$build_dir" --prefix "$prefix" >/dev/null
    echo "installed into $prefix"
    ;;
  python)
    use_prefix
    work="$hosts/python"
    fresh "$work"
    start=$SECONDS
    # Debian's pip, seen through the system site packages, installs into the environment
    # (--without-pip saves copying pip into it: 8 s of the test).
    /usr/bin/python3 -m venv --system-site-packages --without-pip "$work/venv"
    # The package is installed as a user would: from the prefix, with Debian's setuptools.
    # No PKG_CONFIG_PATH: the package must find the library through what cmake recorded.
    env -u PKG_CONFIG_PATH "$work/venv/bin/python" -m pip install --no-build-isolation --no-index --quiet \
      "$prefix/share/critplex/python"
    echo "venv + pip install: $((SECONDS - start)) s"
    mkdir -p "$work/run"
    cd "$work/run"
    env -u PKG_CONFIG_PATH "$work/venv/bin/python" "$here/test_python.py" "$prefix" "$work/run"
    ;;
  r)
    use_prefix
    work="$hosts/r"
    fresh "$work"
    mkdir -p library
    start=$SECONDS
    R CMD build "$prefix/share/critplex/r/critplex" >build.log 2>&1 || { cat build.log; exit 1; }
    built=$SECONDS
    tarball="$(ls critplex_*.tar.gz)"
    if ! R CMD check --no-manual "$tarball" >check.log 2>&1; then
      cat check.log
      cat critplex.Rcheck/tests/testthat.Rout.fail 2>/dev/null || true
      exit 1
    fi
    checked=$SECONDS
    echo "R CMD build: $((built - start)) s, R CMD check --no-manual: $((checked - built)) s"
    grep -E "^Status:" check.log
    # No ERROR and no WARNING; NOTEs are shown (and listed in the handoff).
    if grep -qE "^Status:.*(ERROR|WARNING)" check.log; then
      cat check.log
      exit 1
    fi
    grep -B1 -A4 "\.\.\. NOTE" check.log || true
    # Installed for the parity test.
    R CMD INSTALL --library="$work/library" "$tarball" >install.log 2>&1 || { cat install.log; exit 1; }
    ;;
  octave)
    use_prefix
    work="$hosts/octave"
    fresh "$work"
    # The build helper asks pkg-config for the prefix given; no flags are typed here.
    env -u PKG_CONFIG_PATH "${octave_run[@]}" \
      "addpath('$prefix/share/critplex/matlab'); critplex_build_mex('$work', '$prefix');"
    "${octave_run[@]}" "addpath('$prefix/share/critplex/matlab'); addpath('$work'); run('$here/test_matlab.m')"
    ;;
  julia)
    use_prefix
    /usr/bin/python3 "$here/check_julia.py" --self-test "$prefix/include/critplex/critplex.h" \
      "$prefix/share/critplex/julia"
    ;;
  parity)
    use_prefix
    /usr/bin/python3 "$here/test_parity.py" "$prefix" "$hosts"
    ;;
  nipype|snakemake)
    # The workflow engines call the installed command, as a site's pipeline would.
    rm -rf "$build_dir/hosts-$host"
    mkdir -p "$build_dir/hosts-$host"
    cmake --install "$build_dir" --prefix "$build_dir/hosts-$host/prefix" >/dev/null
    export PATH="$build_dir/hosts-$host/prefix/bin:$PATH"
    /usr/bin/python3 "$here/test_$host.py" "$build_dir/hosts-$host/work"
    ;;
  *) echo "unknown host '$host'" >&2; exit 2 ;;
esac
