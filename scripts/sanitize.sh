#!/usr/bin/env bash
# The whole test suite under AddressSanitizer + UndefinedBehaviorSanitizer (leak checking on).
# Builds with g++ in build-asan (STETHOGEN_SANITIZE=ON) and runs ctest there; every test that
# spawns the binary gets the sanitized one of that build (STETHOGEN_BINARY is set per build).
# Any report aborts the process that made it (-fno-sanitize-recover=all, halt_on_error), so the
# test fails and this script exits non-zero. Usage: scripts/sanitize.sh [ctest args...]
set -euo pipefail
cd "$(dirname "$0")/.."

build_dir="${STETHOGEN_ASAN_BUILD_DIR:-build-asan}"
jobs="${STETHOGEN_JOBS:-2}"

# -O1: compiles much faster than Release's -O3 under ASan and keeps the checks; no -DNDEBUG, so
# the code's assertions are checked too; -g1: line tables for readable reports at little cost.
cmake -S . -B "$build_dir" -DCMAKE_BUILD_TYPE=Release -DSTETHOGEN_SANITIZE=ON -DSTETHOGEN_BUILD_TESTS=ON \
  -DCMAKE_CXX_FLAGS_RELEASE="-O1 -g1" >/dev/null
start_s=$(date +%s)
cmake --build "$build_dir" -j "$jobs"
built_s=$(date +%s)

# detect_leaks: LSan on (the default on x86_64 Linux, stated so it cannot be lost);
# abort_on_error + halt_on_error: a report is a failing exit, never a warning in a log.
export ASAN_OPTIONS="detect_leaks=1:halt_on_error=1:abort_on_error=1:detect_stack_use_after_return=0:strict_string_checks=1:check_initialization_order=1"
export UBSAN_OPTIONS="print_stacktrace=1:halt_on_error=1"
# Python-driven reference checks load CPython, which is not built with ASan: the sanitized
# binary is what they call, never the other way round, so no LD_PRELOAD is needed.

status=0
(cd "$build_dir" && ctest --output-on-failure -j "$jobs" --timeout 600 "$@") || status=$?
end_s=$(date +%s)
echo "sanitize: build $((built_s - start_s)) s, ctest $((end_s - built_s)) s, exit $status"
exit $status
