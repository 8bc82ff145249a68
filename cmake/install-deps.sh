#!/usr/bin/env bash
# Installs, from Debian's packages, only what critplex needs and the machine lacks.
#   cmake/install-deps.sh            build dependencies (compiler libraries, test framework)
#   cmake/install-deps.sh --reference  also the outside references the test suite checks against
# Idempotent: a package already installed is left alone; apt runs only if something is missing.
set -euo pipefail

build_pkgs=(build-essential cmake pkg-config libeigen3-dev libfftw3-dev nlohmann-json3-dev catch2 zlib1g-dev)
reference_pkgs=(python3 python3-numpy python3-scipy python3-sklearn python3-statsmodels python3-mpmath
                python3-networkx python3-igraph python3-gudhi ripser time python3-nitime python3-nibabel
                r-base-core r-cran-corpcor clang libclang-rt-14-dev octave liboctave-dev time
                python3-nipype snakemake slurm-wlm munge
                python3-pip python3-setuptools python3-venv python3-pandas
                r-base-dev r-cran-testthat r-cran-jsonlite r-cran-knitr r-cran-markdown
                chromium)

want=("${build_pkgs[@]}")
for arg in "$@"; do
  case "$arg" in
    --reference) want+=("${reference_pkgs[@]}") ;;
    -h|--help) sed -n '2,5p' "$0"; exit 0 ;;
    *) echo "install-deps.sh: unknown argument '$arg' (expected --reference)" >&2; exit 2 ;;
  esac
done

missing=()
for p in "${want[@]}"; do
  if ! dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed"; then
    missing+=("$p")
  fi
done

if [ ${#missing[@]} -eq 0 ]; then
  echo "install-deps.sh: everything already installed"
  exit 0
fi

echo "install-deps.sh: installing ${missing[*]}"
SUDO=""
if [ "$(id -u)" -ne 0 ]; then SUDO="sudo"; fi
export DEBIAN_FRONTEND=noninteractive
$SUDO apt-get update -qq
$SUDO apt-get install -y -qq --no-install-recommends "${missing[@]}"
