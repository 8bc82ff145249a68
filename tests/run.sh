#!/usr/bin/env bash
# The whole test suite from a fresh machine: installs what is missing (Debian packages),
# builds, runs every test, then rebuilds the unit and C-interface tests under
# AddressSanitizer + UndefinedBehaviorSanitizer and runs them again, then the C-interface
# tests under ThreadSanitizer, then a short libFuzzer run of each harness (tests/fuzz).
#   bash tests/run.sh
set -euo pipefail
cd "$(dirname "$0")/.."
jobs="$(nproc 2>/dev/null || echo 2)"

bash cmake/install-deps.sh --reference

echo "== build (Release) =="
cmake -S . -B build -DCMAKE_BUILD_TYPE=Release -DCRITPLEX_BUILD_BENCH=OFF
cmake --build build -j"$jobs"
echo "== tests =="
ctest --test-dir build --output-on-failure -j"$jobs"

echo "== unit and C-interface tests under AddressSanitizer + UndefinedBehaviorSanitizer =="
# -O1 without debug information: the sanitizers work the same and the build takes a
# fraction of the time (debug information of Eigen's templates is the slow part).
cmake -S . -B build-sanitize -DCMAKE_BUILD_TYPE=Debug -DCMAKE_CXX_FLAGS_DEBUG=-O1 -DCMAKE_C_FLAGS_DEBUG=-O1 \
      -DCRITPLEX_SANITIZE=ON -DCRITPLEX_BUILD_BENCH=OFF -DCRITPLEX_BUILD_CLI=OFF
cmake --build build-sanitize -j"$jobs"
ASAN_OPTIONS=detect_leaks=1:abort_on_error=1 UBSAN_OPTIONS=print_stacktrace=1:halt_on_error=1 \
  ctest --test-dir build-sanitize --output-on-failure -j"$jobs" -L "unit|capi"

echo "== C-interface tests under ThreadSanitizer =="
# The library and the C programs only (label capi): races between threads calling the C
# interface at once (tests/capi/test_threads.c, test_concurrent_statistics.c, ...).
cmake -S . -B build-tsan -DCMAKE_BUILD_TYPE=Debug -DCMAKE_CXX_FLAGS_DEBUG=-O1 -DCMAKE_C_FLAGS_DEBUG=-O1 \
      -DCRITPLEX_TSAN=ON -DCRITPLEX_BUILD_BENCH=OFF -DCRITPLEX_BUILD_CLI=OFF
capi_targets="$(for f in tests/capi/*.c; do printf 'capi_%s ' "$(basename "$f" .c)"; done)"
# shellcheck disable=SC2086
cmake --build build-tsan -j"$jobs" --target $capi_targets
TSAN_OPTIONS=halt_on_error=1:second_deadlock_stack=1 ctest --test-dir build-tsan --output-on-failure -j"$jobs" -L capi

echo "== fuzzing: each harness of tests/fuzz for 10 s (6 harnesses, 1 minute plus the build) =="
bash tests/fuzz/run.sh 10
