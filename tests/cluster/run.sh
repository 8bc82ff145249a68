#!/usr/bin/env bash
# The cluster test (ctest label "cluster"): installs the build into a scratch prefix, starts
# a one-node SLURM (slurm.sh), runs test_slurm_workflow.py against it and stops SLURM again,
# also when the test fails or is interrupted.
#   run.sh BUILD_DIR
# Exit status 77: skipped, because this machine cannot run the SLURM daemons (the reason is
# printed); ctest reports the test as skipped.
set -euo pipefail
build_dir="$(cd "$1" && pwd)"
here="$(cd "$(dirname "$0")" && pwd)"
work="$build_dir/cluster-test"
rm -rf "$work"
mkdir -p "$work"
cmake --install "$build_dir" --prefix "$work/prefix" >/dev/null
export PATH="$work/prefix/bin:$PATH"

# Sockets live under the state folder, and a UNIX socket path has at most 107 bytes: keep it short.
state="$(mktemp -d /tmp/critplex-slurm-XXXXXX)"
cleanup() {
  bash "$here/slurm.sh" stop "$state" >/dev/null || true
  rm -rf "$state"
}
trap cleanup EXIT
trap 'exit 130' INT TERM

status=0
bash "$here/slurm.sh" start "$state" || status=$?
[ "$status" -eq 0 ] || exit "$status"
. "$state/env"
# Snakemake's SLURM executor reads USER, which a CI container may not set.
export USER="${USER:-$(id -un)}"
/usr/bin/python3 "$here/test_slurm_workflow.py" "$work"
