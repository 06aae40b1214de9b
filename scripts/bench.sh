#!/usr/bin/env bash
# The benchmark of docs/performance.md: builds stethogen and stethogen_bench (Release) in
# $BUILD (default build-bench) and runs it. Extra arguments go to stethogen_bench, e.g.
#   scripts/bench.sh --records 3 --memory-counts 100 --skip-reference
set -euo pipefail
root="$(cd "$(dirname "$0")/.." && pwd)"
build="${BUILD:-$root/build-bench}"
cmake -S "$root" -B "$build" -DCMAKE_BUILD_TYPE=Release >/dev/null
cmake --build "$build" --target stethogen stethogen_bench -j "${JOBS:-2}"
exec "$build/stethogen_bench" --source "$root" --binary "$build/stethogen" --python /usr/bin/python3 "$@"
