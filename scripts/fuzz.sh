#!/usr/bin/env bash
# Builds the libFuzzer targets (fuzz/) with clang in build-fuzz and runs each for a bounded
# time from its checked-in seed corpus (fuzz/corpus/<target>/). Fails on a crash, an uncaught
# exception, a hang (-timeout), a leak (LSan) or an out-of-memory (-rss_limit_mb) in our code.
# Findings whose stack starts inside libhdf5 (the uninstrumented system library, which is not
# robust to malformed files) are listed as external and do not fail the run (docs/reliability.md).
# Usage: scripts/fuzz.sh [target...]   (default: recipe detections bundle)
# Env: STETHOGEN_FUZZ_SECONDS (per target, default 60), STETHOGEN_FUZZ_BUILD_DIR (build-fuzz).
set -euo pipefail
cd "$(dirname "$0")/.."

build_dir="${STETHOGEN_FUZZ_BUILD_DIR:-build-fuzz}"
seconds="${STETHOGEN_FUZZ_SECONDS:-60}"
jobs="${STETHOGEN_JOBS:-2}"
targets=("$@")
[ ${#targets[@]} -gt 0 ] || targets=(recipe detections bundle)
limits=(-timeout=10 -rss_limit_mb=2048)

cmake -S . -B "$build_dir" -DCMAKE_BUILD_TYPE=Release -DCMAKE_CXX_COMPILER=clang++ -DSTETHOGEN_FUZZ=ON \
  -DSTETHOGEN_BUILD_TESTS=OFF -DCMAKE_CXX_FLAGS="-g1" >/dev/null
cmake --build "$build_dir" -j "$jobs" --target "${targets[@]/#/fuzz_}"

export ASAN_OPTIONS="detect_leaks=1:abort_on_error=1:halt_on_error=1"
export UBSAN_OPTIONS="print_stacktrace=1:halt_on_error=1"

# Where a finding happened: the first stack frame of its report that is not the fuzzer's,
# a sanitizer's, libc's or an allocator's. Prints "external" (libhdf5) or "ours: <frame>".
# A frame inside the fuzz executable without a source location is the sanitizer runtime (our
# code is built with -g1, so its frames carry file:line); clang names some interceptors plainly
# (`memmove`), so they are recognised by that rather than by name.
classify() {
  local exe=$1 input=$2 report
  report=$("$exe" "${limits[@]}" "$input" 2>&1 || true)
  if ! grep -q -E 'ERROR: (AddressSanitizer|LeakSanitizer|libFuzzer)|runtime error:|SUMMARY:' <<<"$report"; then
    echo "ours: does not reproduce (flaky or load-dependent)"; return
  fi
  local frame
  frame=$(grep -E '^ +#[0-9]+ ' <<<"$report" |
          grep -v -E 'fuzzer::|__sanitizer|__interceptor|__asan|__lsan|__ubsan|libc\.so|libstdc\+\+\.so|nptl/|in (raise|abort|malloc|calloc|realloc|free|operator new|operator delete) |AlarmCallback|PrintStackTrace' |
          grep -v -E '/fuzz_[a-z]+\+0x[0-9a-f]+\) ' |
          head -1 || true)
  if grep -q 'libhdf5' <<<"$frame"; then echo "external"; else echo "ours: ${frame:-no stack}"; fi
}

status=0
for t in "${targets[@]}"; do
  exe="$build_dir/fuzz/fuzz_$t"
  seeds="fuzz/corpus/$t"
  work="$build_dir/fuzz-work/$t"          # inputs found this run; never written into the tree
  artifacts="$build_dir/fuzz-artifacts/$t/"
  rm -rf "$artifacts"
  mkdir -p "$work" "$artifacts"
  log="$build_dir/fuzz-$t.log"
  max_len=8192                            # text inputs: recipes and detection files
  [ "$t" != bundle ] || max_len=262144    # HDF5 files: a small valid bundle is tens of kB
  # Every checked-in input once (seeds and past reproducers): a regression run.
  if ! "$exe" -runs=0 "${limits[@]}" "$seeds" >"$log.replay" 2>&1; then
    echo "fuzz: $t: a checked-in corpus input fails; see $log.replay"; tail -40 "$log.replay"; status=1; continue
  fi
  # Fork mode keeps fuzzing past a finding, so one libhdf5 defect does not end the run; every
  # finding is replayed and classified below.
  "$exe" -fork=1 -ignore_crashes=1 -ignore_timeouts=1 -ignore_ooms=1 -max_total_time="$seconds" "${limits[@]}" \
    -max_len="$max_len" -artifact_prefix="$artifacts" "$work" "$seeds" >"$log" 2>&1 || true
  execs=$(grep -E '^#[0-9]+: cov:' "$log" | tail -1 | sed -E 's/^#([0-9]+):.*/\1/')
  if [ -z "$execs" ]; then
    echo "fuzz: $t: the fuzzer did not run; see $log"; tail -30 "$log"; status=1; continue
  fi
  external=0 ours=0
  for a in "$artifacts"*; do
    [ -e "$a" ] || continue
    verdict=$(classify "$exe" "$a")
    if [ "$verdict" = external ]; then
      external=$((external + 1))
    elif [[ "$verdict" == *"does not reproduce"* ]]; then
      # A fork-mode child killed under load (seen: the empty input) replays clean: reported, not failed.
      echo "fuzz: $t: unconfirmed $(basename "$a") ($verdict); replay: $exe $a"
    else
      ours=$((ours + 1))
      echo "fuzz: $t: FINDING $(basename "$a") ($verdict); reproduce: $exe $a"
    fi
  done
  # Known libhdf5 defects (fuzz/hdf5-defects/): they may crash or hang only inside libhdf5.
  known=0
  if [ "$t" = bundle ]; then
    for a in fuzz/hdf5-defects/*; do
      known=$((known + 1))
      verdict=$(classify "$exe" "$a")
      [ "$verdict" = external ] || [[ "$verdict" == *"does not reproduce"* ]] ||
        { ours=$((ours + 1)); echo "fuzz: $t: FINDING $a ($verdict)"; }
    done
  fi
  echo "fuzz: $t: $execs executions in ${seconds} s; corpus $(ls "$seeds" | wc -l) seeds -> $(ls "$work" | wc -l) inputs;" \
       "findings: $ours in our code, $external inside libhdf5 (external); $known known libhdf5 reproducers replayed"
  [ "$ours" -eq 0 ] || status=1
done
exit $status
