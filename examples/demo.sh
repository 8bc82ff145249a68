#!/usr/bin/env bash
# The demo study, from a fresh machine to the report:
#   a fictional sleep laboratory compares 20 rested and 20 sleep-deprived volunteers
#   (invented data: 90 regions, repetition time 0.8 s, 600 frames), the deprived group's
#   networks being more globally coupled. Installs what is missing, builds critplex,
#   simulates the cohort, runs every subject, compares the groups and writes the report.
#   bash examples/demo.sh [OUTPUT_FOLDER]     (default: examples/demo-output)
set -euo pipefail
cd "$(dirname "$0")/.."
out="${1:-examples/demo-output}"
jobs="$(nproc 2>/dev/null || echo 2)"

bash cmake/install-deps.sh
if [ ! -x build/plugins/cli/critplex ] || [ ! -f build/CMakeCache.txt ]; then
  cmake -S . -B build -DCMAKE_BUILD_TYPE=Release >/dev/null
fi
cmake --build build -j"$jobs" --target critplex_cli >/dev/null
critplex="build/plugins/cli/critplex"

start=$(date +%s)
# The deprived group's global signal is 0.8 stronger (docs/demo-study.md).
"$critplex" simulate --out "$out/study" --subjects 20 --effect 0.8 --seed 2026
"$critplex" cohort "$out/study/manifest.tsv" --config "$out/study/cohort_config.json" --out "$out/results"
"$critplex" compare "$out/results" --covariates age
"$critplex" report "$out/results"
end=$(date +%s)
echo
echo "Demo finished in $((end - start)) s (simulation to report)."
echo "Open the report in a browser: $(cd "$out/results" && pwd)/report.html"
echo "Research software, not a medical device: the data are invented and support no clinical decision."
