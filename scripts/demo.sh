#!/usr/bin/env bash
# The main job on the bundled demo recipe: check the plan, generate the bundle, summarise it,
# export audio and CSV truth, run the baseline detector and score it. Outputs go to out/demo/.
set -euo pipefail
cd "$(dirname "$0")/.."
bin=build/stethogen
out=out/demo
mkdir -p "$out"

"$bin" check recipes/demo.toml
"$bin" generate recipes/demo.toml -o "$out/demo.h5" --force
"$bin" inspect "$out/demo.h5"
"$bin" export "$out/demo.h5" --format wav --out "$out/wav" --force
"$bin" export "$out/demo.h5" --format csv --out "$out/csv" --force
"$bin" detect "$out/demo.h5" -o "$out/baseline_detections.csv" --force
"$bin" score "$out/demo.h5" "$out/baseline_detections.csv"
echo "demo: bundle, audio, truth and the baseline score are in $out/"
