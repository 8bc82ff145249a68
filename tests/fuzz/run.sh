#!/usr/bin/env bash
# Builds the libFuzzer harnesses of tests/fuzz with clang (-fsanitize=fuzzer,address,
# undefined) from the few core sources they need, and runs each from its seed corpus.
#   bash tests/fuzz/run.sh [SECONDS_PER_HARNESS]     (default 20; tests/run.sh uses 10)
# Longer runs for developers: bash tests/fuzz/run.sh 600 (corpora grow in build-fuzz/).
# A crash, sanitizer report, leak, internal error or allocation past 256 MB fails the run;
# the input that caused it is left in build-fuzz/ (crash-*, leak-*, oom-*).
set -euo pipefail
cd "$(dirname "$0")/../.."
seconds="${1:-20}"
out=build-fuzz
mkdir -p "$out/obj"
flags=(-std=c++20 -O1 -g -fno-omit-frame-pointer -fsanitize=address,undefined -fno-sanitize-recover=all
       -Icore -Itests/fuzz -I/usr/include/eigen3 -DCRITPLEX_VERSION_STRING=\"fuzz\")
# The readers and what they call (the rest of the engine is not needed).
sources=(core/base/options.cpp core/base/option_schema.cpp core/io/files.cpp core/io/xml.cpp core/io/image_file.cpp
         core/io/cifti.cpp core/io/nifti.cpp core/io/confounds.cpp core/io/matrix_options.cpp core/series/series.cpp
         core/series/clean.cpp)
objects=()
pids=()
jobs="$(nproc 2>/dev/null || echo 2)"
for s in "${sources[@]}"; do
  o="$out/obj/$(echo "$s" | tr / _).o"
  if [ ! -f "$o" ] || [ "$s" -nt "$o" ] || [ -n "$(find core/base core/io core/series -name '*.hpp' -newer "$o" -print -quit)" ]; then
    # One compile per core at a time; a failed compile fails the run at the wait below.
    if [ "${#pids[@]}" -ge "$jobs" ]; then wait "${pids[0]}"; pids=("${pids[@]:1}"); fi
    clang++ "${flags[@]}" -fsanitize=fuzzer-no-link -c "$s" -o "$o" &
    pids+=($!)
  fi
  objects+=("$o")
done
for p in "${pids[@]}"; do wait "$p"; done
declare -A corpus=([fuzz_tables]=tables [fuzz_confounds]=confounds [fuzz_options]=options [fuzz_nifti]=nifti
                   [fuzz_cifti]=cifti [fuzz_xml]=xml)
total=0
for harness in fuzz_tables fuzz_confounds fuzz_options fuzz_nifti fuzz_cifti fuzz_xml; do
  clang++ "${flags[@]}" -fsanitize=fuzzer "tests/fuzz/$harness.cpp" "${objects[@]}" -lz -lpthread -o "$out/$harness"
  work="$out/corpus-$harness"
  mkdir -p "$work"
  echo "== $harness: ${seconds} s =="
  # Seeds are read from the repository; new inputs go to the work corpus only.
  (cd "$out" && ASAN_OPTIONS=detect_leaks=1 UBSAN_OPTIONS=print_stacktrace=1:halt_on_error=1 \
     "./$harness" -max_total_time="$seconds" -malloc_limit_mb=256 -rss_limit_mb=1024 -timeout=20 \
     -print_final_stats=1 "corpus-$harness" "../tests/fuzz/corpus/${corpus[$harness]}" 2>&1 |
     grep -E "^(#[0-9]+ +DONE|stat::number_of_executed_units|stat::peak_rss_mb|INFO: Loaded|==[0-9]+==ERROR|SUMMARY)|cov:" | tail -4)
  total=$((total + seconds))
done
echo "fuzzing: 6 harnesses, ${total} s in all"
