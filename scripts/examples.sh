#!/usr/bin/env bash
# Regenerates out_examples/ (see out_examples/README.md): the demo bundle's summary, a few
# exported WAVs with their CSV truth, the baseline detector's score table and the validation
# report with its figures. The demo bundle itself stays in out/examples-work/ (not committed).
# Usage: scripts/examples.sh   (binary: $STETHOGEN_BIN, default build/stethogen)
set -euo pipefail
cd "$(dirname "$0")/.."
bin="${STETHOGEN_BIN:-build/stethogen}"
[ -x "$bin" ] || { echo "examples: no binary at $bin (run 'make build' first, or set STETHOGEN_BIN)" >&2; exit 2; }
work=out/examples-work
dest=out_examples
# A resting, a transport, an exercise, an LV-failure and an RV-failure record of the demo.
records=r000000,r000006,r000016,r000022,r000027

rm -rf "$work" "$dest.partial"
mkdir -p "$work" "$dest.partial/wav" "$dest.partial/truth" "$dest.partial/validation"
"$bin" generate recipes/demo.toml -o "$work/demo.h5" --quiet
"$bin" inspect "$work/demo.h5" > "$dest.partial/inspect.txt"
"$bin" inspect "$work/demo.h5" --json > "$dest.partial/inspect.json"

"$bin" export "$work/demo.h5" --format wav --bits 16 --records "$records" --out "$work/wav"
for id in ${records//,/ }; do
  cp "$work/wav/${id}_mitral.wav" "$work/wav/${id}_pulmonic.wav" "$dest.partial/wav/"
done
"$bin" export "$work/demo.h5" --format csv --records "$records" --out "$dest.partial/truth"

"$bin" detect "$work/demo.h5" -o "$work/baseline_detections.csv"
cp "$work/baseline_detections.csv" "$dest.partial/baseline_detections.csv"
"$bin" score "$work/demo.h5" "$work/baseline_detections.csv" > "$dest.partial/baseline_score.txt"

# validate exits 1 when a check fails; the report is still written and kept.
set +e
"$bin" validate --report "$dest.partial/validation" > "$dest.partial/validation/validate_output.txt" 2>&1
validate_rc=$?
set -e
rm -f "$dest.partial/validation/figure_data.json"  # regenerated with the report; not needed to read it

cp "$dest/README.md" "$dest.partial/README.md" 2>/dev/null || true
rm -rf "$dest"
mv "$dest.partial" "$dest"
echo "examples: $dest/ regenerated ($(du -sh "$dest" | cut -f1)); validate exit code $validate_rc"
