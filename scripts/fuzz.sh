#!/usr/bin/env bash
# Builds the libFuzzer targets (fuzz/) with clang in build-fuzz and runs each for a bounded
# time from its checked-in seed corpus (fuzz/corpus/<target>/). Fails on a crash, an uncaught
# exception, a hang (-timeout), a leak (LSan) or an out-of-memory (-rss_limit_mb).
# Usage: scripts/fuzz.sh [target...]   (default: recipe detections bundle)
# Env: STETHOGEN_FUZZ_SECONDS (per target, default 60), STETHOGEN_FUZZ_BUILD_DIR (build-fuzz).
set -euo pipefail
cd "$(dirname "$0")/.."

build_dir="${STETHOGEN_FUZZ_BUILD_DIR:-build-fuzz}"
seconds="${STETHOGEN_FUZZ_SECONDS:-60}"
jobs="${STETHOGEN_JOBS:-2}"
targets=("$@")
[ ${#targets[@]} -gt 0 ] || targets=(recipe detections bundle)

cmake -S . -B "$build_dir" -DCMAKE_BUILD_TYPE=Release -DCMAKE_CXX_COMPILER=clang++ -DSTETHOGEN_FUZZ=ON \
  -DSTETHOGEN_BUILD_TESTS=OFF -DCMAKE_CXX_FLAGS="-g1" >/dev/null
cmake --build "$build_dir" -j "$jobs" --target "${targets[@]/#/fuzz_}"

export ASAN_OPTIONS="detect_leaks=1:abort_on_error=1:halt_on_error=1"
export UBSAN_OPTIONS="print_stacktrace=1:halt_on_error=1"
status=0
for t in "${targets[@]}"; do
  exe="$build_dir/fuzz/fuzz_$t"
  seeds="fuzz/corpus/$t"
  work="$build_dir/fuzz-work/$t"          # inputs found this run; never written into the tree
  artifacts="$build_dir/fuzz-artifacts/"
  mkdir -p "$work" "$artifacts"
  log="$build_dir/fuzz-$t.log"
  max_len=8192                            # text inputs: recipes and detection files
  [ "$t" != bundle ] || max_len=262144    # HDF5 files: a small valid bundle is tens of kB
  # First every checked-in input once (seeds and past reproducers: a regression run),
  # then the bounded fuzzing run.
  if ! "$exe" -runs=0 -timeout=10 -rss_limit_mb=2048 "$seeds" >"$log.replay" 2>&1; then
    echo "fuzz: $t: a checked-in corpus input fails; see $log.replay"; tail -40 "$log.replay"; status=1; continue
  fi
  if "$exe" -max_total_time="$seconds" -timeout=10 -rss_limit_mb=2048 -max_len=$max_len -print_final_stats=1 \
       -artifact_prefix="$artifacts$t-" "$work" "$seeds" >"$log" 2>&1; then
    execs=$(grep -m1 'stat::number_of_executed_units' "$log" | awk '{print $2}')
    echo "fuzz: $t: ok, ${execs:-?} executions in ${seconds} s, corpus $(ls "$seeds" | wc -l) seeds -> $(ls "$work" | wc -l) inputs"
  else
    echo "fuzz: $t: FAILED (crash, hang, leak or OOM); reproducer in $artifacts, log $log"
    tail -60 "$log"
    status=1
  fi
done
exit $status
