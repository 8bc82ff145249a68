#!/usr/bin/env bash
# Installs the built project into a scratch prefix, then builds and runs two consumer
# programs against it: one with CMake's find_package, one with pkg-config.
set -euo pipefail
build_dir="$1"
prefix="$2"
here="$(cd "$(dirname "$0")" && pwd)"
rm -rf "$prefix" "$build_dir/consumer-cmake" "$build_dir/consumer-pkgconfig"
cmake --install "$build_dir" --prefix "$prefix" >/dev/null

# find_package(critplex CONFIG)
cmake -S "$here/cmake" -B "$build_dir/consumer-cmake" -DCMAKE_PREFIX_PATH="$prefix" >/dev/null
cmake --build "$build_dir/consumer-cmake" >/dev/null
"$build_dir/consumer-cmake/consumer" | tee /dev/stderr | grep -q "consumer ok"

# pkg-config
mkdir -p "$build_dir/consumer-pkgconfig"
libdir="$(dirname "$(find "$prefix" -name critplex.pc | head -1)")"
export PKG_CONFIG_PATH="$libdir"
cc -std=c99 -Wall -Wextra -o "$build_dir/consumer-pkgconfig/consumer" "$here/consumer.c" \
   $(pkg-config --cflags --libs critplex) -Wl,-rpath,"$(pkg-config --variable=libdir critplex)"
"$build_dir/consumer-pkgconfig/consumer" | tee /dev/stderr | grep -q "consumer ok"
echo "package consumers: find_package and pkg-config builds passed"

# Python ctypes through the installed library (the route MATLAB, R and Julia take).
installed_lib="$(find "$prefix" -name 'libcritplex.so.[0-9]' | head -1)"
CRITPLEX_LIBRARY="$installed_lib" PYTHONPATH="$here/../../plugins/python" /usr/bin/python3 "$here/ctypes_check.py"
